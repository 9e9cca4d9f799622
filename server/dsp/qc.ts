import type { StreamDiscontinuity } from '../formats/types';

/**
 * Data-quality checks of one channel, in words a technician understands.
 *
 * Gaps are reported, never filled: the decoders concatenate the records' samples as they came, so a
 * gapped stream is analysed as if continuous (the spectrum and STA/LTA see the records joined) and
 * the gap finding says so. No sample is fabricated.
 */

/** One quality finding. */
export interface QcFinding {
  /** Stable code for programs: gap, overlap, clipped, flat-top, flat-line, spikes, dc-offset, sample-rate, short-window. */
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
  | 'short-window';

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
  /** Samples needed for a full STA/LTA (the LTA window). */
  minSamples?: number;
}

const fmt = (v: number, digits = 3): string => Number(v.toPrecision(digits)).toString();

/**
 * Run every check on the raw samples (before pre-processing, so offsets and clipping are seen as
 * recorded):
 * - gap / overlap: one finding per discontinuity (warning), time of the first sample after it;
 * - clipped: runs with |x| ≥ full scale when `fullScaleCounts` is given (error);
 * - flat-top: otherwise, runs of ≥ `flatTopSamples` equal samples at ±max|x| (warning) — a likely clip;
 * - flat-line: all samples equal, or ≥ 99 % of consecutive differences zero (error: dead channel);
 * - spikes: |x_i − med5_i| > k·1.4826·MAD(x − med5), med5 the 5-sample running median
 *   (robust MAD rule; 1.4826 makes the MAD a consistent estimate of σ for normal noise, common practice;
 *   k = 20 by default so that the peaks of a real arrival are not called spikes), and the sample must
 *   stand alone (4× the residuals 2–10 samples away), so a strong high-frequency signal is not a spike;
 * - dc-offset: |mean| > 5 × the standard deviation (info), or > 10 % of full scale when given (warning);
 * - sample-rate: differs from the registry's by more than 0.1 % (error);
 * - short-window: fewer samples than the LTA window (warning: no STA/LTA ratio).
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
  let maxAbs = 0;
  let sum = 0;
  let zeroDiffs = 0;
  for (let i = 0; i < n; i++) {
    const v = samples[i] as number;
    const a = Math.abs(v);
    if (a > maxAbs) maxAbs = a;
    sum += v;
    if (i > 0 && v === samples[i - 1]) zeroDiffs++;
  }
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
    const runs = runsWhere(samples, (v) => Math.abs(v) >= (opts.fullScaleCounts as number), 1);
    if (runs.count > 0) {
      out.push({
        code: 'clipped',
        severity: 'error',
        message: `${runs.samples} samples in ${runs.count} run(s) at the digitiser's full scale ±${opts.fullScaleCounts} counts: the signal is clipped, amplitudes there are wrong`,
        sampleIndex: runs.first,
        time: t(runs.first),
        count: runs.samples,
      });
    }
  } else {
    const top = maxAbs;
    const runs = runsWhere(samples, (v) => Math.abs(v) === top, opts.flatTopSamples, true);
    if (runs.count > 0) {
      out.push({
        code: 'flat-top',
        severity: 'warning',
        message: `${runs.count} flat top(s) of ≥ ${opts.flatTopSamples} equal samples at the peak value ±${fmt(top, 6)}: the signal may be clipped`,
        sampleIndex: runs.first,
        time: t(runs.first),
        count: runs.samples,
      });
    }
  }
  const sp = spikes(samples, opts.spikeK);
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

/** Runs of ≥ minLen consecutive samples satisfying `pred` (and equal to each other when `equal`). */
function runsWhere(
  x: Float64Array,
  pred: (v: number) => boolean,
  minLen: number,
  equal = false,
): { count: number; samples: number; first: number } {
  let count = 0;
  let total = 0;
  let first = -1;
  let i = 0;
  while (i < x.length) {
    const v = x[i] as number;
    if (!pred(v)) {
      i++;
      continue;
    }
    let j = i + 1;
    while (j < x.length && pred(x[j] as number) && (!equal || x[j] === v)) j++;
    if (j - i >= minLen) {
      count++;
      total += j - i;
      if (first < 0) first = i;
    }
    i = j;
  }
  return { count, samples: total, first };
}

const m5 = new Float64Array(5);
/** Median of five values (insertion sort in a scratch array: no allocation per sample). */
function median5(a: number, b: number, c: number, d: number, e: number): number {
  m5[0] = a;
  m5[1] = b;
  m5[2] = c;
  m5[3] = d;
  m5[4] = e;
  for (let i = 1; i < 5; i++) {
    const v = m5[i] as number;
    let j = i - 1;
    while (j >= 0 && (m5[j] as number) > v) {
      m5[j + 1] = m5[j] as number;
      j--;
    }
    m5[j + 1] = v;
  }
  return m5[2] as number;
}

/**
 * Spike count by the robust MAD rule on the residual r from a 5-sample running median: a sample is a
 * spike when |r_i| > k·1.4826·MAD(r) AND |r_i| > 4·max|r_j| over 2 ≤ |j − i| ≤ 10 (it stands alone:
 * a high-frequency signal, e.g. a tone near fs/4, also has large residuals, but its neighbours have
 * them too). Up to two adjacent outliers count as spikes.
 */
function spikes(x: Float64Array, k: number): { count: number; first: number } {
  const n = x.length;
  if (n < 5) return { count: 0, first: -1 };
  const r = new Float64Array(n);
  for (let i = 2; i < n - 2; i++) {
    r[i] = (x[i] as number) - median5(x[i - 2] as number, x[i - 1] as number, x[i] as number, x[i + 1] as number, x[i + 2] as number);
  }
  const mad = medianAbs(r.subarray(2, n - 2));
  if (!(mad > 0)) return { count: 0, first: -1 };
  const lim = k * 1.4826 * mad;
  let count = 0;
  let first = -1;
  for (let i = 2; i < n - 2; i++) {
    const a = Math.abs(r[i] as number);
    if (a <= lim) continue;
    let around = 0;
    for (let j = Math.max(2, i - 10); j <= Math.min(n - 3, i + 10); j++) {
      if (Math.abs(j - i) >= 2) around = Math.max(around, Math.abs(r[j] as number));
    }
    if (a > 4 * around) {
      count++;
      if (first < 0) first = i;
    }
  }
  return { count, first };
}

/** Median of |r − median(r)| (the MAD, unscaled). */
function medianAbs(r: Float64Array): number {
  const s = Float64Array.from(r).sort();
  const med = medianSorted(s);
  const d = new Float64Array(s.length);
  for (let i = 0; i < s.length; i++) d[i] = Math.abs((s[i] as number) - med);
  d.sort();
  return medianSorted(d);
}

function medianSorted(s: Float64Array): number {
  const n = s.length;
  if (n === 0) return NaN;
  return n % 2 ? (s[(n - 1) / 2] as number) : ((s[n / 2 - 1] as number) + (s[n / 2] as number)) / 2;
}
