import { z } from 'zod';
import { storedLabelSchema } from '../../shared/schemas/label';
import type { ProcessingProfile } from '../../shared/schemas/processing-profile';
import type { Evaluation, ThresholdValues } from '../../shared/schemas/supervisor';
import { scoreWindow, type ChannelFeatures, type StationBaseline } from '../dsp/score';

/**
 * Thresholds from labelled history (pure part).
 *
 * Ground truth of a station's labelled items:
 * - positive (a real source): labelled with an event label whose QuakeML type is not `not existing`;
 * - negative: dismissed as noise, or labelled `not existing`, or rejected by a supervisor
 *   (evaluation status `rejected`);
 * - escalated items without a label, and items back in the queue, take no part.
 * Prediction: the flagging rule predicts an event when it gives `likely event`; `needs eyes` and
 * `likely noise` count as predicted negatives (the flag a supervisor tunes is the one that says
 * "event"). TP = event flagged likely event, FP = noise flagged likely event, FN = event not flagged,
 * TN = noise not flagged. precision = TP/(TP+FP), recall = TP/(TP+FN), each null when its
 * denominator is 0.
 *
 * Replaying the rule under other thresholds: each window's evidence is fixed when it is scored —
 * the robust z of its log10 band ratio and of its STA/LTA peak against the baseline of that time
 * (stored in the analysis as `zLog10Ratio`, `zStaLtaPeak`), plus its triggers, dominant frequency,
 * centroid and QC. The thresholds only compare that evidence with eventZ, noiseZ and
 * centroidMaxFactor, so the flag under other thresholds is `scoreWindow` (server/dsp/score.ts, the
 * one rule) run on the stored lead channel with the stored z values in place of the raw features and
 * an identity baseline (median 0, MAD 1/1.4826, so that 1.4826·MAD is exactly 1 and z = x exactly).
 * `minBaselineWindows` changes which baseline a window is scored against and cannot be replayed
 * this way; it is not among the tuned values.
 */

/** Ground truth of one labelled item. */
export type Truth = 'event' | 'noise';

/** What the rule needs to flag one labelled item again. */
export interface LabelledEvidence {
  itemId: number;
  truth: Truth;
  /** The lead channel's features as stored in the analysis. */
  lead: ChannelFeatures;
  zLog10Ratio: number | null;
  zStaLtaPeak: number;
  /** The flag shown when the item was created (or last re-scored). */
  shownFlag: string;
}

const IDENTITY_MAD = 1 / 1.4826;
const identityBaseline: StationBaseline = {
  log10Ratio: { median: 0, mad: IDENTITY_MAD },
  staLtaPeak: { median: 0, mad: IDENTITY_MAD },
  count: Number.MAX_SAFE_INTEGER,
};

/**
 * The ground truth of an item from its state, stored label and review status (see the module comment).
 * @returns 'event', 'noise' or null (takes no part)
 */
export function truthOf(state: string, label: unknown, evaluationStatus: string | null): Truth | null {
  if (!['labelled', 'dismissed', 'confirmed'].includes(state)) return null;
  const parsed = storedLabelSchema.safeParse(label);
  if (!parsed.success) return null;
  if (evaluationStatus === 'rejected') return 'noise';
  if (parsed.data.kind === 'noise') return 'noise';
  if (parsed.data.kind === 'event') return parsed.data.eventType === 'not existing' ? 'noise' : 'event';
  return null;
}

/**
 * The flag the rule gives `e` under `thresholds` (see the module comment for the replay).
 * @param staLta the station's STA/LTA settings (only its wording enters the reasons)
 */
export function flagUnder(e: LabelledEvidence, thresholds: ThresholdValues, staLta: ProcessingProfile['staLta'], minBaselineWindows = 1): string {
  const channel: ChannelFeatures = {
    ...e.lead,
    log10Ratio: e.zLog10Ratio,
    ratio: e.zLog10Ratio === null ? null : (e.lead.ratio ?? 1),
    staLta: { ...e.lead.staLta, peak: e.zStaLtaPeak },
  };
  return scoreWindow([channel], identityBaseline, { thresholds: { ...thresholds, minBaselineWindows }, staLta }).flag;
}

