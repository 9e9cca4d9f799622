/**
 * STA/LTA characteristic functions and trigger detection on a (high-band) trace.
 */

/**
 * Classic STA/LTA exactly as the brief defines it (common practice, after Allen 1978):
 * with squares s_i = y_i², STA_i = mean(s_{i−nsta+1} … s_i) and LTA_i = mean(s_{i−nlta+1} … s_i)
 * (both windows end at sample i, inclusive); ratio_i = STA_i / LTA_i, and 0 for i < nlta − 1 (LTA
 * window not yet full) or when LTA_i = 0. nsta = round(staS·fs), nlta = round(ltaS·fs).
 * O(n) with running sums, re-summed exactly when a sum falls below 10⁻⁴ of its recent peak (quiet after
 * a huge burst, where cancellation would cost precision) and every 65 536 samples.
 * Units: y any; output dimensionless. @throws RangeError when nsta < 1 or nsta ≥ nlta.
 */
export function classicStaLta(y: Float64Array, sampleRateHz: number, staS: number, ltaS: number): Float64Array {
  const nsta = Math.round(staS * sampleRateHz);
  const nlta = Math.round(ltaS * sampleRateHz);
  checkWindows(nsta, nlta);
  const n = y.length;
  const out = new Float64Array(n);
  if (n < nlta) return out;
  let ssta = 0;
  let slta = 0;
  for (let i = 0; i < nlta; i++) {
    const v = (y[i] as number) ** 2;
    slta += v;
    if (i >= nlta - nsta) ssta += v;
  }
  const ratio = (a: number, b: number): number => (b > 0 ? (a / nsta) / (b / nlta) : 0);
  const sumSquares = (from: number, to: number): number => {
    let acc = 0;
    for (let j = from; j <= to; j++) acc += (y[j] as number) ** 2;
    return acc;
  };
  out[nlta - 1] = ratio(ssta, slta);
  // A running sum that falls far below its recent peak (quiet after a huge burst) has lost relative
  // precision to cancellation: re-sum that window exactly then (rare), and every 65 536 samples anyway.
  let peakSta = ssta;
  let peakLta = slta;
  for (let i = nlta; i < n; i++) {
    const v = (y[i] as number) ** 2;
    ssta += v - (y[i - nsta] as number) ** 2;
    slta += v - (y[i - nlta] as number) ** 2;
    const periodic = (i & 0xffff) === 0;
    if (periodic || ssta < 1e-4 * peakSta) {
      ssta = sumSquares(i - nsta + 1, i);
      peakSta = ssta;
    } else if (ssta > peakSta) peakSta = ssta;
    if (periodic || slta < 1e-4 * peakLta) {
      slta = sumSquares(i - nlta + 1, i);
      peakLta = slta;
    } else if (slta > peakLta) peakLta = slta;
    out[i] = ratio(ssta, slta);
  }
  return out;
}

/**
 * Recursive STA/LTA (Withers et al. 1998, BSSA 88(1), the recursive form):
 * STA_i = c_s·y_i² + (1 − c_s)·STA_{i−1}, LTA_i = c_l·y_i² + (1 − c_l)·LTA_{i−1},
 * c_s = 1/nsta, c_l = 1/nlta, from STA_{−1} = LTA_{−1} = 0; ratio_i = STA_i/LTA_i, set to 0 for
 * i < nlta − 1 (the LTA has not settled) as the classic form. Units: dimensionless.
 * @throws RangeError when nsta < 1 or nsta ≥ nlta.
 */
export function recursiveStaLta(y: Float64Array, sampleRateHz: number, staS: number, ltaS: number): Float64Array {
  const nsta = Math.round(staS * sampleRateHz);
  const nlta = Math.round(ltaS * sampleRateHz);
  checkWindows(nsta, nlta);
  const cs = 1 / nsta;
  const cl = 1 / nlta;
  let sta = 0;
  let lta = 0;
  const out = new Float64Array(y.length);
  for (let i = 0; i < y.length; i++) {
    const v = (y[i] as number) ** 2;
    sta = cs * v + (1 - cs) * sta;
    lta = cl * v + (1 - cl) * lta;
    out[i] = i >= nlta - 1 && lta > 0 ? sta / lta : 0;
  }
  return out;
}

function checkWindows(nsta: number, nlta: number): void {
  if (nsta < 1) throw new RangeError(`STA window is shorter than one sample (${nsta} samples)`);
  if (nsta >= nlta) throw new RangeError(`STA window (${nsta} samples) must be shorter than the LTA window (${nlta} samples)`);
}

/** One trigger: on and off times in s from the first sample; off is null when still on at the end. */
export interface Trigger {
  on: number;
  off: number | null;
  /** Sample indices of on and off (off null when still on). */
  onIndex: number;
  offIndex: number | null;
}

