import FFT from 'fft.js';

/**
 * The real-input discrete Fourier transform used by the spectra, on top of fft.js (radix-4,
 * power-of-two sizes) with a direct O(n²) DFT for other sizes (only short windows need them).
 *
 * Convention: X_k = Σ_{n=0}^{N−1} x_n · e^{−2πi·k·n/N}, no 1/N factor (forward transform, as numpy's
 * `np.fft.rfft`). Only bins k = 0 … ⌊N/2⌋ are returned (one-sided; the rest are conjugates).
 */

const plans = new Map<number, FFT>();

function planFor(n: number): FFT {
  let plan = plans.get(n);
  if (!plan) {
    plan = new FFT(n);
    plans.set(n, plan);
  }
  return plan;
}

/** True when n is a power of two ≥ 2 (fft.js sizes). */
export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n >= 2 && (n & (n - 1)) === 0;
}

/**
 * One-sided DFT of a real sequence: bins 0 … ⌊N/2⌋ as separate real and imaginary arrays.
 * Power-of-two N uses fft.js `realTransform`; other N a direct DFT (exact formula, O(N²)).
 * @throws RangeError when N < 1.
 */
export function rfft(x: Float64Array): { re: Float64Array; im: Float64Array } {
  const n = x.length;
  if (n < 1) throw new RangeError('rfft: the sequence has no samples');
  const bins = Math.floor(n / 2) + 1;
  const re = new Float64Array(bins);
  const im = new Float64Array(bins);
  if (n === 1) {
    re[0] = x[0] as number;
    return { re, im };
  }
  if (isPowerOfTwo(n)) {
    const out = new Float64Array(2 * n);
    planFor(n).realTransform(out, x);
    for (let k = 0; k < bins; k++) {
      re[k] = out[2 * k] as number;
      im[k] = out[2 * k + 1] as number;
    }
    return { re, im };
  }
  for (let k = 0; k < bins; k++) {
    let sr = 0;
    let si = 0;
    for (let j = 0; j < n; j++) {
      // Reduce k·j mod n first so the angle stays small and exact in integers.
      const a = (-2 * Math.PI * ((k * j) % n)) / n;
      const v = x[j] as number;
      sr += v * Math.cos(a);
      si += v * Math.sin(a);
    }
    re[k] = sr;
    im[k] = si;
  }
  return { re, im };
}

/**
 * |X_k|² for k = 0 … ⌊N/2⌋ written into `out` (length ⌊N/2⌋+1); `scratch` must have length 2N
 * when N is a power of two (reused between calls to avoid allocation). Same convention as `rfft`.
 */
export function rfftPowerInto(x: Float64Array, out: Float64Array, scratch: Float64Array): void {
  const n = x.length;
  if (isPowerOfTwo(n)) {
    planFor(n).realTransform(scratch, x);
    const bins = n / 2 + 1;
    for (let k = 0; k < bins; k++) {
      const r = scratch[2 * k] as number;
      const i = scratch[2 * k + 1] as number;
      out[k] = r * r + i * i;
    }
    return;
  }
  const { re, im } = rfft(x);
  for (let k = 0; k < re.length; k++) out[k] = (re[k] as number) ** 2 + (im[k] as number) ** 2;
}

/**
 * Adds |X_k|² for k = 0 … N/2 to `acc[k]` (length N/2+1) for a power-of-two N; `scratch` has length 2N.
 * Same numbers as `rfftPowerInto` followed by `acc[k] += out[k]`, without the intermediate array (the
 * Welch average's inner step). @throws RangeError when N is not a power of two.
 */
export function rfftPowerAccumulate(x: Float64Array, acc: Float64Array, scratch: Float64Array): void {
  const n = x.length;
  if (!isPowerOfTwo(n)) throw new RangeError(`rfftPowerAccumulate: length ${n} is not a power of two`);
  planFor(n).realTransform(scratch, x);
  const bins = n / 2 + 1;
  for (let k = 0; k < bins; k++) {
    const r = scratch[2 * k] as number;
    const i = scratch[2 * k + 1] as number;
    acc[k] = (acc[k] as number) + (r * r + i * i);
  }
}
