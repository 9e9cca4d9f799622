import { and, asc, count, desc, eq, gte, inArray, lt, sql } from 'drizzle-orm';
import { z } from 'zod';
import { storedLabelSchema } from '@shared/schemas/label';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import type { Database, DbOrTx } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { itemReviews } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { notFound, tooLarge, unprocessable } from '@server/errors';
import { loadQueueRow } from '@server/features/queue/queue-rows';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { recordAudit } from '@server/features/audit/audit';
import { stationBaseline } from '@server/features/stations/station-baseline';
import type { Evaluation, ThresholdValues } from '@shared/schemas/supervisor';
import { scoreWindow, type ChannelFeatures, type StationBaseline } from '@server/dsp/score';
import { bandResultSchema, channelResultSchema, qcFindingSchema, staLtaResultSchema, storedAnalysisSchema } from '@shared/schemas/analysis';

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
 * centroid, signal spectrum (where the triggered part rises above the noise) and QC. The tuned
 * thresholds only compare that evidence with eventZ, noiseZ and centroidMaxFactor (the station's
 * other thresholds, e.g. the signal-peak tolerance, are kept as they are), so the flag under other thresholds is `scoreWindow` (server/dsp/score.ts, the
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
 * The flag the rule gives `e` with the tuned values `thresholds` in place of the station's own (see
 * the module comment for the replay); every other threshold (e.g. the signal-spectrum tolerance)
 * is the station's.
 * @param profile the station's profile (its thresholds and STA/LTA settings)
 */
