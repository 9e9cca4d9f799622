import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isPowerOfTwo, rfft } from '@server/dsp/fft';

/** Direct DFT, X_k = Σ x_n e^{−2πikn/N} (the definition; numpy.fft convention). */
function naiveDft(x: number[]): { re: number[]; im: number[] } {
  const n = x.length;
  const re: number[] = [];
  const im: number[] = [];
  for (let k = 0; k <= Math.floor(n / 2); k++) {
    let r = 0;
    let i = 0;
    for (let j = 0; j < n; j++) {
      r += (x[j] as number) * Math.cos((2 * Math.PI * k * j) / n);
      i -= (x[j] as number) * Math.sin((2 * Math.PI * k * j) / n);
    }
    re.push(r);
    im.push(i);
  }
  return { re, im };
}

describe('rfft (fft.js wrapper)', () => {
  it('hand-worked N = 4: DFT of [1, 2, 3, 4] is [10, −2+2i, −2] (one-sided)', () => {
    // X_0 = 1+2+3+4 = 10; X_1 = 1 − 2i − 3 + 4i = −2 + 2i; X_2 = 1 − 2 + 3 − 4 = −2.
    const { re, im } = rfft(Float64Array.from([1, 2, 3, 4]));
    expect(Array.from(re)).toEqual([10, -2, -2]);
    expect(Array.from(im).map((v) => v + 0)).toEqual([0, 2, 0]);
  });

  it('hand-worked N = 2: [a, b] → [a + b, a − b]', () => {
    const { re, im } = rfft(Float64Array.from([3, 5]));
    expect(Array.from(re)).toEqual([8, -2]);
    expect(Array.from(im).map((v) => v + 0)).toEqual([0, 0]);
  });

  it('equals a naive DFT for random inputs of power-of-two and other sizes (max abs error ≤ 1e-9·N·max|x|)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 12 }),
        fc.integer({ min: 0, max: 1 }),
        fc.array(fc.double({ min: -100, max: 100, noNaN: true }), { minLength: 4096, maxLength: 4096 }),
        (p, odd, pool) => {
          const n = odd ? Math.max(3, (1 << Math.min(p, 9)) - 1) : 1 << p;
          const x = pool.slice(0, n);
          const got = rfft(Float64Array.from(x));
          const ref = naiveDft(x);
          const tol = 1e-9 * n * 100;
          for (let k = 0; k < ref.re.length; k++) {
            expect(Math.abs((got.re[k] as number) - (ref.re[k] as number))).toBeLessThan(tol);
            expect(Math.abs((got.im[k] as number) - (ref.im[k] as number))).toBeLessThan(tol);
          }
        },
      ),
      { numRuns: 40 },
    );
  });

  it('isPowerOfTwo', () => {
    expect([1, 2, 3, 4, 1024, 1000].map(isPowerOfTwo)).toEqual([false, true, false, true, true, false]);
  });
});
