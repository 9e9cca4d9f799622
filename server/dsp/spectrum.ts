import { isPowerOfTwo, rfftPowerAccumulate, rfftPowerInto } from './fft';

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

/**
 * Periodic Hann windows and their Σw², by length, kept for the process (a network uses a few segment
 * lengths: the profile's nperseg, the signal spectrum's, the spectrogram's). Read only.
 */
const hannCache = new Map<number, { w: Float64Array; wss: number }>();

function cachedHann(n: number): { w: Float64Array; wss: number } {
  let h = hannCache.get(n);
  if (!h) {
    const w = hannPeriodic(n);
    let wss = 0;
    for (let i = 0; i < n; i++) wss += (w[i] as number) ** 2;
    h = { w, wss };
    if (hannCache.size >= 32) hannCache.clear();
    hannCache.set(n, h);
  }
  return h;
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
  const { w, wss } = cachedHann(seg);
  const bins = Math.floor(seg / 2) + 1;
  const acc = new Float64Array(bins);
  const buf = new Float64Array(seg);
  const pow2 = isPowerOfTwo(seg);
  const pow = pow2 ? acc : new Float64Array(bins);
  const scratch = new Float64Array(pow2 ? 2 * seg : 0);
  for (let j = 0; j < nseg; j++) {
    const o = j * step;
    let mean = 0;
    for (let i = 0; i < seg; i++) mean += x[o + i] as number;
    mean /= seg;
    for (let i = 0; i < seg; i++) buf[i] = ((x[o + i] as number) - mean) * (w[i] as number);
    if (pow2) rfftPowerAccumulate(buf, acc, scratch);
    else {
      rfftPowerInto(buf, pow, scratch);
      for (let k = 0; k < bins; k++) acc[k] = (acc[k] as number) + (pow[k] as number);
    }
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
  const { best, bestWeight, weightSum, weightedFreqSum } = peakAndCentroid(freqs, (k, f) =>
    f < fminHz || inBands(f, excludeBands) ? undefined : values[k],
  );
  return {
    dominantFrequency: best >= 0 && bestWeight > 0 ? (freqs[best] as number) : null,
    spectralCentroid: weightSum > 0 ? weightedFreqSum / weightSum : null,
  };
}

/** True when `f` (Hz) lies inside any of the closed bands. */
function inBands(f: number, bands: ReadonlyArray<{ fmin: number; fmax: number }>): boolean {
  return bands.some((b) => f >= b.fmin && f <= b.fmax);
}

/**
 * One pass over frequency bins: the bin with the largest weight and the sums Σw and Σw·f for a
 * weighted centroid. `weightAt(k, f)` gives bin k's weight, or undefined to leave the bin out.
 * Shared by the whole-window statistics (weight = PSD) and the signal spectrum (weight = excess power).
 */
function peakAndCentroid(freqs: Float64Array, weightAt: (k: number, f: number) => number | undefined) {
  let best = -1;
  let bestWeight = -Infinity;
  let weightSum = 0;
  let weightedFreqSum = 0;
  for (let k = 0; k < freqs.length; k++) {
    const f = freqs[k] as number;
    const w = weightAt(k, f);
    if (w === undefined) continue;
    if (w > bestWeight) {
      bestWeight = w;
      best = k;
    }
    weightSum += w;
    weightedFreqSum += w * f;
  }
  return { best, bestWeight, weightSum, weightedFreqSum };
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
  const { w, wss } = cachedHann(seg);
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

/** Largest power of two ≤ n (n ≥ 1), e.g. 600 → 512; 0 for n < 1. */
export function largestPowerOfTwoAtMost(n: number): number {
  if (!(n >= 1)) return 0;
  let p = 1;
  while (p * 2 <= n) p *= 2;
  return p;
}

/** Where the signal and the pre-trigger noise are taken from, sample indices [from, to) of the trace. */
export interface SignalSegmentPlan {
  signalFrom: number;
  signalTo: number;
  noiseFrom: number;
  noiseTo: number;
  /** Welch segment length for both parts, samples (a power of two). */
  nperseg: number;
}

/** The knobs of the segment plan (the profile's `signalSpectrum` section, seconds). */
export interface SignalSegmentOptions {
  /** Signal span after trigger-on: the trigger's duration (on → off) bounded to [minS, maxS]; maxS when still on. */
  minS: number;
  maxS: number;
  /** Pre-trigger noise: at most noiseMaxS, at least noiseMinS, else no plan. */
  noiseMinS: number;
  noiseMaxS: number;
  /** Wanted Welch segment length, s (rounded down to a power of two of samples). */
  segmentS: number;
}

/**
 * Plan the signal and noise parts of a triggered trace (our rule, documented in server/dsp/README.md):
 * - signal: [on, on + clamp(off − on, minS, maxS)) — maxS when the trigger is still on at the end —
 *   clipped to the trace; refused when the clipped part is shorter than minS;
 * - noise: [max(taperEnd, on − guard − noiseMaxS), on − guard) with guard = the STA window (it holds
 *   the rise that set the trigger off) and taperEnd the first sample after the start taper (tapered
 *   samples are not the recorded noise level); refused when shorter than noiseMinS;
 * - Welch segment: the largest power of two ≤ min(maxNperseg, segmentS·fs, signal length, noise
 *   length), both parts with the same one so their bins match; refused below 16 samples.
 * Indices in samples, fs in Hz, times in s.
 * @returns the plan, or a sentence saying why there is none (for the reasons).
 */
export function planSignalSegments(
  n: number,
  sampleRateHz: number,
  trigger: { onIndex: number; offIndex: number | null },
  opts: SignalSegmentOptions & { guardSamples: number; taperSamples: number; maxNperseg: number },
): { plan: SignalSegmentPlan } | { note: string } {
  const fs = sampleRateHz;
  const s = (samples: number): string => `${(samples / fs).toFixed(1)} s`;
  const minLen = Math.round(opts.minS * fs);
  const maxLen = Math.round(opts.maxS * fs);
  const on = trigger.onIndex;
  const dur = trigger.offIndex === null ? maxLen : Math.min(maxLen, Math.max(minLen, trigger.offIndex - on));
  const signalFrom = on;
  const signalTo = Math.min(n, on + dur);
  if (signalTo - signalFrom < minLen) {
    return { note: `only ${s(signalTo - signalFrom)} of signal after the trigger at ${s(on)} before the window ends (at least ${opts.minS} s needed)` };
  }
  const noiseTo = on - opts.guardSamples;
  const noiseFrom = Math.max(opts.taperSamples, noiseTo - Math.round(opts.noiseMaxS * fs));
  if (noiseTo - noiseFrom < Math.round(opts.noiseMinS * fs)) {
    return { note: `only ${s(Math.max(0, noiseTo - noiseFrom))} of usable noise before the onset at ${s(on)} (at least ${opts.noiseMinS} s needed)` };
  }
  const nperseg = largestPowerOfTwoAtMost(Math.min(opts.maxNperseg, Math.floor(opts.segmentS * fs), signalTo - signalFrom, noiseTo - noiseFrom));
  if (nperseg < 16) return { note: `the signal and noise parts allow only ${nperseg}-sample spectra (at least 16 needed)` };
  return { plan: { signalFrom, signalTo, noiseFrom, noiseTo, nperseg } };
}

/** The signal-to-noise spectral ratio of a triggered trace and where it peaks. */
export interface SnrSpectrum {
  freqs: Float64Array;
  /** Welch PSD of the signal part and of the noise part, (units of x)²/Hz. */
  signalPsd: Float64Array;
  noisePsd: Float64Array;
  /** Segments averaged in each part. */
  signalSegments: number;
  noiseSegments: number;
  /** signalPsd/noisePsd per bin (dimensionless power ratio); NaN where the noise PSD is 0. */
  snr: Float64Array;
  /**
   * Frequency of the largest excess P_signal − P_noise among the counted bins (fmin ≤ f ≤ fmax,
   * outside excluded bands, ratio ≥ minSnr), Hz; null when no bin is counted.
   */
  peakFrequency: number | null;
  /** The ratio R at that bin. */
  peakSnr: number | null;
  /** Σ f·(P_signal − P_noise) ÷ Σ (P_signal − P_noise) over the counted bins, Hz; null when none. */
  centroid: number | null;
  /**
   * Over the bins inside `inBand` (and outside the excluded bands): Σ P_signal ÷ Σ P_noise, a power
   * ratio (null without such bins or with no noise there), and the share of those bins with R ≥ minSnr.
   */
  inBandSnr: number | null;
  inBandShare: number | null;
}

/**
 * Signal-to-noise spectral ratio: R_k = P_signal,k / P_noise,k, each a Welch PSD exactly as
 * `welchPsd` (= `scipy.signal.welch(part, fs, window='hann', nperseg=nperseg, noverlap=nperseg//2,
 * detrend='constant', scaling='density')`) of x[signalFrom, signalTo) and x[noiseFrom, noiseTo).
 * The counted bins are those with fminHz ≤ f ≤ fmaxHz, outside `excludeBands`, noise PSD > 0 and
 * R_k ≥ minSnr: where the triggered part clearly stands above the noise before it. Among them the
 * peak is the bin of the largest excess power P_signal,k − P_noise,k (the signal's own spectrum with
 * the noise removed) and the centroid is Σ f·excess ÷ Σ excess. Why the excess and not R itself:
 * background noise falls steeply with frequency (velocity PSD ∝ f⁻² where it is flat in
 * acceleration), so R alone peaks wherever the noise is lowest — far above a local event's energy —
 * while a stationary microseism or machinery line, present in both parts, has R ≈ 1 and is not
 * counted. A leaking 20 Hz burst has its excess at 20 Hz.
 * Units: fs and f in Hz; R dimensionless (units of x cancel, so does a flat gain); PSDs (units of x)²/Hz.
 * @throws RangeError when a part is shorter than nperseg or the indices lie outside x.
 */
export function snrSpectrum(
  x: Float64Array,
  sampleRateHz: number,
  plan: SignalSegmentPlan,
  fminHz: number,
  fmaxHz: number,
  excludeBands: ReadonlyArray<{ fmin: number; fmax: number }> = [],
  minSnr = 2,
  inBand: readonly [number, number] | null = null,
): SnrSpectrum {
  const { signalFrom, signalTo, noiseFrom, noiseTo, nperseg } = plan;
  const inside = (a: number, b: number): boolean => Number.isInteger(a) && Number.isInteger(b) && a >= 0 && b <= x.length && b - a >= nperseg;
  if (!inside(signalFrom, signalTo)) throw new RangeError(`SNR spectrum: signal part [${signalFrom}, ${signalTo}) must lie in the trace of ${x.length} samples and hold at least ${nperseg} samples`);
  if (!inside(noiseFrom, noiseTo)) throw new RangeError(`SNR spectrum: noise part [${noiseFrom}, ${noiseTo}) must lie in the trace of ${x.length} samples and hold at least ${nperseg} samples`);
  const sig = welchPsd(x.subarray(signalFrom, signalTo), sampleRateHz, nperseg);
  const noi = welchPsd(x.subarray(noiseFrom, noiseTo), sampleRateHz, nperseg);
  const bins = sig.freqs.length;
  const snr = new Float64Array(bins);
  for (let k = 0; k < bins; k++) {
    const nv = noi.values[k] as number;
    snr[k] = nv > 0 ? (sig.values[k] as number) / nv : NaN;
  }
  const { best, weightSum: w, weightedFreqSum: wf } = peakAndCentroid(sig.freqs, (k, f) => {
    const nv = noi.values[k] as number;
    const r = snr[k] as number;
    if (!(nv > 0) || f < fminHz || f > fmaxHz || !(r >= minSnr) || inBands(f, excludeBands)) return undefined;
    return (sig.values[k] as number) - nv;
  });
  let sSum = 0;
  let nSum = 0;
  let binsIn = 0;
  let binsUp = 0;
  if (inBand) {
    for (let k = 0; k < bins; k++) {
      const f = sig.freqs[k] as number;
      if (f < inBand[0] || f > inBand[1] || inBands(f, excludeBands)) continue;
      sSum += sig.values[k] as number;
      nSum += noi.values[k] as number;
      binsIn++;
      if ((snr[k] as number) >= minSnr) binsUp++;
    }
  }
  return {
    inBandSnr: binsIn > 0 && nSum > 0 ? sSum / nSum : null,
    inBandShare: binsIn > 0 ? binsUp / binsIn : null,
    freqs: sig.freqs,
    signalPsd: sig.values,
    noisePsd: noi.values,
    signalSegments: sig.segments,
    noiseSegments: noi.segments,
    snr,
    peakFrequency: best >= 0 ? (sig.freqs[best] as number) : null,
    peakSnr: best >= 0 ? (snr[best] as number) : null,
    centroid: w > 0 ? wf / w : null,
  };
}