/**
 * Trigger detection with hysteresis (common practice): a trigger turns on at the first sample whose
 * ratio exceeds `on` (strictly), and off at the first later sample whose ratio falls below `off`
 * (strictly). Times are index/fs, s from the first sample.
 * @throws RangeError when off ≥ on.
 */
export function detectTriggers(ratio: Float64Array, sampleRateHz: number, on: number, off: number): Trigger[] {
  if (!(off < on)) throw new RangeError(`trigger-off level ${off} must be below the trigger-on level ${on}`);
  const out: Trigger[] = [];
  let onIndex = -1;
  for (let i = 0; i < ratio.length; i++) {
    const r = ratio[i] as number;
    if (onIndex < 0) {
      if (r > on) onIndex = i;
    } else if (r < off) {
      out.push({ on: onIndex / sampleRateHz, off: i / sampleRateHz, onIndex, offIndex: i });
      onIndex = -1;
    }
  }
  if (onIndex >= 0) out.push({ on: onIndex / sampleRateHz, off: null, onIndex, offIndex: null });
  return out;
}

/** Peak of a characteristic function and its time. */
export function peakOf(ratio: Float64Array, sampleRateHz: number): { peak: number; peakTime: number; peakIndex: number } {
  let best = 0;
  let idx = 0;
  for (let i = 0; i < ratio.length; i++) {
    const r = ratio[i] as number;
    if (r > best) {
      best = r;
      idx = i;
    }
  }
  return { peak: best, peakTime: idx / sampleRateHz, peakIndex: idx };
}

/**
 * Signal-to-noise ratio around the first trigger (our definition, documented here):
 * SNR = RMS(y over [on, on + signalS·fs)) ÷ RMS(y over [on − noiseS·fs, on)), both windows clipped to
 * the trace; an amplitude ratio (dimensionless; 20·log10 for dB). Null when there is no trigger, the
 * noise window is empty, or the noise RMS is 0.
 */
export function snrAroundTrigger(
  y: Float64Array,
  sampleRateHz: number,
  onIndex: number | null,
  signalS: number,
  noiseS: number,
): number | null {
  if (onIndex === null || onIndex <= 0) return null;
  const sEnd = Math.min(y.length, onIndex + Math.max(1, Math.round(signalS * sampleRateHz)));
  const nStart = Math.max(0, onIndex - Math.max(1, Math.round(noiseS * sampleRateHz)));
  const rms = (a: number, b: number): number => {
    let s = 0;
    for (let i = a; i < b; i++) s += (y[i] as number) ** 2;
    return Math.sqrt(s / (b - a));
  };
  const noise = rms(nStart, onIndex);
  if (!(noise > 0)) return null;
  return rms(onIndex, sEnd) / noise;
}

/** Where the trigger's characteristic function may start reading a window (see `delayedStaLta`). */
export interface DelayedStaLtaOptions {
  /** Samples before this index are not read (the start ramp and the filter's settling), samples. */
  startIndex: number;
  /** The LTA must hold at least this many samples before a ratio is given, samples (≥ 1). */
  minLtaSamples: number;
  /** Where to write the ratio (length of y; every element is written); default a new array. */
  out?: Float64Array;
}

/**
 * STA/LTA with the long-term window BEFORE the short-term window, starting from what the window holds.
 *
 * With squares s_i = y_i² and a = `startIndex`:
 *   STA_i = mean(s over [max(a, i − nsta + 1), i]),
 *   LTA_i = mean(s over [max(a, i − nsta − nlta + 1), i − nsta]),
 *   ratio_i = STA_i / LTA_i once the LTA holds ≥ `minLtaSamples` samples (and LTA_i > 0), else 0.
 * Two departures from the classic form (Allen 1978; the brief's table), both chosen so that a
 * window's first seconds are usable and P is found wherever it falls:
 * 1. The LTA ends where the STA begins (a "delayed" or non-overlapping LTA; Trnkoczy 2012, IASPEI
 *    NMSOP-2 IS 8.1, describes both arrangements — from memory). With the windows overlapping, the
 *    ratio can never exceed nlta/nsta however strong the onset (30 at 1 s / 30 s, 1 while the LTA
 *    has only the STA's samples); apart, it grows with the onset's energy.
 * 2. Until nlta samples have passed since `startIndex`, the LTA is the mean of all samples it has
 *    (an expanding mean), instead of 0 for want of a full window: a P 4 s into a window triggers.
 * `method: 'recursive'` uses the exponential forms of Withers et al. (1998, BSSA 88(1)) on the same
 * arrangement: STA_i = c_s·s_i + (1 − c_s)·STA_{i−1}, LTA_i = c_l·s_{i−nsta} + (1 − c_l)·LTA_{i−1},
 * with c = 1/min(k, N) where k counts the samples taken so far (the expanding start).
 * O(n) with running sums (re-summed exactly when a sum falls below 10⁻⁴ of its recent peak, and every
 * 65 536 samples). Units: y any; output dimensionless; nsta = round(staS·fs), nlta = round(ltaS·fs).
 * @throws RangeError when nsta < 1, nsta ≥ nlta, startIndex < 0 or minLtaSamples < 1.
 */
