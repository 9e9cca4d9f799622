import type { DecodedStream } from '@server/formats/types';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import type { AnalysisResult } from '@server/dsp/pipeline';
import { matchBank, type BankMatch, type BankTemplate, type PreparedCache } from '@server/dsp/template-bank';
import { cutTemplate, defaultTemplateSettings, matchingTraces, type TemplateSettings } from '@server/dsp/templates';
import type { NewTemplate } from './template-store';

/** What matching found for one window (computed in an analysis worker). */
export interface MatchingOutcome {
  /** Time of sample 0 of the matching traces (lags count from it), µs since the epoch. */
  startTimeUs: number;
  sampleRateHz: number;
  band: { fmin: number; fmax: number };
  /** The window's own template (null without a detection, or too close to the window's end). */
  template: NewTemplate | null;
  /** Best first. */
  matches: BankMatch[];
}

/**
 * After `analyzeWindow`: the window's matching traces (the engine's band-passed chain), its template
 * cut around the detection's onset, and its best matches against `bank`. Null when the channels
 * cannot be matched (a refused band, too short); the analysis stands either way. Pure apart from
 * filling `cache`.
 */
export function matchWindow(
  streams: readonly DecodedStream[],
  profile: ProcessingProfile,
  analysis: AnalysisResult,
  bank: readonly BankTemplate[],
  opts: { topK: number; minValue: number; cache?: PreparedCache; template?: TemplateSettings },
): MatchingOutcome | null {
  let traces;
  try {
    traces = matchingTraces(streams.map((s) => ({ id: s.id, sampleRateHz: s.sampleRateHz, startTimeUs: s.startTimeUs, samples: s.samples })), profile);
  } catch {
    return null;
  }
  let template: NewTemplate | null = null;
  const det = analysis.detection;
  const channel = det ? streams.find((s) => s.id === det.channel) : undefined;
  if (det && channel) {
    const onsetUs = channel.startTimeUs + Math.round(det.onset * 1e6);
    const cut = cutTemplate(traces, (onsetUs - traces.startTimeUs) / 1e6, opts.template ?? defaultTemplateSettings);
    if (cut) template = { ids: cut.ids, sampleRateHz: cut.sampleRateHz, startTimeUs: cut.startTimeUs, onsetUs: cut.onsetUs, samples: cut.samples.map((s) => Float32Array.from(s)), band: traces.band };
  }
  const matches = bank.length > 0 ? matchBank(traces, bank, { fminHz: traces.band.fmin, fmaxHz: traces.band.fmax, topK: opts.topK, minValue: opts.minValue, ...(opts.cache ? { cache: opts.cache } : {}) }) : [];
  return { startTimeUs: traces.startTimeUs, sampleRateHz: traces.sampleRateHz, band: traces.band, template, matches };
}
