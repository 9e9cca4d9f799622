import fc from 'fast-check';
import Fili from 'fili';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { butterworthSos } from '@server/dsp/butterworth';
import { bandEnergy, sosfilt, sosfiltZeroPhase, sosfreqz } from '@server/dsp/sosfilt';
import { makeSignal, maxAbsDiff, readFixture, signalSpecSchema } from './fixture-signal';

const fixture = readFixture(
  'sosfilt.json',
  z.object({
    cases: z.array(
      z.object({
        signal: signalSpecSchema,
        first: z.array(z.number()),
        order: z.number(),
        edges: z.array(z.number()),
        btype: z.enum(['bandpass', 'bandstop']),
        stride: z.number(),
        y: z.array(z.number()),
        maxAbs: z.number(),
      }),
    ),
  }),
);

describe('sosfilt against scipy.signal.sosfilt (fixtures/dsp/sosfilt.json)', () => {
  for (const c of fixture.cases) {
    it(`${c.btype} ${c.edges.join('–')} Hz, order ${c.order}, fs ${c.signal.fs}, ${c.signal.n} samples: to 1e-6 of max|y|`, () => {
      const x = makeSignal(c.signal);
      // Both sides built the same input (the generator is mirrored from the fixture script).
      expect(maxAbsDiff(x.slice(0, c.first.length), c.first)).toBeLessThan(1e-12);
      const y = sosfilt(butterworthSos(c.order, c.edges, c.btype, c.signal.fs), x);
      const picked = c.y.map((_, k) => y[k * c.stride] as number);
      // Source: scipy.signal.sosfilt (causal, zero initial state), scipy 1.10.
      expect(maxAbsDiff(picked, c.y) / c.maxAbs).toBeLessThanOrEqual(1e-6);
    });
  }

  it('equals fili IirFilter running the same sections (an independent implementation, to 1e-12 of max|y|)', () => {
    const c = fixture.cases[0];
    if (!c) throw new Error('no case');
    const x = makeSignal(c.signal);
    const sos = butterworthSos(c.order, c.edges, c.btype, c.signal.fs);
    const cf = sos.coefficients;
    const sections = Array.from({ length: sos.sections }, (_, s) => ({
      k: 1,
      a: [cf[s * 6 + 4] as number, cf[s * 6 + 5] as number] as [number, number],
      b: [cf[s * 6] as number, cf[s * 6 + 1] as number, cf[s * 6 + 2] as number] as [number, number, number],
    }));
    const ours = sosfilt(sos, x);
    const theirs = new Fili.IirFilter(sections).multiStep(x);
    expect(maxAbsDiff(ours, theirs) / c.maxAbs).toBeLessThan(1e-12);
  });

  it('equals fili IirFilter for 1 to 8 sections (the four-, two- and one-section passes), to 1e-12 of max|y|', () => {
    const c = fixture.cases[0];
    if (!c) throw new Error('no case');
    const x = makeSignal(c.signal);
    for (let order = 1; order <= 8; order++) {
      // Band-pass order N has N sections (scipy butter, 2N poles).
      const sos = butterworthSos(order, [2, 10], 'bandpass', c.signal.fs);
      expect(sos.sections).toBe(order);
      const cf = sos.coefficients;
      const sections = Array.from({ length: sos.sections }, (_, s) => ({
        k: 1,
        a: [cf[s * 6 + 4] as number, cf[s * 6 + 5] as number] as [number, number],
        b: [cf[s * 6] as number, cf[s * 6 + 1] as number, cf[s * 6 + 2] as number] as [number, number, number],
      }));
      const ours = sosfilt(sos, x);
      const theirs = Float64Array.from(new Fili.IirFilter(sections).multiStep(x));
      let peak = 0;
      for (const v of theirs) peak = Math.max(peak, Math.abs(v));
      expect(peak).toBeGreaterThan(0);
      expect(maxAbsDiff(ours, theirs) / peak).toBeLessThan(1e-12);
    }
  });

  it('does not mutate its input', () => {
    const x = Float64Array.from([1, 2, 3, 4, 5]);
    sosfilt(butterworthSos(2, [5], 'lowpass', 100), x);
    expect(Array.from(x)).toEqual([1, 2, 3, 4, 5]);
  });
});

describe('sosfilt properties (fast-check)', () => {
  const sos = butterworthSos(4, [2, 10], 'bandpass', 100);
  const finite = fc.double({ min: -1e3, max: 1e3, noNaN: true, noDefaultInfinity: true });
  it('is linear: sosfilt(a·x + b·y) = a·sosfilt(x) + b·sosfilt(y) (LTI system, zero initial state)', () => {
    fc.assert(
      fc.property(fc.array(finite, { minLength: 1, maxLength: 300 }), fc.array(finite, { minLength: 1, maxLength: 300 }), finite, finite, (xs, ys, a, b) => {
        const n = Math.min(xs.length, ys.length);
        const x = Float64Array.from(xs.slice(0, n));
        const y = Float64Array.from(ys.slice(0, n));
        const combo = x.map((v, i) => a * v + b * (y[i] as number));
        const lhs = sosfilt(sos, combo);
        const fx = sosfilt(sos, x);
        const fy = sosfilt(sos, y);
        const rhs = fx.map((v, i) => a * v + b * (fy[i] as number));
        const scale = Math.max(1, ...Array.from(lhs, Math.abs), ...Array.from(rhs, Math.abs));
        expect(maxAbsDiff(lhs, rhs) / scale).toBeLessThan(1e-9);
      }),
      { numRuns: 200 },
    );
  });

  it('is time-invariant: a delayed impulse gives the delayed impulse response', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 100 }), (d) => {
        const n = 400;
        const imp = new Float64Array(n);
        imp[0] = 1;
        const del = new Float64Array(n);
        del[d] = 1;
        const h = sosfilt(sos, imp);
        const hd = sosfilt(sos, del);
        for (let i = 0; i < d; i++) expect(hd[i]).toBe(0);
        expect(maxAbsDiff(hd.slice(d), h.slice(0, n - d))).toBeLessThan(1e-15);
      }),
      { numRuns: 30 },
    );
  });
});

describe('zero-phase display filter and band energy', () => {
  it('zero-phase output of a pure tone in the passband has no lag, and |H|² gain', () => {
    const fs = 100;
    const f = 5;
    const sos = butterworthSos(4, [2, 10], 'bandpass', fs);
    const n = 4000;
    const x = Float64Array.from({ length: n }, (_, i) => Math.sin((2 * Math.PI * f * i) / fs));
    const y = sosfiltZeroPhase(sos, x);
    const g = (sosfreqz(sos, [f], fs).magnitude[0] as number) ** 2;
    // away from the ends, y = g·x with no phase shift
    let err = 0;
    for (let i = 1000; i < 3000; i++) err = Math.max(err, Math.abs((y[i] as number) - g * (x[i] as number)));
    expect(err).toBeLessThan(1e-3);
  });

  it('E = Σy²/fs (hand-worked: [1, 2, 3] at 2 Hz gives 7 units²·s)', () => {
    expect(bandEnergy(Float64Array.from([1, 2, 3]), 2)).toBe(7);
    expect(() => bandEnergy(new Float64Array(3), 0)).toThrow(/sample rate/);
  });
});