export function flagUnder(e: LabelledEvidence, thresholds: ThresholdValues, profile: Pick<ProcessingProfile, 'thresholds' | 'staLta'>): string {
  const channel: ChannelFeatures = {
    ...e.lead,
    log10Ratio: e.zLog10Ratio,
    ratio: e.zLog10Ratio === null ? null : (e.lead.ratio ?? 1),
    staLta: { ...e.lead.staLta, peak: e.zStaLtaPeak },
  };
  return scoreWindow([channel], identityBaseline, { thresholds: { ...profile.thresholds, ...thresholds, minBaselineWindows: 1 }, staLta: profile.staLta }).flag;
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
export function evaluateThresholds(evidence: readonly LabelledEvidence[], thresholds: ThresholdValues, profile: Pick<ProcessingProfile, 'thresholds' | 'staLta'>): Evaluation {
  return confusion(evidence.map((e) => ({ truth: e.truth, flag: flagUnder(e, thresholds, profile) })));
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
  profile: Pick<ProcessingProfile, 'thresholds' | 'staLta'>,
  range: { fromZ: number; toZ: number; steps: number } = { fromZ: 0, toZ: 10, steps: 40 },
): CurvePoint[] {
  if (!(range.fromZ < range.toZ)) throw new RangeError('the curve needs fromZ < toZ');
  if (!Number.isInteger(range.steps) || range.steps < 1 || range.steps > 500) throw new RangeError('the curve needs 1…500 steps');
  const out: CurvePoint[] = [];
  for (let k = 0; k <= range.steps; k++) {
    const eventZ = Math.round((range.fromZ + ((range.toZ - range.fromZ) * k) / range.steps) * 1e9) / 1e9;
    const th = { ...base, eventZ, noiseZ: Math.min(base.noiseZ, eventZ) };
    out.push({ eventZ, ...evaluateThresholds(evidence, th, profile) });
  }
  return out;
}

/**
 * The fields of a stored channel (shared/schemas/analysis.ts) the score reads. `startTime` and
 * `snr` may be missing: older analyses lack the one, the extract of `scoreExtract` the other.
 */
const channelSchema = channelResultSchema
  .pick({ id: true, log10Ratio: true, ratio: true, dominantFrequency: true, spectralCentroid: true, signalSpectrum: true, signalSpectrumNote: true })
  .extend({
    startTime: channelResultSchema.shape.startTime.optional(),
    snr: channelResultSchema.shape.snr.optional(),
    staLta: staLtaResultSchema.pick({ peak: true, peakTime: true, triggers: true, main: true }),
    bands: z.object({ high: bandResultSchema.pick({ fmin: true, fmax: true }) }),
    qc: z.array(qcFindingSchema.pick({ severity: true, message: true, code: true, time: true })),
  });

/** The parts of a stored analysis (the engine's output contract) the score reads. */
export const storedScoreInputSchema = z.object({
  leadChannel: storedAnalysisSchema.shape.leadChannel,
  zLog10Ratio: storedAnalysisSchema.shape.zLog10Ratio,
  // Without a stored STA/LTA z the rule cannot be replayed: such an analysis counts as unreadable.
  zStaLtaPeak: storedAnalysisSchema.shape.zStaLtaPeak.unwrap(),
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

// ---------------------------------------------------------------------------------------------
// Database part.
// ---------------------------------------------------------------------------------------------

/** What the database functions need. */
export interface ThresholdDeps {
  db: Database;
  notify?: () => void;
  ipAddress?: string | null;
}

/** A supervisor acting. */
export interface ThresholdActor {
  id: string;
  email: string;
}

/** The report a thresholds page shows for one station. */
export interface ThresholdReport {
  stationId: number;
  station: string;
  current: ThresholdValues;
  proposed: ThresholdValues | null;
  /** Items with a ground truth (events, noise). */
  labelled: { events: number; noise: number };
  /** The flags as they were shown (stored on the items). */
  asShown: Evaluation;
  /** The rule replayed under the current thresholds. */
  currentEvaluation: Evaluation;
  proposedEvaluation: Evaluation | null;
  curve: CurvePoint[];
  /** Items whose stored analysis could not be read (left out). */
  unreadable: number;
}

async function stationRow(db: DbOrTx, stationId: number) {
  const [row] = await db.select().from(stations).where(eq(stations.id, stationId));
  if (!row) throw notFound(`Station ${stationId}`);
  const parsed = processingProfileSchema.safeParse(row.profile ?? {});
  if (!parsed.success) throw unprocessable(`Station ${row.network}.${row.code} has a processing profile that no longer validates: ${parsed.error.issues[0]?.message ?? 'invalid'}`);
  return { row, profile: parsed.data };
}

/** The thresholds a supervisor tunes, out of a profile. */
export function tunedThresholds(profile: ProcessingProfile): ThresholdValues {
  return { eventZ: profile.thresholds.eventZ, noiseZ: profile.thresholds.noiseZ, centroidMaxFactor: profile.thresholds.centroidMaxFactor };
}

/**
 * The score's inputs out of `windows.analysis`, extracted by the database (JSON_EXTRACT) so a
 * history of thousands of windows never ships their spectra (~50 KB each) to the app: the lead
 * channel id, the stored z values and, per channel, the few features the score reads. Parse the
 * row with `scoreInputFromExtract`.
 */
const scoreExtract = {
  leadChannel: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.leadChannel')`,
  zLog10Ratio: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.zLog10Ratio')`,
  zStaLtaPeak: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.zStaLtaPeak')`,
  ids: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].id')`,
  log10Ratio: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].log10Ratio')`,
  ratio: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].ratio')`,
  staLta: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].staLta')`,
  dominantFrequency: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].dominantFrequency')`,
  spectralCentroid: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].spectralCentroid')`,
  bands: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].bands')`,
  qc: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].qc')`,
  signalSpectrum: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].signalSpectrum')`,
  signalSpectrumNote: sql<string | null>`JSON_EXTRACT(${windows.analysis}, '$.channels[*].signalSpectrumNote')`,
};

type ScoreExtractRow = { [K in keyof typeof scoreExtract]?: unknown };

/**
 * The driver hands JSON results back parsed (MariaDB marks them JSON) or as JSON text, depending on
 * the server; a string that is not JSON text is a string value already parsed.
 */
const parseJson = (v: unknown): unknown => {
  if (typeof v !== 'string') return v ?? null;
  try {
    return JSON.parse(v);
  } catch {
    return v;
  }
};

/**
 * Rebuilds the stored-analysis shape `evidenceFromAnalysis` reads from a `scoreExtract` row. A
 * wildcard path that matched one channel may come back unwrapped; the channel ids tell which.
 */
