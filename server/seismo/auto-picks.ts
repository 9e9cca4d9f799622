/**
 * Automatic P and S picks for one station's window: suggestions an analyst confirms, never analysts'
 * picks. P on the vertical from the station's own STA/LTA trigger chain (server/dsp/trigger.ts),
 * refined by the AIC picker (Maeda 1985; common practice); S on the horizontals by AIC between the P
 * and the largest horizontal motion after it. Each pick carries an uncertainty from the spread of the
 * AIC's Akaike weights (dsp/aic-picker.ts `aicOnsetSpread`), an onset class and, for P, a first-motion
 * polarity when it is clear of the noise.
 *
 * Units: sample rates Hz, times µs since the epoch (the decoded streams' scale), durations s.
 */
import { aicOnsetSpread } from '@server/dsp/aic-picker';
import { highBandForRate } from '@server/dsp/bands';
import { butterworthSos, type Sos } from '@server/dsp/butterworth';
import { sosfiltInto } from '@server/dsp/sosfilt';
import { triggerChain } from '@server/dsp/trigger';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';

/** One channel of a station's window. */
export interface PickerChannel {
  /** Stream id NET.STA.LOC.CHA. */
  id: string;
  /** Channel code (its last letter is the orientation: Z vertical; N, E, 1, 2 horizontal). */
  channel: string;
  sampleRateHz: number;
  /** Time of the first sample, µs since the epoch. */
  startTimeUs: number;
  samples: Float64Array;
}

/** Onset class of a pick (QuakeML 1.2 PickOnset). */
export type PickOnset = 'impulsive' | 'emergent' | 'questionable';
/** First-motion polarity (QuakeML 1.2 PickPolarity). */
export type PickPolarity = 'positive' | 'negative' | 'undecidable';

/** An automatic pick. */
export interface AutomaticPick {
  streamId: string;
  phase: 'P' | 'S';
  /** Onset time, µs since the epoch. */
  timeUs: number;
  /** One standard deviation of the onset time, s. */
  uncertaintyS: number;
  onset: PickOnset;
  polarity: PickPolarity;
  evaluationMode: 'automatic';
  /** How the pick was made, in words. */
  method: string;
}

/** Settings of the picker (our own defaults, common practice orders of magnitude). */
export interface PickerOptions {
  /** Longest S − P time searched, s (default 30: about 250 km at Vp/Vs 1.73 in crust). */
  maxSMinusPS?: number;
  /** Shortest S − P accepted, s (default 0.4). */
  minSMinusPS?: number;
  /**
   * Floor of the P uncertainty, s (default the larger of 2 samples and 0.05 s: the Akaike weights
   * measure only how sharp the onset is, not how far the filtered onset may lie from the true one).
   */
  minPUncertaintyS?: number;
  /** Floor of the S uncertainty, s (default 0.1: an S onset sits in the P coda). */
  minSUncertaintyS?: number;
  /** Largest uncertainty a pick may have before it is dropped, s (default 1). */
  maxUncertaintyS?: number;
  /** An S pick needs its RMS over 1 s after the onset to exceed the 1 s before by this factor (default 1.5). */
  minSRatio?: number;
  /**
   * Only triggers whose trigger-on lies within `windowS` of this time (µs since the epoch) are
   * considered: the other stations' P times, when they already point at the event.
   */
  near?: { timeUs: number; windowS: number };
}

const isVertical = (code: string): boolean => /Z$/u.test(code);
const isHorizontal = (code: string): boolean => /[NE12]$/u.test(code);

const sosCache = new Map<string, Sos>();
function design(order: number, edges: [number, number], type: 'bandpass' | 'bandstop', fs: number): Sos {
  const key = `${order}/${edges[0]}/${edges[1]}/${type}/${fs}`;
  let sos = sosCache.get(key);
  if (!sos) {
    sos = butterworthSos(order, edges, type, fs);
    sosCache.set(key, sos);
  }
  return sos;
}

