import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { butterworthSos, butterworthZpk, type FilterType } from '@server/dsp/butterworth';
import { sosfreqz } from '@server/dsp/sosfilt';
import { readFixture } from './fixture-signal';

const fixture = readFixture(
  'butter.json',
  z.object({
    designs: z.array(
      z.object({
        order: z.number(),
        edges: z.array(z.number()),
        btype: z.enum(['lowpass', 'highpass', 'bandpass', 'bandstop']),
        fs: z.number(),
        sos: z.array(z.array(z.number()).length(6)),
        freqs: z.array(z.number()),
        magnitude: z.array(z.number()),
      }),
    ),
  }),
);

const label = (d: { order: number; edges: number[]; btype: FilterType; fs: number }): string =>
  `butter(${d.order}, [${d.edges.join(', ')}], '${d.btype}', fs=${d.fs})`;

describe('Butterworth design against scipy.signal.butter(..., output="sos") (fixtures/dsp/butter.json)', () => {
  for (const d of fixture.designs) {
    it(`${label(d)}: same sections in scipy's order, coefficients to 1e-9`, () => {
      const sos = butterworthSos(d.order, d.edges, d.btype, d.fs);
      // Source: scipy.signal.butter / zpk2sos(pairing='nearest'), scipy 1.10, Debian python3-scipy.
      expect(sos.sections).toBe(d.sos.length);
      const got = Array.from({ length: sos.sections }, (_, s) => Array.from(sos.coefficients.slice(s * 6, s * 6 + 6)));
      // zpk2sos orders sections by the pole radius. Where two sections have poles of the SAME radius
      // (a band centred on fs/4 is mirror-symmetric, so its poles come in ±Re pairs), scipy's order is
      // decided by a 1-ulp rounding difference in |p| from numpy's complex arithmetic; those tied
      // sections are compared as a set (each row normalised by its largest |b|, which moves the
      // overall gain out), and the product of the row scales (the gain) is compared separately.
      // Untied sections must match one-to-one, in place.
      const radius = (row: number[]): number => Math.abs(row[5] as number);
      const bScale = (row: number[]): number => Math.max(...row.slice(0, 3).map(Math.abs));
      const normalised = (row: number[]): number[] => [...row.slice(0, 3).map((v) => v / bScale(row)), ...row.slice(3)];
      let s = 0;
      while (s < d.sos.length) {
        let e = s + 1;
        while (e < d.sos.length && Math.abs(radius(d.sos[e] as number[]) - radius(d.sos[s] as number[])) < 1e-12) e++;
        if (e - s === 1) {
          const ref = d.sos[s] as number[];
          for (let j = 0; j < 6; j++) {
            // b carries the gain in section 0 (~1e-8 for a narrow low band): relative to the row's largest |b|.
            const tol = j < 3 ? 1e-9 * bScale(ref) : 1e-9;
            expect(Math.abs((got[s]?.[j] as number) - (ref[j] as number)), `section ${s} coefficient ${j}`).toBeLessThanOrEqual(tol);
          }
        } else {
          const key = (r: number[]): number => r[4] as number;
          const refRows = d.sos.slice(s, e).map(normalised).sort((a, b) => key(a) - key(b));
          const gotRows = got.slice(s, e).map(normalised).sort((a, b) => key(a) - key(b));
          refRows.forEach((r, i) => r.forEach((v, j) => expect(Math.abs((gotRows[i]?.[j] as number) - v), `tied sections ${s}..${e - 1}`).toBeLessThanOrEqual(1e-9)));
        }
        s = e;
      }
      const gain = (rows: number[][]): number => rows.reduce((g, r) => g * bScale(r), 1);
      expect(Math.abs(gain(got) / gain(d.sos) - 1)).toBeLessThanOrEqual(1e-9);
    });

    it(`${label(d)}: sosfreqz magnitude equals scipy.signal.sosfreqz to 1e-9`, () => {
      const sos = butterworthSos(d.order, d.edges, d.btype, d.fs);
      const { magnitude } = sosfreqz(sos, d.freqs, d.fs);
      d.magnitude.forEach((m, k) => {
        expect(Math.abs((magnitude[k] as number) - m), `f = ${d.freqs[k]} Hz`).toBeLessThanOrEqual(1e-9);
      });
    });
  }

  it('band edges of the default bands are at −3.01 dB (|H|² = ½: the Butterworth definition, common practice)', () => {
    for (const fs of [40, 100, 200]) {
      for (const edges of [
        [0.5, 2],
        [2, 10],
      ]) {
        const sos = butterworthSos(4, edges, 'bandpass', fs);
        const { magnitude } = sosfreqz(sos, edges, fs);
        for (const m of magnitude) expect(20 * Math.log10(m)).toBeCloseTo(-3.0103, 3);
        // and ≈ 0 dB in the middle of the band (geometric centre)
        const mid = sosfreqz(sos, [Math.sqrt((edges[0] as number) * (edges[1] as number))], fs).magnitude[0] as number;
        expect(Math.abs(20 * Math.log10(mid))).toBeLessThan(0.01);
      }
    }
  });

  it('a band-pass of order N has 2N poles inside the unit circle (stable), as scipy', () => {
    const zpk = butterworthZpk(4, [2, 10], 'bandpass', 100);
    expect(zpk.poles).toHaveLength(8);
    for (const p of zpk.poles) expect(Math.hypot(p.re, p.im)).toBeLessThan(1);
  });

  it('refuses bad designs with a message naming the problem', () => {
    expect(() => butterworthSos(4, [2, 60], 'bandpass', 100)).toThrow(/Nyquist frequency 50 Hz/);
    expect(() => butterworthSos(4, [10, 2], 'bandpass', 100)).toThrow(/f1 < f2/);
    expect(() => butterworthSos(0, [2, 10], 'bandpass', 100)).toThrow(/order/);
    expect(() => butterworthSos(4, [2], 'bandpass', 100)).toThrow(/needs 2 edge/);
    expect(() => butterworthSos(4, [0, 2], 'bandpass', 100)).toThrow(/between 0/);
  });
});
