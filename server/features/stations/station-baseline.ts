import { and, desc, eq, sql } from 'drizzle-orm';
import { unionAll } from 'drizzle-orm/mysql-core';
import type { BaselineView } from '@shared/schemas/station';
import { queueItems } from '@server/db/schema/queue-items';
import { windowFeatures } from '@server/db/schema/window-features';
import { computeBaseline, MAD_FLOOR, NETWORK_DEFAULT_BASELINE, type StationBaseline } from '@server/dsp/score';
import type { DbOrTx } from '@server/db/client';

/**
 * A station's noise baseline: robust statistics (median, MAD) of the lead channel's log10 band
 * ratio and STA/LTA peak over the station's recent NOISE windows, which `scoreWindow` uses for its
 * robust z-scores (server/dsp/score.ts).
 *
 * Which windows count as noise:
 * 1. The last {@link BASELINE_WINDOW_LIMIT} windows an analyst DISMISSED (queue item state
 *    `dismissed`): a person looked and said "noise".
 * 2. Until at least `minWindows` such windows exist, the last {@link BASELINE_WINDOW_LIMIT}
 *    windows the engine itself flagged `likely noise` and nobody has labelled, escalated or
 *    confirmed as something else.
 *
 * Feedback-loop caveat: in case 2 the baseline is built from windows the score called noise, and
 * the score is computed against that baseline. A slow drift (a sensor degrading, traffic growing)
 * is then absorbed as "normal" and never flagged, and a station whose first windows were all
 * loud makes loud the norm. Analyst dismissals (case 1) break the loop, which is why they take
 * over as soon as there are enough; until then the score's own `minBaselineWindows` threshold
 * keeps the network default in use for a new station.
 */

/** How many recent noise windows the baseline reads. */
export const BASELINE_WINDOW_LIMIT = 200;

/** Queue states that say "a person decided this was not noise" (excluded from case 2). */
const NOT_NOISE_STATES = ['labelled', 'escalated', 'confirmed'];

/** The baseline for scoring (null when there is no noise window yet) and its view for the station page. */
export interface StationBaselineResult {
  baseline: StationBaseline | null;
  view: BaselineView;
}

/** The columns both noise sets read, with which set a row came from (exported for the EXPLAIN check). */
export function noiseSelect(db: DbOrTx, stationId: number, mode: 'dismissed' | 'flagged') {
  // Each set is read newest first along an index that holds its filter, so the cost is the limit,
  // not the station's history: dismissed items by queue_items (station_id, state, window_start, …)
  // (migration 0008), engine-flagged noise by window_features (station_id, flag, window_start)
  // (migration 0009). Both tables carry the same window start.
  const [where, newest] =
    mode === 'dismissed'
      ? [
          and(
            eq(queueItems.stationId, stationId),
            eq(queueItems.state, 'dismissed'),
            // A window dismissed as an instrument glitch is not the station's ground noise: left out.
            sql`COALESCE(JSON_UNQUOTE(JSON_EXTRACT(${queueItems.label}, '$.noiseReason')), '') <> 'instrument glitch'`,
          ),
          desc(queueItems.windowStart),
        ]
      : [and(eq(windowFeatures.stationId, stationId), eq(windowFeatures.flag, 'likely noise')), desc(windowFeatures.windowStart)];
  return db
    .select({ set: sql<string>`${mode}`.as('noise_set'), r: windowFeatures.leadLog10Ratio, p: windowFeatures.leadStaLtaPeak, state: queueItems.state })
    .from(windowFeatures)
    .innerJoin(queueItems, eq(queueItems.windowId, windowFeatures.windowId))
    .where(where)
    .orderBy(newest)
    .limit(BASELINE_WINDOW_LIMIT);
}

/**
 * Both candidate noise sets (case 1 and case 2 above, each its newest BASELINE_WINDOW_LIMIT rows)
 * in one round trip: `(dismissed … LIMIT n) UNION ALL (flagged … LIMIT n)`.
 */
async function noiseSets(db: DbOrTx, stationId: number) {
  const rows = await unionAll(noiseSelect(db, stationId, 'dismissed'), noiseSelect(db, stationId, 'flagged'));
  const pick = (set: 'dismissed' | 'flagged') =>
    rows.filter((row) => row.set === set && (set === 'dismissed' || !NOT_NOISE_STATES.includes(row.state))).map((row) => ({ log10Ratio: row.r, staLtaPeak: row.p }));
  return { dismissed: pick('dismissed'), flagged: pick('flagged') };
}

/**
 * Computes the station's baseline now (see the module comment for the rule).
 * @param minWindows the profile's `thresholds.minBaselineWindows`
 */
export async function stationBaseline(db: DbOrTx, stationId: number, minWindows: number): Promise<StationBaselineResult> {
  const { dismissed, flagged } = await noiseSets(db, stationId);
  let source: BaselineView['source'] = 'dismissed';
  let rows = dismissed;
  if (dismissed.length < minWindows && flagged.length > dismissed.length) {
    rows = flagged;
    source = 'flagged';
  }
  const baseline = rows.length > 0 ? computeBaseline(rows) : null;
  // What the score falls back to and how it guards a zero spread, so the page can show the values in use.
  const fixed = { networkDefault: { log10Ratio: NETWORK_DEFAULT_BASELINE.log10Ratio, staLtaPeak: NETWORK_DEFAULT_BASELINE.staLtaPeak }, madFloor: { ...MAD_FLOOR } };
  if (!baseline) return { baseline: null, view: { count: 0, source: 'none', log10Ratio: null, staLtaPeak: null, minWindows, inUse: false, ...fixed } };
  return {
    baseline,
    view: { count: baseline.count, source, log10Ratio: baseline.log10Ratio, staLtaPeak: baseline.staLtaPeak, minWindows, inUse: baseline.count >= minWindows, ...fixed },
  };
}