/** Onset class from the 1-σ uncertainty: ≤ 0.05 s impulsive, ≤ 0.2 s emergent, else questionable (our own thresholds). */
export function onsetClass(uncertaintyS: number): PickOnset {
  if (uncertaintyS <= 0.05) return 'impulsive';
  if (uncertaintyS <= 0.2) return 'emergent';
  return 'questionable';
}

function rms(x: Float64Array, from: number, to: number): number {
  const a = Math.max(0, from);
  const b = Math.min(x.length, to);
  if (b <= a) return 0;
  let s = 0;
  for (let i = a; i < b; i++) s += (x[i] as number) ** 2;
  return Math.sqrt(s / (b - a));
}

/**
 * First motion at the onset on the detrended trace: the first extremum within 0.25 s after the onset
 * whose excursion from the onset sample exceeds 3 × the noise RMS of the second before; its sign, or
 * `undecidable` when none clears the noise (common practice: read polarity only on clear onsets).
 */
function firstMotion(x: Float64Array, onset: number, fs: number): PickPolarity {
  const noise = rms(x, onset - Math.round(fs), onset);
  const base = x[onset] as number;
  const end = Math.min(x.length, onset + Math.max(3, Math.round(0.25 * fs)));
  for (let i = onset + 1; i < end - 1; i++) {
    const d = (x[i] as number) - base;
    const next = (x[i + 1] as number) - base;
    if (Math.abs(next) < Math.abs(d) && Math.abs(d) > 3 * noise) return d > 0 ? 'positive' : 'negative';
  }
  return 'undecidable';
}

/**
 * Automatic picks of one station: at most one P (on the vertical) and one S (on the horizontal whose
 * AIC onset is the sharper).
 * P: the trigger chain of the vertical (detrend, ramp, band-reject, causal high band, STA/LTA with the
 * profile's settings); of its triggers the strongest (highest STA/LTA peak), or the earliest trigger
 * up to `maxSMinusPS` before it with at least 0.3 of its peak when there is one (so an S that
 * triggers louder than its P does not become the P); its onset by AIC over
 * [on − onsetSearchS, on + onsetAfterS] of the causal high band, then refined by AIC on the unfiltered
 * trace over [that − 0.3 s, that + 0.1 s] (the causal filter's group delay removed).
 * S: on each horizontal, the causal high band of its own trigger chain; the largest 0.2 s RMS after
 * P + minSMinusPS and before P + maxSMinusPS marks the S wave; AIC over [P + minSMinusPS/2, that
 * peak + 0.2 s], refined on the unfiltered trace as for P; kept when the RMS
 * over 1 s after the onset is `minSRatio` × the RMS of the second before.
 * Uncertainty: σ of the Akaike weights (aicOnsetSpread), floored as the options say; a pick above
 * `maxUncertaintyS` is dropped. Without a vertical or without a trigger there is no pick.
 * Pure: the samples are not modified.
 */
