import FFT from 'fft.js';

/**
 * Normalised cross-correlation of a multi-component template against a longer multi-component
 * trace (matched filtering).
 *
 * Definition (one lag l, samples, 0 ≤ l ≤ N − M; components c share one time base):
 *   C(l) = Σ_c Σ_{i<M} w_c[i]·x_c[l+i] / sqrt( Σ_c Σ_{i<M} w_c[i]² · Σ_c Σ_{i<M} x_c[l+i]² )
 * The components' inner products are summed before one joint normalisation: the three components
 * are one vector, as in the multichannel correlation detector of Gibbons & Ringdal (2006,
 * Geophys. J. Int. 165, 149–166, eq. 1 and the channel sum of §3), which averages per-channel
 * coefficients; both agree when every component carries the same share of the energy in the template
 * and in the data. The joint form needs one inverse FFT per template instead of one per component.
 * No mean is removed: templates and traces are band-passed (zero mean in any band above 0 Hz).
 * C lies in [−1, 1]; it is 0 where the trace segment has no energy (a dead or zero-padded part).
 *
 * The sums Σ w·x for every lag come from the FFT (fft.js, radix-4): with L a power of two ≥ N,
 * X_c = DFT_L(x_c), W_c = DFT_L(w_c zero-padded), r = IDFT_L(Σ_c X_c·conj(W_c)) is the circular
 * correlation, equal to the linear one for 0 ≤ l ≤ N − M (l + i ≤ N − 1 < L never wraps). The data
 * energies come from running sums of x². Same numbers as
 * `scipy.signal.correlate(x_c, w_c, mode='valid')` summed over c and divided by those norms.
 */

const plans = new Map<number, FFT>();

/** The fft.js plan for size n (power of two ≥ 2), kept across calls. */
export function fftPlan(n: number): FFT {
  let p = plans.get(n);
  if (!p) {
    p = new FFT(n);
    plans.set(n, p);
  }
  return p;
}

/** Smallest power of two ≥ n (and ≥ 2). */
export function nextPowerOfTwo(n: number): number {
  let p = 2;
  while (p < n) p *= 2;
  return p;
}

/**
 * Below this share of the largest segment energy a segment counts as empty (C = 0): the FFT's
 * round-off (≈ 1e-16 of the whole trace's norm) would otherwise be divided by almost nothing.
 */
export const EMPTY_SEGMENT_FRACTION = 1e-12;

/**
 * Energies of every M-sample segment summed over components: e[l] = Σ_c Σ_{i<M} x_c[l+i]²,
 * l = 0 … N − M (running sum, re-summed every 4096 samples so the subtraction's round-off does not
 * accumulate). Units: those of x, squared. @throws RangeError when M > N or M < 1.
 */
export function segmentEnergies(x: readonly Float64Array[], m: number): Float64Array {
  const n = commonLength(x);
  if (!(m >= 1) || m > n) throw new RangeError(`segmentEnergies: a segment of ${m} samples in a trace of ${n}`);
  const lags = n - m + 1;
  const out = new Float64Array(lags);
  const sq = new Float64Array(n);
  for (const xc of x) for (let i = 0; i < n; i++) sq[i] = (sq[i] as number) + (xc[i] as number) * (xc[i] as number);
  let run = 0;
  for (let l = 0; l < lags; l++) {
    if (l % 4096 === 0) {
      run = 0;
      for (let i = l; i < l + m; i++) run += sq[i] as number;
    } else run += (sq[l + m - 1] as number) - (sq[l - 1] as number);
    out[l] = run > 0 ? run : 0;
  }
  return out;
}

/** Length shared by all components. @throws RangeError when there are none or they differ. */
export function commonLength(x: readonly Float64Array[]): number {
  const first = x[0];
  if (!first) throw new RangeError('cross-correlation: no components');
  for (const c of x) if (c.length !== first.length) throw new RangeError(`cross-correlation: components of ${first.length} and ${c.length} samples`);
  return first.length;
}

/**
 * One-sided spectrum (bins 0 … L/2, interleaved re, im) of x zero-padded (or cut) to L samples.
 * Convention of numpy's `rfft`: X_k = Σ x_n e^{−2πikn/L}, no 1/L.
 */
export function paddedSpectrum(x: Float64Array, l: number, from = 0, count = x.length - from): Float64Array {
  const plan = fftPlan(l);
  const input = new Float64Array(l);
  const end = Math.min(x.length, from + Math.min(count, l));
  for (let i = from; i < end; i++) input[i - from] = x[i] as number;
  const out = new Float64Array(2 * l);
  plan.realTransform(out, input);
  return out.slice(0, l + 2);
}

/**
 * Inverse of a Hermitian spectrum given by its bins 0 … L/2 (interleaved): the real sequence of L
 * samples, with fft.js's 1/L (so a forward then an inverse transform gives the input back).
 */
