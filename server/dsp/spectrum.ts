import { isPowerOfTwo, rfftPowerInto } from './fft';

/**
 * Spectra of a pre-processed trace: Welch PSD, dominant frequency, spectral centroid, spectrogram.
 */

/**
 * Periodic Hann window of n points, as `scipy.signal.get_window('hann', n)` (sym=False):
 * w_i = ½ − ½·cos(2πi/n), i = 0 … n−1 (computed as scipy does, via a length-(n+1) symmetric
 * window truncated). Dimensionless. Throws when n < 1.
 */
export function hannPeriodic(n: number): Float64Array {
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`hann: window length must be a whole number ≥ 1, got ${n}`);
  const w = new Float64Array(n);
  if (n === 1) {
    w[0] = 1;
    return w;
  }
  // scipy general_cosine: fac = linspace(−π, π, n+1); w = 0.5 + 0.5·cos(fac) … truncated to n.
  const step = (2 * Math.PI) / n;
  for (let i = 0; i < n; i++) w[i] = 0.5 + 0.5 * Math.cos(-Math.PI + i * step);
  return w;
}

/** A one-sided power spectral density. */
export interface Psd {
  /** Bin frequencies k·fs/nperseg, Hz. */
  freqs: Float64Array;
  /** PSD values, (input units)²/Hz. */
  values: Float64Array;
  /** Segment length actually used, samples. */
  nperseg: number;
  /** Overlap actually used, samples. */
  noverlap: number;
  /** Number of averaged segments. */
  segments: number;
  /** Set when the trace was shorter than the requested segment (nperseg shortened to its length). */
  warning?: string;
}

/**
 * Welch power spectral density exactly as
 * `scipy.signal.welch(x, fs, window='hann', nperseg=nperseg, detrend='constant', scaling='density',
 * return_onesided=True, average='mean')` with scipy's default overlap noverlap = ⌊nperseg/2⌋ (50 %).
 *
 * Per segment j (start j·step, step = nperseg − noverlap, ⌊(n − noverlap)/step⌋ segments): remove the
 * segment mean, multiply by the periodic Hann window w, P_k = |DFT_k|² / (fs·Σw²); one-sided: bins
 * 1 … N/2−1 doubled (and N/2 too when N is odd); average over segments (Welch 1967, IEEE Trans.
 * Audio Electroacoust. 15(2); scipy.signal.welch documentation).
 * A trace shorter than nperseg is analysed as one segment of its own length, with a warning, as scipy.
 *
 * Units: fs in Hz, output (units of x)²/Hz. Non-power-of-two segment lengths (short traces only) use a
 * direct DFT. @throws RangeError when the trace has fewer than 2 samples, fs ≤ 0 or nperseg < 2.
 */
export function welchPsd(x: Float64Array, sampleRateHz: number, nperseg = 1024): Psd {
  if (!(sampleRateHz > 0)) throw new RangeError(`Welch PSD: sample rate must be > 0 Hz, got ${sampleRateHz}`);
  if (!Number.isInteger(nperseg) || nperseg < 2) throw new RangeError(`Welch PSD: segment length must be a whole number ≥ 2, got ${nperseg}`);
  if (x.length < 2) throw new RangeError(`Welch PSD: the trace needs at least 2 samples, got ${x.length}`);
  let warning: string | undefined;
  let seg = nperseg;
  if (x.length < nperseg) {
    seg = x.length;
    warning = `trace of ${x.length} samples is shorter than the ${nperseg}-sample PSD segment: one segment of ${seg} samples used`;
  }
  const noverlap = Math.floor(seg / 2);
  const step = seg - noverlap;
  const nseg = Math.floor((x.length - noverlap) / step);
  const w = hannPeriodic(seg);
  let wss = 0;
  for (let i = 0; i < seg; i++) wss += (w[i] as number) ** 2;
  const bins = Math.floor(seg / 2) + 1;
  const acc = new Float64Array(bins);
  const buf = new Float64Array(seg);
  const pow = new Float64Array(bins);
  const scratch = new Float64Array(isPowerOfTwo(seg) ? 2 * seg : 0);
  for (let j = 0; j < nseg; j++) {
    const o = j * step;
    let mean = 0;
    for (let i = 0; i < seg; i++) mean += x[o + i] as number;
    mean /= seg;
    for (let i = 0; i < seg; i++) buf[i] = ((x[o + i] as number) - mean) * (w[i] as number);
    rfftPowerInto(buf, pow, scratch);
    for (let k = 0; k < bins; k++) acc[k] = (acc[k] as number) + (pow[k] as number);
  }
  const scale = 1 / (sampleRateHz * wss * nseg);
  const values = new Float64Array(bins);
  const freqs = new Float64Array(bins);
  const lastDoubled = seg % 2 === 0 ? bins - 2 : bins - 1;
  for (let k = 0; k < bins; k++) {
    const doubled = k >= 1 && k <= lastDoubled ? 2 : 1;
    values[k] = (acc[k] as number) * scale * doubled;
    freqs[k] = (k * sampleRateHz) / seg;
  }
  const psd: Psd = { freqs, values, nperseg: seg, noverlap, segments: nseg };
  if (warning) psd.warning = warning;
  return psd;
}

