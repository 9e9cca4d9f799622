import type { DecodeNote, StreamDiscontinuity } from '../formats/types';
import { workArray } from './work-arrays';

/**
 * Data-quality checks of one channel, in words a technician understands.
 *
 * Gaps are reported, never filled: the decoders concatenate the records' samples as they came, so a
 * gapped stream would be analysed as if continuous (the spectrum and STA/LTA see the records joined)
 * and the gap finding says so. No sample is fabricated. Uploads never get here with a gap or a true
 * overlap: the ingest refuses such windows (server/formats/placement.ts); the command-line analysis
 * still accepts them with these findings.
 */

/** One quality finding. */
export interface QcFinding {
  /** Stable code for programs: gap, overlap, clipped, flat-top, flat-line, spikes, dc-offset, sample-rate, short-window, duplicate-record, duplicate-samples, empty-record. */
  code: QcCode;
  severity: 'info' | 'warning' | 'error';
  /** What was found, for a person. */
  message: string;
  /** First sample concerned, when it applies. */
  sampleIndex?: number;
  /** Time of that sample, s from the first sample. */
  time?: number;
  /** How many samples or events the finding covers, when it applies. */
  count?: number;
}

/** Finding codes. */
export type QcCode =
  | 'gap'
  | 'overlap'
  | 'clipped'
  | 'flat-top'
  | 'flat-line'
  | 'spikes'
  | 'dc-offset'
  | 'sample-rate'
  | 'short-window'
  | 'flat-segment'
  | 'dc-step'
  | DecodeNote['code'];

/** Parameters of the checks (the profile's `qc` part, plus the LTA length for the short-window check). */
export interface QcOptions {
  /** Digitiser full scale, counts: |x| ≥ this is clipped. */
  fullScaleCounts?: number | undefined;
  /** A flat top is ≥ this many consecutive equal samples at max|x| (default 3). */
  flatTopSamples: number;
  /** Spike rule factor k (default 20). */
  spikeK: number;
  /** Expected sample rate from the registry, Hz. */
  expectedSampleRateHz?: number | undefined;
  /** Samples needed before the trigger can give a ratio. */
  minSamples?: number;
  /** A run of identical samples at least this long is a flat segment (dropout, padding), s; default 0.5. */
  flatSegmentS?: number;
  /** What the decoder dropped or noticed while placing the samples (repeated records, empty records). */
  decodeNotes?: readonly DecodeNote[] | undefined;
}

const fmt = (v: number, digits = 3): string => Number(v.toPrecision(digits)).toString();

/**
 * Run every check on the raw samples (before pre-processing, so offsets and clipping are seen as
 * recorded):
 * - gap / overlap: one finding per discontinuity (warning), time of the first sample after it;
 * - clipped: runs with |x| ≥ full scale when `fullScaleCounts` is given (error);
 * - flat-top: otherwise, runs of ≥ `flatTopSamples` equal samples at ±max|x| (warning) — a likely clip;
 * - flat-line: all samples equal, or ≥ 99 % of consecutive differences zero (error: dead channel);
 * - spikes: |x_i − med5_i| > k·1.4826·MAD(x − med5), med5 the 5-sample running median (MAD from at
 *   most ~4096 evenly spaced residuals)
 *   (robust MAD rule; 1.4826 makes the MAD a consistent estimate of σ for normal noise, common practice;
 *   when the MAD is 0, as for quiet quantised data, σ = 1.2533 × the mean absolute residual;
 *   k = 20 by default so that the peaks of a real arrival are not called spikes), and the sample must
 *   stand alone (4× the residuals 2–10 samples away), so a strong high-frequency signal is not a spike;
 * - dc-offset: |mean| > 5 × the standard deviation (info), or > 10 % of full scale when given (warning);
 * - sample-rate: differs from the registry's by more than 0.1 % (error);
 * - short-window: fewer samples than the trigger needs (warning: no STA/LTA ratio);
 * - flat-segment: a run of identical samples of at least `flatSegmentS` (0.5 s) — a digitiser
 *   dropout, a run of zeros, padding (error: the samples there are not ground motion);
 * - dc-step: the level jumps and stays (1 s block medians: a change of more than 10 robust σ of the
 *   block-to-block changes between two 3 s stretches that are each steady within a third of the
 *   step; warning) — a mass re-centring, a calibration pulse, a digitiser fault, not an arrival.
 * - short-window: fewer samples than the LTA window (warning: no STA/LTA ratio);
 * - duplicate-record / duplicate-samples / empty-record: the decoder's notes (info): repeated
 *   samples it dropped so the rest sit at their times, data records that claim 0 samples.
 */