export function inverseReal(half: Float64Array, l: number): Float64Array {
  const plan = fftPlan(l);
  const full = new Float64Array(2 * l);
  full.set(half.subarray(0, l + 2));
  for (let k = 1; k < l / 2; k++) {
    full[2 * (l - k)] = half[2 * k] as number;
    full[2 * (l - k) + 1] = -(half[2 * k + 1] as number);
  }
  const out = new Float64Array(2 * l);
  plan.inverseTransform(out, full);
  const y = new Float64Array(l);
  for (let i = 0; i < l; i++) y[i] = out[2 * i] as number;
  return y;
}

/**
 * The normalised cross-correlation C(l), l = 0 … N − M, of template components `w` (M samples each)
 * against trace components `x` (N samples each), as defined above. Pure; inputs are not mutated.
 * @throws RangeError when the component counts differ, lengths differ within w or x, or M > N.
 */
export function normalizedXcorr(w: readonly Float64Array[], x: readonly Float64Array[]): Float64Array {
  if (w.length !== x.length) throw new RangeError(`cross-correlation: ${w.length} template components against ${x.length} trace components`);
  const m = commonLength(w);
  const n = commonLength(x);
  if (m > n) throw new RangeError(`cross-correlation: a template of ${m} samples is longer than the trace (${n})`);
  const l = nextPowerOfTwo(n);
  const acc = new Float64Array(l + 2);
  let wEnergy = 0;
  for (let c = 0; c < w.length; c++) {
    const wc = w[c] as Float64Array;
    for (let i = 0; i < m; i++) wEnergy += (wc[i] as number) * (wc[i] as number);
    const xs = paddedSpectrum(x[c] as Float64Array, l);
    const ws = paddedSpectrum(wc, l);
    // X·conj(W): (a + ib)(c − id) = (ac + bd) + i(bc − ad).
    for (let k = 0; k < l + 2; k += 2) {
      const a = xs[k] as number;
      const b = xs[k + 1] as number;
      const cr = ws[k] as number;
      const ci = ws[k + 1] as number;
      acc[k] = (acc[k] as number) + a * cr + b * ci;
      acc[k + 1] = (acc[k + 1] as number) + b * cr - a * ci;
    }
  }
  const r = inverseReal(acc, l);
  const e = segmentEnergies(x, m);
  return normalise(r, e, wEnergy);
}

/** C(l) = r[l] / sqrt(e[l]·wEnergy), 0 for empty segments, clamped to [−1, 1] (round-off only). */
function normalise(r: Float64Array, e: Float64Array, wEnergy: number): Float64Array {
  const out = new Float64Array(e.length);
  if (!(wEnergy > 0)) return out;
  let eMax = 0;
  for (let i = 0; i < e.length; i++) if ((e[i] as number) > eMax) eMax = e[i] as number;
  const floor = eMax * EMPTY_SEGMENT_FRACTION;
  for (let i = 0; i < e.length; i++) {
    const ei = e[i] as number;
    if (!(ei > floor)) continue;
    const v = (r[i] as number) / Math.sqrt(ei * wEnergy);
    out[i] = v > 1 ? 1 : v < -1 ? -1 : v;
  }
  return out;
}

/**
 * C at one lag by the direct sums (no FFT): the definition itself, O(M·components). Returns 0 for an
 * empty segment. @throws RangeError for a lag outside 0 … N − M.
 */
export function xcorrAtLag(w: readonly Float64Array[], x: readonly Float64Array[], lag: number): number {
  const m = commonLength(w);
  const n = commonLength(x);
  if (!(lag >= 0 && lag <= n - m) || !Number.isInteger(lag)) throw new RangeError(`cross-correlation: lag ${lag} outside 0 … ${n - m}`);
  let dot = 0;
  let ww = 0;
  let xx = 0;
  for (let c = 0; c < w.length; c++) {
    const wc = w[c] as Float64Array;
    const xc = x[c] as Float64Array;
    for (let i = 0; i < m; i++) {
      const a = wc[i] as number;
      const b = xc[lag + i] as number;
      dot += a * b;
      ww += a * a;
      xx += b * b;
    }
  }
  if (!(ww > 0) || !(xx > 0)) return 0;
  const v = dot / Math.sqrt(ww * xx);
  return v > 1 ? 1 : v < -1 ? -1 : v;
}

/** The largest C and its lag (the first one on ties); lag −1 and value 0 for an empty array. */
export function peakOfXcorr(c: Float64Array): { lag: number; value: number } {
  let lag = -1;
  let value = -Infinity;
  for (let i = 0; i < c.length; i++) {
    if ((c[i] as number) > value) {
      value = c[i] as number;
      lag = i;
    }
  }
  return lag < 0 ? { lag: -1, value: 0 } : { lag, value };
}