export function automaticPicks(channels: readonly PickerChannel[], profile: Pick<ProcessingProfile, 'staLta' | 'bandReject' | 'bands'>, options: PickerOptions = {}): AutomaticPick[] {
  const picks: AutomaticPick[] = [];
  const z = channels.find((c) => isVertical(c.channel));
  if (!z || z.samples.length < 10) return picks;
  const fs = z.sampleRateHz;
  const maxSp = options.maxSMinusPS ?? 30;
  const maxSigma = options.maxUncertaintyS ?? 1;
  let band;
  try {
    band = highBandForRate(profile.bands.high, fs).band;
  } catch {
    return picks;
  }
  const highSos = design(profile.bands.order, [band.fmin, band.fmax], 'bandpass', fs);
  const chain = triggerChain(z.samples, fs, profile, highSos, design);
  const near = options.near;
  const triggers = near ? chain.triggers.filter((t) => Math.abs(z.startTimeUs + (t.onIndex * 1e6) / fs - near.timeUs) <= near.windowS * 1e6) : chain.triggers;
  if (triggers.length === 0) return picks;
  const strongest = triggers.reduce((a, b) => (b.peak > a.peak ? b : a));
  const lead = triggers.find((t) => t.onIndex < strongest.onIndex && t.onIndex >= strongest.onIndex - maxSp * fs && t.peak >= 0.3 * strongest.peak) ?? strongest;
  const sl = profile.staLta;
  const from = Math.max(chain.startIndex, lead.onIndex - Math.round(sl.onsetSearchS * fs));
  const to = Math.min(z.samples.length, lead.onIndex + Math.round(sl.onsetAfterS * fs) + 1);
  // Two stages: the AIC of the causal high band finds the onset clear of the noise; the causal
  // filter delays it by its group delay (tens of ms at 2–10 Hz), so a second AIC on the unfiltered
  // (detrended, band-rejected) trace over [that − 0.3 s, that + 0.1 s] moves it back to where the
  // ground motion starts (the short window keeps the low-frequency noise from mattering).
  const coarse = aicOnsetSpread(chain.highY, from, to);
  const c = coarse ? Math.min(coarse.index, lead.onIndex) : lead.onIndex;
  const fine = aicOnsetSpread(chain.base, Math.max(chain.startIndex, c - Math.round(0.3 * fs)), Math.min(z.samples.length, c + Math.round(0.1 * fs) + 1), Math.max(3, Math.round(0.05 * fs)));
  const pIndex = fine && fine.index <= c ? fine.index : c;
  const spread = fine && fine.index <= c ? fine.sigmaSamples : coarse ? coarse.sigmaSamples : Infinity;
  const pSigma = Math.max(spread / fs, options.minPUncertaintyS ?? Math.max(2 / fs, 0.05));
  if (pSigma > maxSigma) return picks;
  picks.push({
    streamId: z.id,
    phase: 'P',
    timeUs: z.startTimeUs + Math.round((pIndex * 1e6) / fs),
    uncertaintyS: pSigma,
    onset: onsetClass(pSigma),
    polarity: firstMotion(chain.base, pIndex, fs),
    evaluationMode: 'automatic',
    method: `STA/LTA trigger at ${(lead.onIndex / fs).toFixed(2)} s, AIC onset (Maeda 1985) on the ${band.fmin}–${band.fmax} Hz band; σ from Akaike weights`,
  });
  const s = sPickAfter(channels, picks[0]?.timeUs ?? 0, profile, options);
  if (s) picks.push(s);
  return picks;
}

/**
 * The S of a station whose P is known, sought only inside a predicted span [fromUs, toUs] (µs since
 * the epoch; e.g. from the origin time the other stations' S − P times give, event-chain.ts): on each
 * horizontal, as {@link automaticPicks} reads an S, with the largest horizontal motion and the AIC
 * onset taken inside the span only, so a later traffic burst or surface wave cannot take the pick.
 * Null when nothing there clears the onset test. Pure.
 */
export function automaticSPickInWindow(channels: readonly PickerChannel[], pTimeUs: number, profile: Pick<ProcessingProfile, 'staLta' | 'bandReject' | 'bands'>, window: { fromUs: number; toUs: number }, options: PickerOptions = {}): AutomaticPick | null {
  if (!(window.toUs >= window.fromUs) || window.toUs <= pTimeUs) return null;
  return sPickAfter(channels, pTimeUs, profile, options, window);
}

/** The S after a known P (µs since the epoch) as {@link automaticPicks} reads it; null without one. Pure. */
export function automaticSPick(channels: readonly PickerChannel[], pTimeUs: number, profile: Pick<ProcessingProfile, 'staLta' | 'bandReject' | 'bands'>, options: PickerOptions = {}): AutomaticPick | null {
  return sPickAfter(channels, pTimeUs, profile, options);
}

/** Highest band edge the window picker reads, Hz (our own choice: above it local P energy is mostly attenuated away). */
export const WIDE_BAND_MAX_HZ = 40;

/** What {@link automaticPicksInWindow} found. */
export interface WindowPicks {
  /** The P and, when found, the S after it. */
  picks: AutomaticPick[];
  /** The band the P was read on, Hz. */
  band: { fmin: number; fmax: number };
  /** RMS over 0.5 s after the P onset ÷ RMS over the second before, on that band. */
  snr: number;
  /** The same ratio at `incumbentUs` on that band (null without one). */
  incumbentSnr: number | null;
}