export function scoreInputFromExtract(row: ScoreExtractRow): unknown {
  const idsRaw = parseJson(row.ids);
  const single = !Array.isArray(idsRaw);
  const col = (v: unknown): unknown[] | null => {
    const parsed = parseJson(v);
    if (single) return [parsed];
    return Array.isArray(parsed) ? parsed : null;
  };
  const ids: readonly unknown[] = Array.isArray(idsRaw) ? idsRaw : [idsRaw];
  const fields = { log10Ratio: col(row.log10Ratio), ratio: col(row.ratio), staLta: col(row.staLta), dominantFrequency: col(row.dominantFrequency), spectralCentroid: col(row.spectralCentroid), bands: col(row.bands), qc: col(row.qc) };
  // Older analyses have no signal spectrum at all (the path matches nothing: null); newer ones
  // have one per channel (null where there was no trigger).
  const sigCol = row.signalSpectrum === null || row.signalSpectrum === undefined ? null : col(row.signalSpectrum);
  const noteCol = row.signalSpectrumNote === null || row.signalSpectrumNote === undefined ? null : col(row.signalSpectrumNote);
  const channels = ids.map((id, i) => ({
    id,
    log10Ratio: fields.log10Ratio?.[i],
    ratio: fields.ratio?.[i],
    staLta: fields.staLta?.[i],
    dominantFrequency: fields.dominantFrequency?.[i],
    spectralCentroid: fields.spectralCentroid?.[i],
    bands: fields.bands?.[i],
    qc: fields.qc?.[i],
    ...(sigCol && sigCol.length === ids.length ? { signalSpectrum: sigCol[i] } : {}),
    ...(noteCol && noteCol.length === ids.length ? { signalSpectrumNote: noteCol[i] } : {}),
  }));
  return { leadChannel: parseJson(row.leadChannel), zLog10Ratio: parseJson(row.zLog10Ratio), zStaLtaPeak: parseJson(row.zStaLtaPeak), channels };
}

/** Loads a station's labelled history as evidence (at most the latest 20 000 items). */
export async function loadEvidence(db: DbOrTx, stationId: number): Promise<{ evidence: LabelledEvidence[]; unreadable: number }> {
  const rows = await db
    .select({ id: queueItems.id, state: queueItems.state, label: queueItems.label, flag: queueItems.flag, status: itemReviews.evaluationStatus, ...scoreExtract })
    .from(queueItems)
    .innerJoin(windows, eq(windows.id, queueItems.windowId))
    .leftJoin(itemReviews, eq(itemReviews.itemId, queueItems.id))
    .where(and(eq(queueItems.stationId, stationId), inArray(queueItems.state, ['labelled', 'dismissed', 'confirmed'])))
    .orderBy(desc(queueItems.windowStart))
    .limit(20_000);
  const evidence: LabelledEvidence[] = [];
  let unreadable = 0;
  for (const r of rows) {
    const truth = truthOf(r.state, r.label, r.status);
    if (truth === null) continue;
    const e = evidenceFromAnalysis(scoreInputFromExtract(r));
    if (!e) {
      unreadable++;
      continue;
    }
    evidence.push({ itemId: r.id, truth, lead: e.lead, zLog10Ratio: e.zLog10Ratio, zStaLtaPeak: e.zStaLtaPeak, shownFlag: r.flag });
  }
  return { evidence, unreadable };
}

/** The thresholds report of one station, optionally with proposed thresholds. @throws 404 */
export async function thresholdReport(db: Database, stationId: number, proposed: ThresholdValues | null): Promise<ThresholdReport> {
  const { row, profile } = await stationRow(db, stationId);
  const { evidence, unreadable } = await loadEvidence(db, stationId);
  const current = tunedThresholds(profile);
  const top = Math.max(10, Math.ceil(Math.max(0, ...evidence.map((e) => Math.max(e.zLog10Ratio ?? 0, e.zStaLtaPeak))) + 1));
  return {
    stationId,
    station: `${row.network}.${row.code}`,
    current,
    proposed,
    labelled: { events: evidence.filter((e) => e.truth === 'event').length, noise: evidence.filter((e) => e.truth === 'noise').length },
    asShown: confusion(evidence.map((e) => ({ truth: e.truth, flag: e.shownFlag }))),
    currentEvaluation: evaluateThresholds(evidence, current, profile),
    proposedEvaluation: proposed ? evaluateThresholds(evidence, proposed, profile) : null,
    curve: precisionRecallCurve(evidence, proposed ?? current, profile, { fromZ: 0, toZ: Math.min(50, top), steps: Math.min(200, Math.min(50, top) * 4) }),
    unreadable,
  };
}

/**
 * Writes new thresholds into the station's profile with an audit row (before and after). Nothing
 * is re-scored: old items keep the score they were shown with; the rule applies from the next
 * window on, and `rescorePeriod` re-scores a chosen period on request.
 * @throws 404 for a missing station; 422 when the stored profile no longer validates
 */