export function qualityChecks(
  samples: Float64Array,
  sampleRateHz: number,
  discontinuities: readonly StreamDiscontinuity[],
  opts: QcOptions,
): QcFinding[] {
  const out: QcFinding[] = [];
  const n = samples.length;
  const t = (i: number): number => i / sampleRateHz;
  for (const d of discontinuities) {
    const gap = d.durationS > 0;
    out.push({
      code: gap ? 'gap' : 'overlap',
      severity: 'warning',
      message: gap
        ? `gap of ${fmt(d.durationS)} s before sample ${d.sampleIndex} (${fmt(t(d.sampleIndex), 6)} s): the records are joined as given, nothing is filled in`
        : `overlap of ${fmt(-d.durationS)} s before sample ${d.sampleIndex} (${fmt(t(d.sampleIndex), 6)} s): the overlapping samples are kept as given`,
      sampleIndex: d.sampleIndex,
      time: t(d.sampleIndex),
    });
  }
  for (const note of opts.decodeNotes ?? []) {
    out.push({ code: note.code, severity: 'info', message: note.message, sampleIndex: note.sampleIndex, time: t(note.sampleIndex), count: note.count });
  }
  if (opts.expectedSampleRateHz !== undefined && Math.abs(sampleRateHz - opts.expectedSampleRateHz) > 1e-3 * opts.expectedSampleRateHz) {
    out.push({
      code: 'sample-rate',
      severity: 'error',
      message: `sample rate ${sampleRateHz} Hz differs from the ${opts.expectedSampleRateHz} Hz in the station registry`,
    });
  }
  if (n === 0) return out;
  if (opts.minSamples !== undefined && n < opts.minSamples) {
    out.push({
      code: 'short-window',
      severity: 'warning',
      message: `only ${n} samples (${fmt(t(n))} s): shorter than the ${fmt(t(opts.minSamples))} s LTA window, so no STA/LTA ratio`,
      count: n,
    });
  }
  // One pass gives max|x|, the sum, the equal neighbours and every run that a finding counts: runs of
  // identical samples (flat segments; flat tops are such runs at ±max|x|) and runs at full scale.
  const flatLen = Math.max(2, Math.round((opts.flatSegmentS ?? 0.5) * sampleRateHz));
  const topLen = opts.flatTopSamples;
  const fullScale = opts.fullScaleCounts ?? Infinity;
  const longRun = Math.min(flatLen, topLen);
  const flats = { count: 0, samples: 0, longest: 0, first: -1 };
  // Flat-top candidates: runs of ≥ topLen identical samples at the largest |value| seen in such a run
  // so far; they are flat tops when that value turns out to be max|x|.
  const tops = { abs: -1, count: 0, samples: 0, first: -1 };
  const clips = { count: 0, samples: 0, first: -1 };
  const closeRun = (start: number, len: number, v: number): void => {
    if (len >= flatLen) {
      flats.count++;
      flats.samples += len;
      if (len > flats.longest) flats.longest = len;
      if (flats.first < 0) flats.first = start;
    }
    if (len >= topLen) {
      const a = Math.abs(v);
      if (a > tops.abs) {
        tops.abs = a;
        tops.count = 0;
        tops.samples = 0;
        tops.first = start;
      }
      if (a === tops.abs) {
        tops.count++;
        tops.samples += len;
      }
    }
  };
  let maxAbs = 0;
  let sum = 0;
  let zeroDiffs = 0;
  let runStart = 0;
  let prev = samples[0] as number;
  let inClip = false;
  let whole = true;
  for (let i = 0; i < n; i++) {
    const v = samples[i] as number;
    if ((v | 0) !== v) whole = false;
    const a = Math.abs(v);
    if (a > maxAbs) maxAbs = a;
    sum += v;
    if (i > 0) {
      if (v === prev) zeroDiffs++;
      else {
        if (i - runStart >= longRun) closeRun(runStart, i - runStart, prev);
        runStart = i;
        prev = v;
      }
    }
    const clip = a >= fullScale;
    if (clip) {
      if (!inClip) {
        clips.count++;
        if (clips.first < 0) clips.first = i;
      }
      clips.samples++;
    }
    inClip = clip;
  }
  if (n - runStart >= longRun) closeRun(runStart, n - runStart, prev);
  const mean = sum / n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += ((samples[i] as number) - mean) ** 2;
  const std = Math.sqrt(ss / n);
  if (std === 0 || (n > 1 && zeroDiffs / (n - 1) >= 0.99)) {
    out.push({
      code: 'flat-line',
      severity: 'error',
      message:
        std === 0
          ? `every sample is ${fmt(mean, 6)}: the channel is flat (dead sensor, or digitiser not recording)`
          : `${fmt((100 * zeroDiffs) / (n - 1))} % of consecutive samples are equal: the channel is nearly flat (dead sensor?)`,
      count: zeroDiffs,
    });
    return out;
  }
  if (opts.fullScaleCounts !== undefined) {
    if (clips.count > 0) {
      out.push({
        code: 'clipped',
        severity: 'error',
        message: `${clips.samples} samples in ${clips.count} run(s) at the digitiser's full scale ±${opts.fullScaleCounts} counts: the signal is clipped, amplitudes there are wrong`,
        sampleIndex: clips.first,
        time: t(clips.first),
        count: clips.samples,
      });
    }
  } else if (tops.abs === maxAbs && tops.count > 0) {
    out.push({
      code: 'flat-top',
      severity: 'warning',
      message: `${tops.count} flat top(s) of ≥ ${opts.flatTopSamples} equal samples at the peak value ±${fmt(maxAbs, 6)}: the signal may be clipped`,
      sampleIndex: tops.first,
      time: t(tops.first),
      count: tops.samples,
    });
  }
  if (flats.count > 0) {
    const zero = samples[flats.first] === 0;
    out.push({
      code: 'flat-segment',
      severity: 'error',
      message: `${flats.count} stretch(es) of identical samples (the longest ${fmt(t(flats.longest))} s${zero ? ', reading 0' : ''}, first at ${fmt(t(flats.first), 6)} s): a dropout or padding, not ground motion`,
      sampleIndex: flats.first,
      time: t(flats.first),
      count: flats.samples,
    });
  }
  const step = dcStep(samples, Math.max(1, Math.round(sampleRateHz)));
  if (step !== null) {
    out.push({
      code: 'dc-step',
      severity: 'warning',
      message: `the level steps by ${fmt(step.size, 4)} and stays there at ${fmt(t(step.index), 4)} s: an instrument step (re-centring, calibration, digitiser fault), not an arrival`,
      sampleIndex: step.index,
      time: t(step.index),
    });
  }
  const sp = spikes(samples, opts.spikeK, Math.max(10, Math.round(0.25 * sampleRateHz)), whole && maxAbs < 2 ** 30);
  if (sp.count > 0) {
    out.push({
      code: 'spikes',
      severity: 'warning',
      message: `${sp.count} spike(s): single samples more than ${opts.spikeK} robust σ from their neighbours (first at ${fmt(t(sp.first), 6)} s)`,
      sampleIndex: sp.first,
      time: t(sp.first),
      count: sp.count,
    });
  }
  if (opts.fullScaleCounts !== undefined && Math.abs(mean) > 0.1 * opts.fullScaleCounts) {
    out.push({
      code: 'dc-offset',
      severity: 'warning',
      message: `mean of ${fmt(mean, 6)} counts is over 10 % of full scale: check the sensor's mass centring`,
    });
  } else if (Math.abs(mean) > 5 * std) {
    out.push({
      code: 'dc-offset',
      severity: 'info',
      message: `offset of ${fmt(mean, 6)} is ${fmt(Math.abs(mean) / std)} × the signal's standard deviation (removed before analysis)`,
    });
  }
  return out;
}