/**
 * RMS over [i, i + 0.5 s) ÷ RMS over [i − 1 s, i) of `y` (the onset's signal-to-noise ratio, common
 * practice pick-quality measure); 0 when either span is empty.
 */
function onsetSnr(y: Float64Array, i: number, fs: number): number {
  const noise = rms(y, i - Math.round(fs), i);
  const signal = rms(y, i, i + Math.round(0.5 * fs));
  return noise > 0 ? signal / noise : 0;
}

/**
 * A station's P sought only inside a predicted span [fromUs, toUs] (µs since the epoch; e.g. from the
 * other stations' P times, event-chain.ts `predictedPWindow`), without needing an STA/LTA trigger
 * there: a traffic or wind trigger outside the span, louder than the event, cannot take the pick, and
 * an onset too weak to trigger on its own can still be read.
 * The vertical's trigger chain gives the pre-processed trace (detrend, ramp, band-reject); it is read
 * on up to three causal Butterworth bands of the profile's order: the profile's high band (fmin–fmax),
 * the wide band fmin–F and the upper band fmax–F, F = min({@link WIDE_BAND_MAX_HZ}, 0.45·fs) (the
 * latter two only when F ≥ 1.5·fmax): short-range and blast P energy often lies above 10 Hz, and noise
 * from traffic below it (common practice: pick on the band where the onset stands out). On each band,
 * the AIC (Maeda 1985) over [from − 1 s, to + 0.5 s]; an onset outside [from, to] is not taken. On the
 * profile's band the onset is then refined on the unfiltered trace as {@link automaticPicks} does; on
 * the others it stays on the band (their causal group delay is a few hundredths of a second, under the
 * 0.05 s floor of σ). Of the bands whose onset stands out at least `minSnr` times above the noise
 * before it ({@link onsetSnr}; default 2, our own), the sharpest onset (smallest σ of the Akaike
 * weights: the best-defined change, and the smallest uncertainty to report). σ from the Akaike weights, floored and capped as for automaticPicks; then the
 * S after it as automaticPicks reads it (unless `withS` is false). `incumbentUs` (an earlier P of the station) gets its SNR on
 * the chosen band too, for the caller to compare.
 * Null when nothing in the span clears `minSnr`, or there is no vertical or usable band.
 * Pure: the samples are not modified.
 */