export async function applyThresholds(deps: ThresholdDeps, actor: ThresholdActor, stationId: number, values: ThresholdValues): Promise<ThresholdValues> {
  await deps.db.transaction(async (tx) => {
    const { row, profile } = await stationRow(tx, stationId);
    const next = processingProfileSchema.parse({ ...profile, thresholds: { ...profile.thresholds, ...values } });
    await tx.update(stations).set({ profile: next, updatedAt: new Date() }).where(eq(stations.id, stationId));
    await recordAudit(tx, {
      actor: { id: actor.id, email: actor.email },
      action: 'thresholds.applied',
      targetType: 'station',
      targetId: stationId,
      details: { station: `${row.network}.${row.code}`, before: tunedThresholds(profile), after: values, rescored: 0 },
      ip: deps.ipAddress ?? null,
    });
  });
  return values;
}

/** Most items one re-score request may touch. */
export const MAX_RESCORE_ITEMS = 5000;

/**
 * Re-scores a station's items whose window starts in [from, to) with the station's current
 * profile and baseline (server/dsp/score.ts over the stored channel features), writing score, flag
 * and reasons to each item (version bumped, change-log row) and to the stored analysis, and one
 * audit row with the count.
 * @returns how many items were re-scored and how many changed flag
 * @throws 404; 413 when the period holds more than MAX_RESCORE_ITEMS items
 */
export async function rescorePeriod(deps: ThresholdDeps, actor: ThresholdActor, stationId: number, period: { from: Date; to: Date }): Promise<{ rescored: number; flagChanged: number; skipped: number }> {
  const { row, profile } = await stationRow(deps.db, stationId);
  const where = and(eq(queueItems.stationId, stationId), gte(queueItems.windowStart, period.from), lt(queueItems.windowStart, period.to));
  const [n] = await deps.db.select({ n: count() }).from(queueItems).where(where);
  if ((n?.n ?? 0) > MAX_RESCORE_ITEMS) throw tooLarge(`The period holds ${n?.n} items; re-score at most ${MAX_RESCORE_ITEMS} at a time (choose a shorter period)`);
  const { baseline } = await stationBaseline(deps.db, stationId, profile.thresholds.minBaselineWindows);
  const items = await deps.db
    .select({ id: queueItems.id, flag: queueItems.flag, version: queueItems.version, windowId: queueItems.windowId, ...scoreExtract })
    .from(queueItems)
    .innerJoin(windows, eq(windows.id, queueItems.windowId))
    .where(where)
    .orderBy(asc(queueItems.id));
  let rescored = 0;
  let flagChanged = 0;
  let skipped = 0;
  const now = new Date();
  await deps.db.transaction(async (tx) => {
    const changes: Array<{ id: number; version: number }> = [];
    for (const it of items) {
      const e = evidenceFromAnalysis(scoreInputFromExtract(it));
      if (!e) {
        skipped++;
        continue;
      }
      const s = scoreWindow(e.channels, baseline, profile);
      // Only the score's own fields of the stored analysis change (the spectra stay in place).
      await tx
        .update(windows)
        .set({
          analysis: sql`JSON_SET(${windows.analysis}, '$.score', JSON_EXTRACT(${JSON.stringify(s.score)}, '$'), '$.flag', ${s.flag}, '$.reasons', JSON_EXTRACT(${JSON.stringify(s.reasons)}, '$'), '$.baseline', ${s.baseline}, '$.zLog10Ratio', JSON_EXTRACT(${JSON.stringify(s.zLog10Ratio)}, '$'), '$.zStaLtaPeak', JSON_EXTRACT(${JSON.stringify(s.zStaLtaPeak)}, '$'), '$.leadChannel', ${s.leadChannel})`,
        })
        .where(eq(windows.id, it.windowId));
      await tx
        .update(queueItems)
        .set({ score: s.score, flag: s.flag, reasons: s.reasons, version: sql`${queueItems.version} + 1`, updatedAt: now })
        .where(eq(queueItems.id, it.id));
      rescored++;
      if (s.flag !== it.flag) flagChanged++;
      changes.push({ id: it.id, version: it.version + 1 });
    }
    await recordAudit(tx, {
      actor: { id: actor.id, email: actor.email },
      action: 'thresholds.rescored',
      targetType: 'station',
      targetId: stationId,
      details: { station: `${row.network}.${row.code}`, from: period.from.toISOString(), to: period.to.toISOString(), rescored, flagChanged, skipped, thresholds: tunedThresholds(profile) },
      ip: deps.ipAddress ?? null,
    });
    for (const c of changes) {
      const fresh = await loadQueueRow(tx, eq(queueItems.id, c.id));
      await recordChange(tx, { resource: 'item', resourceId: c.id, kind: 'updated', version: c.version, summary: fresh ?? undefined, audience: itemAudience(stationId) });
    }
  });
  deps.notify?.();
  return { rescored, flagChanged, skipped };
}
