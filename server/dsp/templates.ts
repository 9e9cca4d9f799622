import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import { highBandForRate, validateBand } from './bands';
import { butterworthSos, type Sos } from './butterworth';
import { detrendLinear } from './preprocess';
import { sosfiltInPlace, sosfiltInto } from './sosfilt';

/**
 * Waveform templates: the short band-passed stretch of a window around its arrival that later windows
 * of the same station are correlated with (template-bank.ts). Pure; samples are Float64Array.
 */

/** How templates are cut (times in s). */
export interface TemplateSettings {
  /** Start this long before the detection's onset (the P arrival), s. */
  preS: number;
  /**
   * Length, s: from just before P to a few seconds after S for local events (S − P ≈ 1 s per 8 km,
   * so 10 s holds S and its coda out to ~50 km; common practice for template matching of local
   * seismicity). A window that ends sooner gives a shorter template, down to `minLengthS`.
   */
  lengthS: number;
  /** Shortest template kept, s (below it the window holds too little after the onset). */
  minLengthS: number;
}

/** The defaults: 1 s before the onset, 10 s long, at least 4 s. */
export const defaultTemplateSettings: TemplateSettings = { preS: 1, lengthS: 10, minLengthS: 4 };

/** One channel of a window as the matcher takes it. */
export interface MatchChannelInput {
  /** FDSN stream id NET.STA.LOC.CHA. */
  id: string;
  sampleRateHz: number;
  /** First sample, µs since the epoch (UTC). */
  startTimeUs: number;
  samples: Float64Array;
}

/** A window's channels band-passed for matching, on one time base. */
export interface MatchingTraces {
  ids: string[];
  sampleRateHz: number;
  /** Time of sample 0 of every trace, µs since the epoch. */
  startTimeUs: number;
  /** The band the traces were filtered to, Hz. */
  band: { fmin: number; fmax: number };
  traces: Float64Array[];
}

const designs = new Map<string, Sos>();
function design(order: number, edges: [number, number], type: 'bandpass' | 'bandstop', fs: number): Sos {
  const key = `${order}|${edges[0]}|${edges[1]}|${type}|${fs}`;
  let sos = designs.get(key);
  if (!sos) {
    sos = butterworthSos(order, edges, type, fs);
    if (designs.size >= 64) designs.clear();
    designs.set(key, sos);
  }
  return sos;
}

/**
 * The trace a template is cut from and matched against, per channel — the engine's trigger chain
 * (server/dsp/trigger.ts, steps 1–2): least-squares linear detrend, a cosine ramp 0 → 1 over
 * `staLta.startS` (so the causal filters start without a step), the profile's band-reject filters,
 * then the profile's high band (Butterworth, order `bands.order`, causal from zero state, as
 * `scipy.signal.sosfilt`), fitted to the rate as the pipeline fits it (`highBandForRate`).
 * Channels are put on one time base: those at the first channel's rate are kept, cut to the span
 * they all cover (start = the latest start, rounded to whole samples). Units: those of the samples.
 * @throws RangeError when no channel is given or the channels share no span of 16 samples;
 *   BandError for a refused band.
 */
export function matchingTraces(channels: readonly MatchChannelInput[], profile: Pick<ProcessingProfile, 'bands' | 'bandReject' | 'staLta'>): MatchingTraces {
  const first = channels[0];
  if (!first) throw new RangeError('matching: the window has no channels');
  const fs = first.sampleRateHz;
  const same = channels.filter((c) => c.sampleRateHz === fs);
  const startUs = Math.max(...same.map((c) => c.startTimeUs));
  const offsets = same.map((c) => Math.round(((startUs - c.startTimeUs) / 1e6) * fs));
  const n = Math.min(...same.map((c, i) => c.samples.length - (offsets[i] as number)));
  if (!(n >= 16)) throw new RangeError(`matching: the channels share only ${Math.max(0, n)} samples`);
  const fitted = highBandForRate(profile.bands.high, fs);
  const high = validateBand('high', fitted.band, fs, profile.bands.nyquistPolicy);
  const highSos = design(profile.bands.order, [high.fmin, high.fmax], 'bandpass', fs);
  const ramp = Math.min(n, Math.round(profile.staLta.startS * fs));
  const traces = same.map((c, i) => {
    const off = offsets[i] as number;
    const x = detrendLinear(c.samples.subarray(off, off + n));
    for (let j = 0; j < ramp; j++) x[j] = (x[j] as number) * 0.5 * (1 - Math.cos((Math.PI * j) / ramp));
    for (const br of profile.bandReject) if (br.fmax < fs / 2) sosfiltInPlace(design(br.order, [br.fmin, br.fmax], 'bandstop', fs), x);
    return sosfiltInto(highSos, x, new Float64Array(n));
  });
  return { ids: same.map((c) => c.id), sampleRateHz: fs, startTimeUs: startUs, band: { fmin: high.fmin, fmax: high.fmax }, traces };
}

/** A template cut from a window: unit joint energy over its channels. */
export interface CutTemplate {
  ids: string[];
  sampleRateHz: number;
  /** Time of the template's first sample, µs since the epoch. */
  startTimeUs: number;
  /** The onset it was cut around, µs since the epoch. */
  onsetUs: number;
  /** Σ_c Σ_i w_c[i]² = 1. */
  samples: Float64Array[];
  /** The joint norm the cut was divided by (units of the traces): how loud the window was. */
  norm: number;
}

/**
 * Cuts the template of a window: [onset − preS, onset − preS + lengthS) of every matching trace
 * (the start clipped to the window's first sample, the end to its last), divided by the joint norm
 * sqrt(Σ_c Σ_i w_c[i]²) so every template has unit energy (the normalised correlation does not
 * depend on the scale; stored templates then compare and display alike). `onsetS` is s from the
 * traces' sample 0. Returns null when fewer than `minLengthS` remain or the cut has no energy.
 */
export function cutTemplate(m: MatchingTraces, onsetS: number, settings: TemplateSettings = defaultTemplateSettings): CutTemplate | null {
  const fs = m.sampleRateHz;
  const n = m.traces[0]?.length ?? 0;
  const from = Math.max(0, Math.round((onsetS - settings.preS) * fs));
  const to = Math.min(n, from + Math.round(settings.lengthS * fs));
  if (to - from < Math.round(settings.minLengthS * fs) || to <= from) return null;
  let energy = 0;
  for (const t of m.traces) for (let i = from; i < to; i++) energy += (t[i] as number) * (t[i] as number);
  if (!(energy > 0)) return null;
  const norm = Math.sqrt(energy);
  const samples = m.traces.map((t) => {
    const w = t.slice(from, to);
    for (let i = 0; i < w.length; i++) w[i] = (w[i] as number) / norm;
    return w;
  });
  return {
    ids: [...m.ids],
    sampleRateHz: fs,
    startTimeUs: m.startTimeUs + Math.round((from / fs) * 1e6),
    onsetUs: m.startTimeUs + Math.round(onsetS * 1e6),
    samples,
    norm,
  };
}
