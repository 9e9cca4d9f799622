import { and, eq, gte, inArray, lt, sql } from 'drizzle-orm';
import type { Database } from '@server/db/client';
import { auditLog } from '@server/db/schema/audit-log';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { itemReviews } from '@server/db/schema/supervisor';
import { windows } from '@server/db/schema/uploads';
import { users } from '@server/db/schema/users';
import { truthOf } from './thresholds';
import { median } from '@shared/math/median';

/**
 * The supervisor's dashboard for a period, per UTC day:
 * - items per day per station (by arrival, `created_at`);
 * - flag mix per day (items of each automatic flag);
 * - median time to triage per day: from an item's arrival to its first label, dismissal or
 *   escalation (audit rows `queue.labelled|dismissed|escalated`), minutes, by the day of the triage;
 * - analyst workload: triage actions per analyst over the period;
 * - false-alarm rate per day: of the items flagged `likely event` that arrived that day and now have
 *   a ground truth (server/features/supervision/thresholds.ts `truthOf`), the share that turned out noise.
 *   Only flags scored against the station's own noise count: a window analysed before its station had
 *   a baseline (the analysis says `baseline: 'network default'`, e.g. the first windows of a new
 *   station, which then become its baseline) is counted apart, in `flaggedBeforeBaseline`, so a
 *   station's start-up does not read as the detector's false-alarm rate.
 */

/** The dashboard's numbers. */
export interface DashboardData {
  /** UTC days, YYYY-MM-DD, from `from` to the day before `to`. */
  days: string[];
  itemsPerStation: Array<{ station: string; counts: number[] }>;
  flagMix: Array<{ flag: string; counts: number[] }>;
  /** Minutes; null on days without a triage. */
  medianTriageMinutes: Array<number | null>;
  triageCount: number[];
  workload: Array<{ analyst: string; actions: number }>;
  /** 0…1; null on days without a flagged item with a ground truth. */
  falseAlarmRate: Array<number | null>;
  flaggedWithTruth: number[];
  /** Items flagged `likely event` per day that were scored before their station had a baseline (not in the rate). */
  flaggedBeforeBaseline: number[];
}

const DAY_MS = 86_400_000;
const dayKey = (d: Date) => d.toISOString().slice(0, 10);

/** The median of a list (null when empty). */
export function medianOf(values: readonly number[]): number | null {
  return values.length === 0 ? null : median(values);
}

const triageActions = ['queue.labelled', 'queue.dismissed', 'queue.escalated'];

/** Builds the dashboard for [from, to). */
export async function dashboard(db: Database, period: { from: Date; to: Date }): Promise<DashboardData> {
  const start = Date.UTC(period.from.getUTCFullYear(), period.from.getUTCMonth(), period.from.getUTCDate());
  const days: string[] = [];
  for (let t = start; t < period.to.getTime(); t += DAY_MS) days.push(dayKey(new Date(t)));
  const index = new Map(days.map((d, i) => [d, i]));
  const zeros = () => days.map(() => 0);

  const items = await db
    .select({
      id: queueItems.id,
      createdAt: queueItems.createdAt,
      flag: queueItems.flag,
      state: queueItems.state,
      label: queueItems.label,
      network: stations.network,
      code: stations.code,
      status: itemReviews.evaluationStatus,
      baseline: sql<string | null>`JSON_VALUE(${windows.analysis}, '$.baseline')`,
    })
    .from(queueItems)
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .innerJoin(windows, eq(windows.id, queueItems.windowId))
    .leftJoin(itemReviews, eq(itemReviews.itemId, queueItems.id))
    .where(and(gte(queueItems.createdAt, period.from), lt(queueItems.createdAt, period.to)))
    .limit(200_000);
  const perStation = new Map<string, number[]>();
  const perFlag = new Map<string, number[]>([['likely event', zeros()], ['needs eyes', zeros()], ['likely noise', zeros()]]);
  const faNoise = zeros();
  const faKnown = zeros();
  const beforeBaseline = zeros();
  for (const it of items) {
    const i = index.get(dayKey(it.createdAt));
    if (i === undefined) continue;
    const key = `${it.network}.${it.code}`;
    const s = perStation.get(key) ?? zeros();
    s[i] = (s[i] ?? 0) + 1;
    perStation.set(key, s);
    const f = perFlag.get(it.flag) ?? zeros();
    f[i] = (f[i] ?? 0) + 1;
    perFlag.set(it.flag, f);
    if (it.flag === 'likely event' && it.baseline === 'network default') beforeBaseline[i] = (beforeBaseline[i] ?? 0) + 1;
    else if (it.flag === 'likely event') {
      const truth = truthOf(it.state, it.label, it.status);
      if (truth !== null) {
        faKnown[i] = (faKnown[i] ?? 0) + 1;
        if (truth === 'noise') faNoise[i] = (faNoise[i] ?? 0) + 1;
      }
    }
  }

  const triage = await db
    .select({ itemId: auditLog.targetId, at: auditLog.createdAt, actor: auditLog.actorUserId, actorLabel: auditLog.actorLabel, name: users.displayName, itemCreated: queueItems.createdAt })
    .from(auditLog)
    .innerJoin(queueItems, eq(queueItems.id, sql`CAST(${auditLog.targetId} AS UNSIGNED)`))
    .leftJoin(users, eq(users.id, auditLog.actorUserId))
    .where(and(eq(auditLog.targetType, 'queue_item'), inArray(auditLog.action, triageActions), gte(auditLog.createdAt, period.from), lt(auditLog.createdAt, period.to)))
    .orderBy(auditLog.createdAt)
    .limit(200_000);
  const firstByItem = new Map<string, { at: Date; created: Date }>();
  const workload = new Map<string, number>();
  for (const t of triage) {
    const who = t.name ?? t.actorLabel ?? 'unknown';
    workload.set(who, (workload.get(who) ?? 0) + 1);
    if (t.itemId && !firstByItem.has(t.itemId)) firstByItem.set(t.itemId, { at: t.at, created: t.itemCreated });
  }
  const minutesByDay = days.map((): number[] => []);
  for (const v of firstByItem.values()) {
    const i = index.get(dayKey(v.at));
    if (i !== undefined) minutesByDay[i]?.push(Math.max(0, (v.at.getTime() - v.created.getTime()) / 60_000));
  }

  return {
    days,
    itemsPerStation: [...perStation.entries()].sort((a, b) => a[0].localeCompare(b[0])).map(([station, counts]) => ({ station, counts })),
    flagMix: [...perFlag.entries()].map(([flag, counts]) => ({ flag, counts })),
    medianTriageMinutes: minutesByDay.map((m) => {
      const v = medianOf(m);
      return v === null ? null : Math.round(v * 10) / 10;
    }),
    triageCount: minutesByDay.map((m) => m.length),
    workload: [...workload.entries()].sort((a, b) => b[1] - a[1] || a[0].localeCompare(b[0])).map(([analyst, actions]) => ({ analyst, actions })),
    falseAlarmRate: faKnown.map((k, i) => (k === 0 ? null : (faNoise[i] ?? 0) / k)),
    flaggedWithTruth: faKnown,
    flaggedBeforeBaseline: beforeBaseline,
  };
}