export function delayedStaLta(
  y: Float64Array,
  sampleRateHz: number,
  staS: number,
  ltaS: number,
  method: 'classic' | 'recursive',
  opts: DelayedStaLtaOptions,
): Float64Array {
  const nsta = Math.round(staS * sampleRateHz);
  const nlta = Math.round(ltaS * sampleRateHz);
  checkWindows(nsta, nlta);
  const a = opts.startIndex;
  const minLta = opts.minLtaSamples;
  if (!(Number.isInteger(a) && a >= 0)) throw new RangeError(`startIndex ${a} must be a whole number ≥ 0`);
  if (!(Number.isInteger(minLta) && minLta >= 1)) throw new RangeError(`minLtaSamples ${minLta} must be a whole number ≥ 1`);
  const n = y.length;
  if (opts.out !== undefined && opts.out.length !== n) throw new RangeError(`delayedStaLta: output of ${opts.out.length} samples for ${n} samples`);
  const out = opts.out ?? new Float64Array(n);
  if (opts.out !== undefined) out.fill(0, 0, Math.min(a, n));
  const sq = (j: number): number => (y[j] as number) * (y[j] as number);
  if (method === 'recursive') {
    let sta = 0;
    let lta = 0;
    let kSta = 0;
    let kLta = 0;
    for (let i = a; i < n; i++) {
      kSta = Math.min(kSta + 1, nsta);
      sta += (sq(i) - sta) / kSta;
      const j = i - nsta;
      if (j >= a) {
        kLta = Math.min(kLta + 1, nlta);
        lta += (sq(j) - lta) / kLta;
      }
      const ltaCount = Math.max(0, Math.min(j - a + 1, nlta));
      out[i] = ltaCount >= minLta && lta > 0 ? sta / lta : 0;
    }
    return out;
  }
  const sumSquares = (from: number, to: number): number => {
    let acc = 0;
    for (let j = from; j <= to; j++) acc += sq(j);
    return acc;
  };
  let ssta = 0;
  let slta = 0;
  let peakSta = 0;
  let peakLta = 0;
  // From `steady` on, both windows are full and inside [a, n): the second loop below is this one with
  // the bounds and counts as constants (same arithmetic in the same order, so the same numbers).
  const steady = Math.max(a, Math.min(n, a + nsta + nlta));
  for (let i = a; i < steady; i++) {
    // STA over [max(a, i − nsta + 1), i]; LTA over [max(a, i − nsta − nlta + 1), i − nsta].
    ssta += sq(i);
    const leaveSta = i - nsta;
    if (leaveSta >= a) {
      ssta -= sq(leaveSta);
      slta += sq(leaveSta);
      const leaveLta = leaveSta - nlta;
      if (leaveLta >= a) slta -= sq(leaveLta);
    }
    const staFrom = Math.max(a, i - nsta + 1);
    const ltaTo = i - nsta;
    const ltaFrom = Math.max(a, ltaTo - nlta + 1);
    const periodic = ((i - a) & 0xffff) === 0xffff;
    if (periodic || ssta < 1e-4 * peakSta) {
      ssta = sumSquares(staFrom, i);
      peakSta = ssta;
    } else if (ssta > peakSta) peakSta = ssta;
    if (ltaTo >= ltaFrom) {
      if (periodic || slta < 1e-4 * peakLta) {
        slta = sumSquares(ltaFrom, ltaTo);
        peakLta = slta;
      } else if (slta > peakLta) peakLta = slta;
    }
    const staCount = i - staFrom + 1;
    const ltaCount = ltaTo - ltaFrom + 1;
    out[i] = ltaCount >= minLta && slta > 0 ? ssta / staCount / (slta / ltaCount) : 0;
  }
  const ltaFull = nlta >= minLta;
  for (let i = steady; i < n; i++) {
    const v = y[i] as number;
    ssta += v * v;
    const vs = y[i - nsta] as number;
    const leaving = vs * vs;
    ssta -= leaving;
    slta += leaving;
    const vl = y[i - nsta - nlta] as number;
    slta -= vl * vl;
    const periodic = ((i - a) & 0xffff) === 0xffff;
    if (periodic || ssta < 1e-4 * peakSta) {
      ssta = sumSquares(i - nsta + 1, i);
      peakSta = ssta;
    } else if (ssta > peakSta) peakSta = ssta;
    if (periodic || slta < 1e-4 * peakLta) {
      slta = sumSquares(i - nsta - nlta + 1, i - nsta);
      peakLta = slta;
    } else if (slta > peakLta) peakLta = slta;
    out[i] = ltaFull && slta > 0 ? ssta / nsta / (slta / nlta) : 0;
  }
  return out;
}