/**
 * A DC step: medians of consecutive blocks of `block` samples; σ = 1.4826·MAD of the block-to-block
 * differences (robust, common practice). At each block boundary, the levels of the 3 blocks before
 * and the 3 after (medians of the block medians) must differ by more than 10σ, with every block of
 * each side within a third of that difference of its side's level (both sides steady: an oscillating
 * arrival is not). Returns the first such step (sample index of the boundary, size in sample units) or null.
 */
function dcStep(x: Float64Array, block: number): { index: number; size: number } | null {
  const nb = Math.floor(x.length / block);
  if (nb < 6) return null;
  const med = new Float64Array(nb);
  const work = workArray('qc-block', block);
  for (let b = 0; b < nb; b++) {
    work.set(x.subarray(b * block, (b + 1) * block));
    med[b] = medianInPlace(work);
  }
  const diffs = new Float64Array(nb - 1);
  for (let b = 1; b < nb; b++) diffs[b - 1] = (med[b] as number) - (med[b - 1] as number);
  const sigma = 1.4826 * medianAbsoluteDeviation(diffs);
  if (!(sigma > 0)) return null;
  for (let b = 3; b <= nb - 3; b++) {
    const left = median3(med[b - 3] as number, med[b - 2] as number, med[b - 1] as number);
    const right = median3(med[b] as number, med[b + 1] as number, med[b + 2] as number);
    const size = right - left;
    if (!(Math.abs(size) > 10 * sigma)) continue;
    const tol = Math.abs(size) / 3;
    let steady = true;
    for (let k = b - 3; k < b; k++) if (Math.abs((med[k] as number) - left) > tol) steady = false;
    for (let k = b; k < b + 3; k++) if (Math.abs((med[k] as number) - right) > tol) steady = false;
    if (steady) return { index: b * block, size };
  }
  return null;
}