export function automaticPicksInWindow(
  channels: readonly PickerChannel[],
  profile: Pick<ProcessingProfile, 'staLta' | 'bandReject' | 'bands'>,
  window: { fromUs: number; toUs: number },
  options: PickerOptions & { minSnr?: number; incumbentUs?: number; withS?: boolean } = {},
): WindowPicks | null {
  const z = channels.find((c) => isVertical(c.channel));
  if (!z || z.samples.length < 10 || !(window.toUs >= window.fromUs)) return null;
  const fs = z.sampleRateHz;
  const n = z.samples.length;
  let band;
  try {
    band = highBandForRate(profile.bands.high, fs).band;
  } catch {
    return null;
  }
  const chain = triggerChain(z.samples, fs, profile, design(profile.bands.order, [band.fmin, band.fmax], 'bandpass', fs), design);
  const lo = Math.max(chain.startIndex, Math.floor(((window.fromUs - z.startTimeUs) * fs) / 1e6));
  const hi = Math.min(n - 1, Math.ceil(((window.toUs - z.startTimeUs) * fs) / 1e6));
  if (hi < lo) return null;
  const top = Math.min(WIDE_BAND_MAX_HZ, 0.45 * fs);
  const bands: [number, number][] = [[band.fmin, band.fmax]];
  if (top >= 1.5 * band.fmax) bands.push([band.fmin, top], [band.fmax, top]);
  const from = Math.max(chain.startIndex, lo - Math.round(fs));
  const to = Math.min(n, hi + Math.round(0.5 * fs) + 1);
  const minSnr = options.minSnr ?? 2;
  let best: { index: number; sigmaSamples: number; sharpness: number; snr: number; y: Float64Array; edges: [number, number] } | null = null;
  for (const edges of bands) {
    const y = edges === bands[0] ? chain.highY : sosfiltInto(design(profile.bands.order, edges, 'bandpass', fs), chain.base, new Float64Array(n));
    const coarse = aicOnsetSpread(y, from, to);
    if (!coarse || coarse.index < lo || coarse.index > hi) continue;
    let onset = coarse;
    if (edges === bands[0]) {
      const fine = aicOnsetSpread(chain.base, Math.max(chain.startIndex, coarse.index - Math.round(0.3 * fs)), Math.min(n, coarse.index + Math.round(0.1 * fs) + 1), Math.max(3, Math.round(0.05 * fs)));
      if (fine && fine.index <= coarse.index && fine.index >= lo) onset = fine;
    }
    const snr = onsetSnr(y, onset.index, fs);
    if (snr < minSnr) continue;
    // Bands compared by the spread of their own AIC over the same span (the refinement's short span is not comparable).
    if (!best || coarse.sigmaSamples < best.sharpness) best = { index: onset.index, sigmaSamples: onset.sigmaSamples, sharpness: coarse.sigmaSamples, snr, y, edges };
  }
  if (!best) return null;
  const sigma = Math.max(best.sigmaSamples / fs, options.minPUncertaintyS ?? Math.max(2 / fs, 0.05));
  if (sigma > (options.maxUncertaintyS ?? 1)) return null;
  const edgeText = (x: number): string => (Number.isInteger(x) ? String(x) : x.toFixed(1));
  const p: AutomaticPick = {
    streamId: z.id,
    phase: 'P',
    timeUs: z.startTimeUs + Math.round((best.index * 1e6) / fs),
    uncertaintyS: sigma,
    onset: onsetClass(sigma),
    polarity: firstMotion(chain.base, best.index, fs),
    evaluationMode: 'automatic',
    method: `AIC onset (Maeda 1985) on the ${edgeText(best.edges[0])}–${edgeText(best.edges[1])} Hz band inside the span the other stations' P times allow; onset ${best.snr.toFixed(1)}× the RMS before; σ from Akaike weights`,
  };
  const picks = [p];
  const s = options.withS === false ? null : sPickAfter(channels, p.timeUs, profile, options);
  if (s) picks.push(s);
  const inc = options.incumbentUs;
  const incIndex = inc === undefined ? null : Math.round(((inc - z.startTimeUs) * fs) / 1e6);
  const incumbentSnr = incIndex === null || incIndex < 0 || incIndex >= n ? null : onsetSnr(best.y, incIndex, fs);
  return { picks, band: { fmin: best.edges[0], fmax: best.edges[1] }, snr: best.snr, incumbentSnr };
}

/**
 * The S pick of a station after its P (`pTimeUs`, µs since the epoch): on each horizontal, the causal
 * high band of its own trigger chain; the largest 0.2 s RMS after P + minSMinusPS and before
 * P + maxSMinusPS marks the S wave; AIC over [P + minSMinusPS/2, that peak + 0.2 s], refined on the
 * unfiltered trace; kept when the RMS over 1 s after the onset is `minSRatio` × the RMS of the
 * second before; of the horizontals, the sharper onset. With `span` (µs since the epoch), the S is
 * sought only there: the largest 0.2 s RMS in [span start, span end + 0.5 s], the AIC from 0.5 s
 * before the span (never before the P), and an onset outside the span is not taken. Null without one.
 */
