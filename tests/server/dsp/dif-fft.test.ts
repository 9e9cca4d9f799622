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

  it('refuses a size that is not a power of two', () => {
    expect(() => new DifPlan(12)).toThrow(/power of two/);
  });
});