const min2 = (a: number, b: number): number => (a < b ? a : b);
const max2 = (a: number, b: number): number => (a > b ? a : b);

/** Median of three values (finite inputs). */
function median3(a: number, b: number, c: number): number {
  return max2(min2(a, b), min2(max2(a, b), c));
}

/**
 * Median of five values without sorting: med3(e, max(min(a,b), min(c,d)), min(max(a,b), max(c,d)))
 * (the smaller of the two pair-minima and the larger of the two pair-maxima can never be the median).
 */
function median5(a: number, b: number, c: number, d: number, e: number): number {
  return median3(e, max2(min2(a, b), min2(c, d)), min2(max2(a, b), max2(c, d)));
}

/**
 * `median5` for whole numbers whose differences are below 2³¹ in size (|values| < 2³⁰): the same value
 * without data-dependent branches (on noise every comparison of a running median is a coin toss for
 * the branch predictor). min(a, b) = b + (d & (d >> 31)) and max(a, b) = a − (d & (d >> 31)) with
 * d = ToInt32(a − b), exact for such numbers (two's complement sign mask).
 */
export function median5OfWholeNumbers(a: number, b: number, c: number, d: number, e: number): number {
  let t = (a - b) | 0;
  let m = t & (t >> 31);
  const minAB = b + m;
  const maxAB = a - m;
  t = (c - d) | 0;
  m = t & (t >> 31);
  const minCD = d + m;
  const maxCD = c - m;
  t = (minAB - minCD) | 0;
  const lower = minAB - (t & (t >> 31)); // max of the two minima
  t = (maxAB - maxCD) | 0;
  const upper = maxCD + (t & (t >> 31)); // min of the two maxima
  // median3(e, lower, upper) = max(min(e, lower), min(max(e, lower), upper))
  t = (e - lower) | 0;
  m = t & (t >> 31);
  const minEL = lower + m;
  const maxEL = e - m;
  t = (maxEL - upper) | 0;
  const mid = upper + (t & (t >> 31));
  t = (minEL - mid) | 0;
  return minEL - (t & (t >> 31));
}

