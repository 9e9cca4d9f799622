import FFT from 'fft.js';
import { describe, expect, it } from 'vitest';
import { DifPlan } from '@server/dsp/dif-fft';
import { lcgUniform } from './fixture-signal';

/**
 * The in-place DIF transform of the similarity coarse pass (server/dsp/dif-fft.ts) against the DFT's
 * definition, X_k = Σ_m x_m·e^{−2πikm/n} (Oppenheim & Schafer, Discrete-Time Signal Processing,
 * ch. 8), summed directly, and against fft.js's forward transform (another implementation, same
 * convention), output by output through `order`.
 */

function directDft(x: Float64Array, n: number): Float64Array {
  const out = new Float64Array(2 * n);
  for (let k = 0; k < n; k++) {
    let re = 0;
    let im = 0;
    for (let m = 0; m < n; m++) {
      const a = (-2 * Math.PI * ((k * m) % n)) / n;
      re += (x[2 * m] as number) * Math.cos(a) - (x[2 * m + 1] as number) * Math.sin(a);
      im += (x[2 * m] as number) * Math.sin(a) + (x[2 * m + 1] as number) * Math.cos(a);
    }
    out[2 * k] = re;
    out[2 * k + 1] = im;
  }
  return out;
}

describe('DifPlan (radix-4 DIF, digit-reversed outputs)', () => {
  for (const n of [2, 4, 8, 16, 32, 128, 512]) {
    it(`n = ${n}: every output as the direct DFT and fft.js, also with the upper inputs zero and not read`, () => {
      const plan = new DifPlan(n);
      expect([...plan.order].sort((a, b) => a - b)).toEqual(Array.from({ length: n }, (_, i) => i));
      for (const nz of [n, Math.ceil(0.65 * n), 1]) {
        const u = lcgUniform(1000 + n + nz, 2 * n);
        const x = new Float64Array(2 * n);
        for (let i = 0; i < 2 * nz; i++) x[i] = (u[i] as number) - 0.5;
        const want = directDft(x, n);
        const lib = new Float64Array(2 * n);
        new FFT(n).transform(lib, x);
        // Junk above nz: it must not be read.
        const data = Float64Array.from(x);
        data.fill(1e6, 2 * nz);
        plan.transform(data, nz);
        for (let p = 0; p < n; p++) {
          const k = plan.order[p] as number;
          expect(Math.abs((data[2 * p] as number) - (want[2 * k] as number))).toBeLessThan(1e-9);
          expect(Math.abs((data[2 * p + 1] as number) - (want[2 * k + 1] as number))).toBeLessThan(1e-9);
          expect(Math.abs((data[2 * p] as number) - (lib[2 * k] as number))).toBeLessThan(1e-12 * n);
          expect(Math.abs((data[2 * p + 1] as number) - (lib[2 * k + 1] as number))).toBeLessThan(1e-12 * n);
        }
      }
    });
  }

  for (const n of [512, 256, 8]) {
    it(`n = ${n}: peak finds the largest |X|²·weight (NaN weights skipped, ties to the smaller key) as the direct DFT does`, () => {
      const plan = new DifPlan(n);
      const nz = Math.ceil(0.65 * n);
      const u = lcgUniform(77 + n, 2 * n);
      const x = new Float64Array(2 * n);
      for (let i = 0; i < 2 * nz; i++) x[i] = (u[i] as number) - 0.5;
      const want = directDft(x, n);
      // Weights at offset 3 in longer arrays; a quarter of the positions NaN; keys are output indices.
      const at = 3;
      const weight = new Float64Array(n + at + 2);
      const tie = new Int32Array(n + at + 2);
      for (let p = 0; p < n; p++) {
        const k = plan.order[p] as number;
        weight[at + p] = k % 4 === 1 ? NaN : 1 + (k % 7) / 10;
        tie[at + p] = k;
      }
      let best = -Infinity;
      let bestK = -1;
      for (let k = 0; k < n; k++) {
        if (k % 4 === 1) continue;
        const v = ((want[2 * k] as number) ** 2 + (want[2 * k + 1] as number) ** 2) * (1 + (k % 7) / 10);
        if (v > best) {
          best = v;
          bestK = k;
        }
      }
      const got = plan.peak(Float64Array.from(x), nz, weight, tie, at);
      expect(plan.order[got.pos]).toBe(bestK);
      expect(Math.abs(got.value - best)).toBeLessThan(1e-9 * best);
      // All weights equal and the input an impulse: every |X|² is the same, so the tie goes to the
      // smallest key (keys reversed here: output n − 1, which no position order puts first).
      const impulse = new Float64Array(2 * n);
      impulse[0] = 1;
      weight.fill(1);
      const reversed = new Int32Array(n + at + 2);
      for (let p = 0; p < n; p++) reversed[at + p] = n - 1 - (plan.order[p] as number);
      const flat = plan.peak(impulse, 1, weight, reversed, at);
      expect(plan.order[flat.pos]).toBe(n - 1);
      expect(flat.value).toBe(1);
      // All NaN: nothing can be chosen.
      weight.fill(NaN);
      expect(plan.peak(Float64Array.from(x), nz, weight, tie, at)).toEqual({ value: -Infinity, pos: -1 });
    });
  }

  it('refuses a size that is not a power of two', () => {
    expect(() => new DifPlan(12)).toThrow(/power of two/);
  });
});
