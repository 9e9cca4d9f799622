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