/**
 * Spike count by the robust MAD rule on the residual r from a 5-sample running median: a sample is a
 * spike when |r_i| > k·1.4826·MAD(r) AND |r_i| > 4·max|r_j| over 2 ≤ |j − i| ≤ 10 (it stands alone:
 * a high-frequency signal, e.g. a tone near fs/4, also has large residuals, but its neighbours have
 * them too) and over up to `reach` samples (a quarter second: the sharp onset of a real S wave is
 * followed by oscillations of its own size, a glitch is not). Up to two adjacent outliers count as spikes.
 *
 * Only the residuals the rule reads are computed (the same numbers as computing them all):
 * - σ comes from at most ~4096 evenly spaced residuals (see below), computed at those samples only;
 * - |r_i| > L (L = k·σ ≥ 0) needs |x_i − x_{i−1}| > L or |x_i − x_{i+1}| > L: if x_i > med5_i + L, the
 *   three smallest of the five samples are ≤ med5_i and x_i is not one of them, so at least one of its
 *   two nearest neighbours is < x_i − L (mirrored below). That first-difference test skips nearly every
 *   sample; r_i is computed where it passes, and the residuals around an outlier as the rule needs them
 *   (each at most once, so the work stays O(n) however many outliers there are).
 */
function spikes(x: Float64Array, k: number, reach = 10, wholeCounts = false): { count: number; first: number } {
  const n = x.length;
  if (n < 5) return { count: 0, first: -1 };
  const resid = (i: number): number =>
    (x[i] as number) - median5(x[i - 2] as number, x[i - 1] as number, x[i] as number, x[i + 1] as number, x[i + 2] as number);
  // σ from the MAD of at most ~4096 residuals (every stride-th of r[2 … n−3]): at a 20σ threshold the
  // ≈2 % sampling error of the estimate is immaterial, and it keeps long windows fast.
  const inner = n - 4;
  const stride = Math.max(1, Math.ceil(inner / 4096));
  const sample = new Float64Array(Math.ceil(inner / stride));
  if (wholeCounts) {
    for (let m = 0; m < sample.length; m++) {
      const i = 2 + m * stride;
      sample[m] = (x[i] as number) - median5OfWholeNumbers(x[i - 2] as number, x[i - 1] as number, x[i] as number, x[i + 1] as number, x[i + 2] as number);
    }
  } else for (let m = 0; m < sample.length; m++) sample[m] = resid(2 + m * stride);
  let sigma = 1.4826 * medianAbsoluteDeviation(sample);
  if (!(sigma > 0)) {
    // Quantised quiet data can have MAD 0 (most residuals exactly 0): fall back to the mean absolute
    // residual scaled for normal consistency (√(π/2) ≈ 1.2533, common practice).
    let sum = 0;
    for (let i = 0; i < sample.length; i++) sum += Math.abs(sample[i] as number);
    sigma = (1.2533 * sum) / sample.length;
  }
  if (!(sigma > 0)) return { count: 0, first: -1 };
  const lim = k * sigma;
  // |r| over [2, n − 3], filled lazily: `lo … hi` is the stretch computed last (empty: hi < lo).
  const absR = workArray('qc-residual', n);
  let lo = 0;
  let hi = -1;
  const fill = (from: number, to: number): void => {
    if (from > hi + 1 || to < lo) {
      for (let j = from; j <= to; j++) absR[j] = Math.abs(resid(j));
      lo = from;
      hi = to;
      return;
    }
    for (let j = from; j < lo; j++) absR[j] = Math.abs(resid(j));
    for (let j = hi + 1; j <= to; j++) absR[j] = Math.abs(resid(j));
    if (from < lo) lo = from;
    if (to > hi) hi = to;
  };
  let count = 0;
  let first = -1;
  let prev = x[1] as number;
  let cur = x[2] as number;
  for (let i = 2; i < n - 2; i++) {
    const next = x[i + 1] as number;
    const jumps = Math.abs(cur - prev) > lim || Math.abs(cur - next) > lim;
    prev = cur;
    cur = next;
    if (!jumps) continue;
    const a = Math.abs(resid(i));
    if (a <= lim) continue;
    const from = Math.max(2, i - reach);
    const to = Math.min(n - 3, i + reach);
    fill(from, to);
    let around = 0;
    for (let j = from; j <= to; j++) {
      if (Math.abs(j - i) >= 2) around = Math.max(around, absR[j] as number);
    }
    if (a > 4 * around) {
      count++;
      if (first < 0) first = i;
    }
  }
  return { count, first };
}

/**
 * Median absolute deviation, unscaled: median(|r − median(r)|), by selection (O(n)); `r` is not
 * modified. Even lengths average the two middle values. NaN for an empty input.
 */