/** Precision and recall from counts (null for 0/0). */
export function rates(tp: number, fp: number, fn: number, tn: number): Evaluation {
  return { tp, fp, fn, tn, precision: tp + fp === 0 ? null : tp / (tp + fp), recall: tp + fn === 0 ? null : tp / (tp + fn) };
}

/** Confusion counts of predicted flags against the truth (predicted positive = `likely event`). */
export function confusion(rows: ReadonlyArray<{ truth: Truth; flag: string }>): Evaluation {
  let tp = 0;
  let fp = 0;
  let fn = 0;
  let tn = 0;
  for (const r of rows) {
    const predicted = r.flag === 'likely event';
    if (r.truth === 'event') {
      if (predicted) tp++;
      else fn++;
    } else if (predicted) fp++;
    else tn++;
  }
  return rates(tp, fp, fn, tn);
}

/** Confusion counts of the rule under `thresholds` over `evidence`. */
export function evaluateThresholds(evidence: readonly LabelledEvidence[], thresholds: ThresholdValues, staLta: ProcessingProfile['staLta']): Evaluation {
  return confusion(evidence.map((e) => ({ truth: e.truth, flag: flagUnder(e, thresholds, staLta) })));
}

/** One point of the precision–recall curve. */
export interface CurvePoint extends Evaluation {
  eventZ: number;
}

/**
 * The precision–recall curve over eventZ from `fromZ` to `toZ` in `steps` equal steps (inclusive),
 * other thresholds held (noiseZ lowered to eventZ where it would exceed it).
 * @throws RangeError for fromZ ≥ toZ or steps outside 1…500
 */
export function precisionRecallCurve(
  evidence: readonly LabelledEvidence[],
  base: ThresholdValues,
  staLta: ProcessingProfile['staLta'],
  range: { fromZ: number; toZ: number; steps: number } = { fromZ: 0, toZ: 10, steps: 40 },
): CurvePoint[] {
  if (!(range.fromZ < range.toZ)) throw new RangeError('the curve needs fromZ < toZ');
  if (!Number.isInteger(range.steps) || range.steps < 1 || range.steps > 500) throw new RangeError('the curve needs 1…500 steps');
  const out: CurvePoint[] = [];
  for (let k = 0; k <= range.steps; k++) {
    const eventZ = Math.round((range.fromZ + ((range.toZ - range.fromZ) * k) / range.steps) * 1e9) / 1e9;
    const th = { ...base, eventZ, noiseZ: Math.min(base.noiseZ, eventZ) };
    out.push({ eventZ, ...evaluateThresholds(evidence, th, staLta) });
  }
  return out;
}

const channelSchema = z.object({
  id: z.string(),
  log10Ratio: z.number().nullable(),
  ratio: z.number().nullable(),
  staLta: z.object({ peak: z.number(), peakTime: z.number(), triggers: z.array(z.object({ on: z.number(), off: z.number().nullable() })) }),
  dominantFrequency: z.number().nullable(),
  spectralCentroid: z.number().nullable(),
  bands: z.object({ high: z.object({ fmin: z.number(), fmax: z.number() }) }),
  qc: z.array(z.object({ severity: z.enum(['info', 'warning', 'error']), message: z.string(), code: z.string() })),
});

/** The parts of a stored analysis (the engine's output contract) the score reads. */
export const storedScoreInputSchema = z.object({
  leadChannel: z.string(),
  zLog10Ratio: z.number().nullable(),
  zStaLtaPeak: z.number(),
  channels: z.array(channelSchema).min(1),
});

/** The stored analysis parts the score reads. */
export type StoredScoreInput = z.infer<typeof storedScoreInputSchema>;

/**
 * The lead channel and stored z values of an analysis, or null when it lacks the engine's shape.
 */
export function evidenceFromAnalysis(analysis: unknown): { lead: ChannelFeatures; channels: ChannelFeatures[]; zLog10Ratio: number | null; zStaLtaPeak: number } | null {
  const parsed = storedScoreInputSchema.safeParse(analysis);
  if (!parsed.success) return null;
  const lead = parsed.data.channels.find((c) => c.id === parsed.data.leadChannel) ?? parsed.data.channels[0];
  if (!lead) return null;
  return { lead, channels: parsed.data.channels, zLog10Ratio: parsed.data.zLog10Ratio, zStaLtaPeak: parsed.data.zStaLtaPeak };
}
