import fc from 'fast-check';
import Fili from 'fili';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { butterworthSos } from '@server/dsp/butterworth';
import { detrendLinear, taperInPlace, taperTailStart } from '@server/dsp/preprocess';
import { bandEnergy, bandEnergyBeside, filteredEnergy, sosfilt, sosfiltIntoWithState, sosfiltSpan, sosfiltZeroPhase, sosfreqz } from '@server/dsp/sosfilt';
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

describe('filtering in spans, and band energies without a trace-long array (exact: the same bits)', () => {
  // Invented test signal: an offset, a swell, an in-band burst and noise (deterministic).
  const signal = (n: number, fs: number, seed: number): Float64Array =>
    makeSignal({ n, fs, offset: 300, sines: [[200, 0.2, 0]], bursts: [[(0.5 * n) / fs, 4, 3000, 6]], noise: 400, seed });
  const designs = [
    butterworthSos(4, [2, 10], 'bandpass', 100), // 4 sections: the four-section pass
    butterworthSos(3, [0.5, 2], 'bandpass', 100), // 3: two, then one
    butterworthSos(7, [1, 20], 'bandpass', 100), // 7: four, two, one
    butterworthSos(4, [24.5, 25.5], 'bandstop', 100),
  ];

  it('sosfiltSpan over consecutive spans, carrying the state, equals one sosfilt over the trace', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: designs.length - 1 }), fc.array(fc.integer({ min: 0, max: 3000 }), { maxLength: 6 }), fc.integer({ min: 1, max: 1e6 }), (d, cuts, seed) => {
        const sos = designs[d] as NonNullable<(typeof designs)[number]>;
        const x = signal(3000, 100, seed);
        const whole = sosfilt(sos, x);
        const y = new Float64Array(x.length);
        const state = new Float64Array(2 * sos.sections);
        let from = 0;
        for (const to of [...cuts].sort((a, b) => a - b).concat(x.length)) {
          sosfiltSpan(sos, x, y, from, to, state);
          from = to;
        }
        expect(y).toEqual(whole);
        // and the state returned at a sample lets a second call go on from there
        const at = cuts[0] ?? 1234;
        const z = new Float64Array(x.length);
        const s = sosfiltIntoWithState(sos, x, z, at);
        expect(z).toEqual(whole);
        const tail = new Float64Array(x.length);
        sosfiltSpan(sos, x, tail, at, x.length, s);
        expect(tail.subarray(at)).toEqual(whole.subarray(at));
      }),
      { numRuns: 60 },
    );
  });

  it('filteredEnergy equals bandEnergy(sosfilt(…)) exactly', () => {
    for (const sos of designs) {
      for (const n of [1, 1023, 1024, 1025, 12_000]) {
        const x = signal(n, 100, n);
        expect(filteredEnergy(sos, x, 100, new Float64Array(2048))).toBe(bandEnergy(sosfilt(sos, x), 100));
      }
    }
  });

  it('bandEnergyBeside equals bandEnergy(sosfilt(u)) exactly: tapered against ramped trace, traces that never agree, any tail start', () => {
    // The pipeline's case: u = detrended × Tukey taper, w = detrended with a start ramp (equal between).
    for (const sos of designs) {
      for (const [n, alpha] of [[12_000, 0.1], [3000, 0.1], [40_000, 0.05], [12_000, 0], [12_000, 1], [500, 0.1]] as const) {
        const d = detrendLinear(signal(n, 100, 7));
        const u = d.slice();
        taperInPlace(u, alpha);
        const w = d.slice();
        for (let i = 0; i < 75; i++) w[i] = (w[i] as number) * 0.5 * (1 - Math.cos((Math.PI * i) / 75));
        const to = taperTailStart(n, alpha);
        const yw = new Float64Array(n);
        const state = sosfiltIntoWithState(sos, w, yw, to);
        const exact = bandEnergy(sosfilt(sos, u), 100);
        expect(bandEnergyBeside(sos, u, w, yw, state, to, 100, new Float64Array(2048))).toBe(exact);
      }
    }
    // Traces that differ everywhere, and a stretch that agrees but a wrong-but-plausible tail start.
    const sos = designs[0] as NonNullable<(typeof designs)[number]>;
    const u = signal(12_000, 100, 3);
    const w = signal(12_000, 100, 4);
    const yw = new Float64Array(12_000);
    for (const to of [0, 5000, 12_000]) {
      const state = sosfiltIntoWithState(sos, w, yw, to);
      expect(bandEnergyBeside(sos, u, w, yw, state, to, 100, new Float64Array(2048))).toBe(bandEnergy(sosfilt(sos, u), 100));
    }
    const v = u.slice();
    for (let i = 0; i < 600; i++) v[i] = 0;
    for (const to of [6000, 12_000]) {
      const state = sosfiltIntoWithState(sos, v, yw, to);
      expect(bandEnergyBeside(sos, u, v, yw, state, to, 100, new Float64Array(2048))).toBe(bandEnergy(sosfilt(sos, u), 100));
    }
  });

  it('refuses mismatched traces, a tail start outside the trace and a wrong state', () => {
    const sos = designs[0] as NonNullable<(typeof designs)[number]>;
    const x = signal(100, 100, 1);
    const st = new Float64Array(2 * sos.sections);
    expect(() => bandEnergyBeside(sos, x, x.subarray(1), x, st, 10, 100, new Float64Array(2048))).toThrow(/traces of 100, 99 and 100 samples/);
    expect(() => bandEnergyBeside(sos, x, x, x, st, 101, 100, new Float64Array(2048))).toThrow(/sample 101 is outside the trace of 100 samples/);
    expect(() => bandEnergyBeside(sos, x, x, x, new Float64Array(3), 10, 100, new Float64Array(2048))).toThrow(/3 state values for 4 sections/);
    expect(() => sosfiltSpan(sos, x, new Float64Array(100), 50, 101, st)).toThrow(/span \[50, 101\) is outside the traces/);
    expect(() => sosfiltIntoWithState(sos, x, new Float64Array(100), -1)).toThrow(/sample -1 is outside the trace of 100 samples/);
  });
});