export function medianAbsoluteDeviation(r: Float64Array): number {
  const work = r.slice();
  const med = medianInPlace(work);
  for (let i = 0; i < r.length; i++) work[i] = Math.abs((r[i] as number) - med);
  return medianInPlace(work);
}

/**
 * Median of `a` (reordered in place): the k-th smallest by Hoare's selection, averaged for even n.
 * Digitiser counts, and the residuals and differences QC takes of them, are whole numbers: for those
 * `medianOfWholeNumbersInPlace` gives the same value faster (about 2.4× on the DC-step block medians of
 * the 1-hour benchmark window, where these medians were most of QC's time); one pass decides.
 */
function medianInPlace(a: Float64Array): number {
  const n = a.length;
  if (n === 0) return NaN;
  let whole = true;
  let least = a[0] as number;
  let most = least;
  for (let i = 0; i < n; i++) {
    const v = a[i] as number;
    if ((v | 0) !== v) whole = false;
    if (v < least) least = v;
    else if (v > most) most = v;
  }
  if (whole && most - least <= 0x7fffffff) return medianOfWholeNumbersInPlace(a);
  const hi = select(a, n >> 1);
  if (n % 2) return hi;
  // For even n the lower middle is the largest element left of position n/2 after selection.
  let lo = -Infinity;
  for (let i = 0; i < n >> 1; i++) if ((a[i] as number) > lo) lo = a[i] as number;
  return (lo + hi) / 2;
}

/**
 * `medianInPlace` for whole numbers in int32 range whose spread (max − min) is below 2³¹: the same
 * value, by a quickselect whose partition has no data-dependent branch. Partitioning around a value
 * near the median makes every comparison a coin toss for the processor's branch predictor; here the
 * comparison becomes arithmetic instead: for such numbers v − p is exact and ToInt32(v − p) >>> 31 is
 * 1 exactly when v < p (ECMAScript ToInt32; two's complement sign bit). `a` is reordered; NaN when empty.
 */
export function medianOfWholeNumbersInPlace(a: Float64Array): number {
  const n = a.length;
  if (n === 0) return NaN;
  const k = n >> 1;
  let left = 0;
  let right = n - 1;
  let kth = NaN;
  while (kth !== kth) {
    if (right <= left) {
      kth = a[k] as number;
      break;
    }
    const p = median3(a[left] as number, a[(left + right) >> 1] as number, a[right] as number);
    // Lomuto partition without branches: every v < p ends in [left, i).
    let i = left;
    for (let j = left; j <= right; j++) {
      const v = a[j] as number;
      a[j] = a[i] as number;
      a[i] = v;
      i += (v - p) >>> 31;
    }
    if (k < i) right = i - 1;
    else if (i > left) left = i;
    else {
      // Nothing was below p, so p is the least value of [left, right]: gather the values equal to it
      // (many equal samples, e.g. quiet quantised data, would otherwise take one pass per value).
      let e = i;
      for (let j = i; j <= right; j++) {
        const v = a[j] as number;
        a[j] = a[e] as number;
        a[e] = v;
        const d = (v - p) | 0;
        e += 1 - ((d | -d) >>> 31);
      }
      if (k < e) kth = p;
      else left = e;
    }
  }
  if (n % 2) return kth;
  // The k smallest values are now left of position k (as after `select`).
  let lower = -Infinity;
  for (let i = 0; i < k; i++) if ((a[i] as number) > lower) lower = a[i] as number;
  return (lower + kth) / 2;
}

/** k-th smallest (0-based) of `a`, partially reordering it (Hoare's quickselect, median-of-3 pivot). */
function select(a: Float64Array, k: number): number {
  let left = 0;
  let right = a.length - 1;
  while (right > left) {
    const mid = (left + right) >> 1;
    const pivot = median3(a[left] as number, a[mid] as number, a[right] as number);
    let i = left;
    let j = right;
    while (i <= j) {
      while ((a[i] as number) < pivot) i++;
      while ((a[j] as number) > pivot) j--;
      if (i <= j) {
        const t = a[i] as number;
        a[i] = a[j] as number;
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else return a[k] as number;
  }
  return a[k] as number;
}