function sPickAfter(channels: readonly PickerChannel[], pTimeUs: number, profile: Pick<ProcessingProfile, 'staLta' | 'bandReject' | 'bands'>, options: PickerOptions, span?: { fromUs: number; toUs: number }): AutomaticPick | null {
  const maxSp = options.maxSMinusPS ?? 30;
  const minSp = options.minSMinusPS ?? 0.4;
  const maxSigma = options.maxUncertaintyS ?? 1;
  let bestS: AutomaticPick | null = null;
  for (const h of channels.filter((c) => isHorizontal(c.channel))) {
    const hfs = h.sampleRateHz;
    if (h.samples.length < 10) continue;
    let hBand;
    try {
      hBand = highBandForRate(profile.bands.high, hfs).band;
    } catch {
      continue;
    }
    // The horizontal's own chain gives the same pre-processing as the vertical's.
    const hChain = triggerChain(h.samples, hfs, profile, design(profile.bands.order, [hBand.fmin, hBand.fmax], 'bandpass', hfs), design);
    const y = hChain.highY;
    const pIdx = Math.round(((pTimeUs - h.startTimeUs) * hfs) / 1e6);
    const spanFrom = span ? Math.max(pIdx + 1, Math.floor(((span.fromUs - h.startTimeUs) * hfs) / 1e6)) : 0;
    const spanTo = span ? Math.min(y.length - 1, Math.ceil(((span.toUs - h.startTimeUs) * hfs) / 1e6)) : 0;
    if (span && (spanTo < spanFrom || spanFrom < 0)) continue;
    const searchFrom = span ? spanFrom : pIdx + Math.round(minSp * hfs);
    const searchTo = span ? Math.min(y.length, spanTo + Math.round(0.5 * hfs)) : Math.min(y.length, pIdx + Math.round(maxSp * hfs));
    if (searchFrom < 0 || (!span && searchTo - searchFrom < Math.round(0.5 * hfs))) continue;
    // Largest 0.2 s RMS: the S wave's arrival lies before it.
    const win = Math.max(1, Math.round(0.2 * hfs));
    let acc = 0;
    for (let i = searchFrom; i < Math.min(searchTo, searchFrom + win); i++) acc += (y[i] as number) ** 2;
    let peakAcc = acc;
    let peakAt = searchFrom;
    for (let i = searchFrom + win; i < searchTo; i++) {
      acc += (y[i] as number) ** 2 - (y[i - win] as number) ** 2;
      if (acc > peakAcc) {
        peakAcc = acc;
        peakAt = i;
      }
    }
    const aFrom = span ? Math.max(pIdx + 1, spanFrom - Math.round(0.5 * hfs)) : Math.max(0, pIdx + Math.round((minSp / 2) * hfs));
    const aTo = Math.min(y.length, peakAt + win);
    const coarse = aicOnsetSpread(y, aFrom, aTo);
    if (!coarse) continue;
    // As for P: the causal band's onset, moved back by a short AIC on the unfiltered trace.
    const fine = aicOnsetSpread(hChain.base, Math.max(0, coarse.index - Math.round(0.3 * hfs)), Math.min(y.length, coarse.index + Math.round(0.1 * hfs) + 1), Math.max(3, Math.round(0.05 * hfs)));
    const s = fine && fine.index <= coarse.index ? fine : coarse;
    if (s.index < searchFrom || (span && s.index > spanTo)) continue;
    const ratio = rms(y, s.index, s.index + Math.round(hfs)) / Math.max(rms(y, s.index - Math.round(hfs), s.index), Number.MIN_VALUE);
    if (!(ratio >= (options.minSRatio ?? 1.5))) continue;
    const sigma = Math.max(s.sigmaSamples / hfs, options.minSUncertaintyS ?? 0.1);
    if (sigma > maxSigma) continue;
    const cand: AutomaticPick = {
      streamId: h.id,
      phase: 'S',
      timeUs: h.startTimeUs + Math.round((s.index * 1e6) / hfs),
      uncertaintyS: sigma,
      onset: onsetClass(sigma),
      polarity: 'undecidable',
      evaluationMode: 'automatic',
      method: `AIC onset (Maeda 1985) on the ${hBand.fmin}–${hBand.fmax} Hz band ${span ? "inside the span the other stations' picks predict for the S" : 'between the P and the largest horizontal motion'}; σ from Akaike weights; onset ${ratio.toFixed(1)}× the RMS before`,
    };
    if (!bestS || cand.uncertaintyS < bestS.uncertaintyS) bestS = cand;
  }
  return bestS;
}
