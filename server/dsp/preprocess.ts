/**
 * Pre-processing of one trace: demean, least-squares linear detrend, Tukey (cosine) taper.
 * Pure functions on Float64Array; inputs are never mutated.
 */

/**
 * Remove the arithmetic mean: y[i] = x[i] − mean(x).
 * Units: those of `x`. Throws on an empty input.
 */
export function demean(x: Float64Array): Float64Array {
  if (x.length === 0) throw new RangeError('demean: the trace has no samples');
  let sum = 0;
  for (let i = 0; i < x.length; i++) sum += x[i] as number;
  const mean = sum / x.length;
  const y = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) y[i] = (x[i] as number) - mean;
  return y;
}

/**
 * Remove the least-squares straight line a + b·i (i = sample index), as
 * `scipy.signal.detrend(x, type='linear')`.
 *
 * Formula: with t_i = i − (n−1)/2 (centred, so the normal equations decouple),
 * b = Σ t_i·x_i / Σ t_i², a = mean(x); y_i = x_i − a − b·t_i.
 * Units: those of `x`. Throws on an empty input. A single sample gives [0].
 */
export function detrendLinear(x: Float64Array): Float64Array {
  const n = x.length;
  if (n === 0) throw new RangeError('detrend: the trace has no samples');
  const y = new Float64Array(n);
  detrendLinearInto(x, y);
  return y;
}

/**
 * `detrendLinear` writing into `out` (same length; may be `x` itself): the same arithmetic, so the same
 * numbers. @throws RangeError when the lengths differ.
 */
export function detrendLinearInto(x: Float64Array, out: Float64Array): void {
  const n = x.length;
  if (out.length !== n) throw new RangeError(`detrendLinearInto: input of ${n} samples, output of ${out.length}`);
  const c = (n - 1) / 2;
  let sx = 0;
  for (let i = 0; i < n; i++) sx += x[i] as number;
  const mean = sx / n;
  let stx = 0;
  let stt = 0;
  for (let i = 0; i < n; i++) {
    const t = i - c;
    stx += t * ((x[i] as number) - mean);
    stt += t * t;
  }
  const slope = stt > 0 ? stx / stt : 0;
  for (let i = 0; i < n; i++) out[i] = (x[i] as number) - mean - slope * (i - c);
}

/**
 * Tukey (tapered cosine) window of n points, symmetric, exactly as
 * `scipy.signal.windows.tukey(n, alpha, sym=True)` (same piecewise formula and index split):
 * width = ⌊α(n−1)/2⌋;
 * w_i = ½(1 + cos(π(−1 + 2i/(α(n−1))))) for i ≤ width,
 * w_i = 1 in the middle,
 * w_i = ½(1 + cos(π(−2/α + 1 + 2i/(α(n−1))))) for i ≥ n−width−1.
 * α = 0 gives a rectangle, α = 1 a (symmetric) Hann window. Dimensionless.
 * Throws when n < 0 or α is not a finite number.
 */
export function tukeyWindow(n: number, alpha: number): Float64Array {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`tukey: window length must be a whole number ≥ 0, got ${n}`);
  if (!Number.isFinite(alpha)) throw new RangeError(`tukey: alpha must be a finite number, got ${alpha}`);
  const w = new Float64Array(n).fill(1);
  if (n <= 1 || alpha <= 0) return w;
  if (alpha >= 1) {
    // scipy falls back to hann(n, sym=True): 0.5 − 0.5·cos(2πi/(n−1)).
    for (let i = 0; i < n; i++) w[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / (n - 1));
    return w;
  }
  const m1 = n - 1;
  const width = Math.floor((alpha * m1) / 2);
  for (let i = 0; i <= width; i++) w[i] = 0.5 * (1 + Math.cos(Math.PI * (-1 + (2 * i) / alpha / m1)));
  for (let i = n - width - 1; i < n; i++) {
    w[i] = 0.5 * (1 + Math.cos(Math.PI * (-2 / alpha + 1 + (2 * i) / alpha / m1)));
  }
  return w;
}

/**
 * The standard pre-processing of the brief: demean, least-squares linear detrend, then multiply by
 * a Tukey window of α = `taperAlpha` (0.10 tapers 5 % of the window at each end).
 * The linear detrend already removes the mean; demeaning first is kept for clarity, and costs one pass.
 * Units: those of `x`. Throws on an empty input.
 */
export function preprocessTrace(x: Float64Array, taperAlpha: number): Float64Array {
  if (x.length === 0) throw new RangeError('preprocess: the trace has no samples');
  const y = new Float64Array(x.length);
  detrendLinearInto(x, y);
  taperInPlace(y, taperAlpha);
  return y;
}

/**
 * Multiply `y` in place by the Tukey window of α = `taperAlpha` (`tukeyWindow(y.length, α)`), touching
 * only the tapered ends when α < 1 (the middle is 1). `preprocessTrace` is `detrendLinear` then this,
 * so a caller that also needs the untapered detrended trace detrends once and tapers a copy.
 * Dimensionless window; units of `y` kept.
 */
export function taperInPlace(y: Float64Array, taperAlpha: number): void {
  const n = y.length;
  if (n <= 1 || taperAlpha <= 0) return;
  if (taperAlpha >= 1) {
    const w = tukeyWindow(n, taperAlpha);
    for (let i = 0; i < n; i++) y[i] = (y[i] as number) * (w[i] as number);
    return;
  }
  // Only the tapered ends differ from 1: the same formulas as tukeyWindow, at those samples only.
  const m1 = n - 1;
  const width = Math.floor((taperAlpha * m1) / 2);
  for (let i = 0; i <= width; i++) y[i] = (y[i] as number) * 0.5 * (1 + Math.cos(Math.PI * (-1 + (2 * i) / taperAlpha / m1)));
  for (let i = n - width - 1; i < n; i++) {
    y[i] = (y[i] as number) * 0.5 * (1 + Math.cos(Math.PI * (-2 / taperAlpha + 1 + (2 * i) / taperAlpha / m1)));
  }
}

/**
 * First sample of the taper's tail, the sample from which `taperInPlace(y, α)` changes y up to the end:
 * n − ⌊α(n−1)/2⌋ − 1 for 0 < α < 1 (the same split as `tukeyWindow`), n when nothing is tapered
 * (α ≤ 0 or n ≤ 1), 0 when everything is (α ≥ 1, a Hann window). Samples; n ≥ 0.
 */
export function taperTailStart(n: number, taperAlpha: number): number {
  if (n <= 1 || taperAlpha <= 0) return n;
  if (taperAlpha >= 1) return 0;
  return n - Math.floor((taperAlpha * (n - 1)) / 2) - 1;
}