/** Dominant frequency and spectral centroid of a PSD. */
export interface SpectralStats {
  /** Frequency of the largest PSD bin with fmin ≤ f (and outside excluded bands), Hz; null if none. */
  dominantFrequency: number | null;
  /** Σ f·P ÷ Σ P over fmin ≤ f ≤ fs/2 (outside excluded bands), Hz; null when Σ P = 0. */
  spectralCentroid: number | null;
}

/**
 * Dominant frequency (the largest PSD bin at f ≥ fmin) and spectral centroid (Σ f·P ÷ Σ P over
 * fmin … fs/2), per the brief's processing table (fmin = 0.1 Hz by default). Bins inside any of
 * `excludeBands` (the station's band-reject filters, e.g. a 25 Hz pump line) are left out, so a known
 * machinery line does not decide where "the spectrum peaks". Units: Hz in, Hz out.
 */
export function spectralStats(
  freqs: Float64Array,
  values: Float64Array,
  fminHz: number,
  excludeBands: ReadonlyArray<{ fmin: number; fmax: number }> = [],
): SpectralStats {
  let best = -1;
  let bestV = -Infinity;
  let sp = 0;
  let sfp = 0;
  for (let k = 0; k < freqs.length; k++) {
    const f = freqs[k] as number;
    if (f < fminHz) continue;
    if (excludeBands.some((b) => f >= b.fmin && f <= b.fmax)) continue;
    const v = values[k] as number;
    if (v > bestV) {
      bestV = v;
      best = k;
    }
    sp += v;
    sfp += f * v;
  }
  return {
    dominantFrequency: best >= 0 && bestV > 0 ? (freqs[best] as number) : null,
    spectralCentroid: sp > 0 ? sfp / sp : null,
  };
}

/** A spectrogram for display. */
export interface Spectrogram {
  /** Segment centre times, s from the first sample. */
  times: number[];
  /** Bin frequencies, Hz. */
  freqs: number[];
  /** 10·log10(PSD) per segment, row-major `[time][freq]`, dB rel (units)²/Hz; −Infinity is clamped to −400. */
  db: number[];
  /** Segment length and hop, samples. */
  nperseg: number;
  step: number;
}

/**
 * Spectrogram for display (not used by any score): periodic-Hann segments of `nperseg` samples
 * (default 256), segment mean removed, density scaling as `welchPsd` (one segment each), hop of
 * nperseg/2 samples, widened when needed so there are at most `maxColumns` (default 300) columns.
 * Units: s, Hz, dB rel (units of x)²/Hz. @throws RangeError when the trace is shorter than nperseg
 * (then nperseg is shortened to the largest power of two ≤ length, minimum 16).
 */
export function spectrogram(x: Float64Array, sampleRateHz: number, nperseg = 256, maxColumns = 300): Spectrogram {
  let seg = nperseg;
  while (seg > x.length && seg > 16) seg /= 2;
  if (x.length < seg) throw new RangeError(`spectrogram: the trace needs at least ${seg} samples, got ${x.length}`);
  const w = hannPeriodic(seg);
  let wss = 0;
  for (let i = 0; i < seg; i++) wss += (w[i] as number) ** 2;
  let step = Math.floor(seg / 2);
  const cols = (s: number): number => Math.floor((x.length - seg) / s) + 1;
  if (cols(step) > maxColumns) step = Math.ceil((x.length - seg) / (maxColumns - 1));
  const ncol = cols(step);
  const bins = seg / 2 + 1;
  const buf = new Float64Array(seg);
  const pow = new Float64Array(bins);
  const scratch = new Float64Array(2 * seg);
  const db: number[] = new Array<number>(ncol * bins);
  const times: number[] = [];
  const scale = 1 / (sampleRateHz * wss);
  for (let j = 0; j < ncol; j++) {
    const o = j * step;
    let mean = 0;
    for (let i = 0; i < seg; i++) mean += x[o + i] as number;
    mean /= seg;
    for (let i = 0; i < seg; i++) buf[i] = ((x[o + i] as number) - mean) * (w[i] as number);
    rfftPowerInto(buf, pow, scratch);
    for (let k = 0; k < bins; k++) {
      const v = (pow[k] as number) * scale * (k === 0 || k === bins - 1 ? 1 : 2);
      db[j * bins + k] = v > 0 ? Math.max(-400, 10 * Math.log10(v)) : -400;
    }
    times.push((o + seg / 2) / sampleRateHz);
  }
  const freqs = Array.from({ length: bins }, (_, k) => (k * sampleRateHz) / seg);
  return { times, freqs, db, nperseg: seg, step };
}
