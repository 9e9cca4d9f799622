import { and, asc, desc, eq, gte, inArray, isNotNull, lt, ne, or, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import { storedLabelSchema, type StoredLabel } from '@shared/schemas/label';
import type { EvaluationStatus, ReviewQuery, ReviewRow } from '@shared/schemas/supervisor';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { itemArrivals, itemReviews } from '@server/db/schema/supervisor';
import { users } from '@server/db/schema/users';
import { conflict, notFound } from '@server/errors';
import { loadQueueRow } from '@server/features/queue/queue-rows';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { recordAudit } from '@server/features/audit/audit';
import type { InboxActor, InboxDeps } from './inbox';
import type { CatalogueEvent, CataloguePick } from './quakeml-export';

/**
 * Review of labelled events and the reviewed catalogue.
 * - The review list holds items labelled as events (states labelled and confirmed), with their
 *   QuakeML evaluation status (`preliminary` until a supervisor sets one) and candidate event.
 * - The time shown for an event is its earliest P pick, else its earliest trigger (window start +
 *   first trigger-on of the lead channel), else the window start; `eventTimeBasis` says which.
 *   Seisift does not locate events or compute magnitudes; this is a station time, not an origin time.
 * - Setting confirmed, reviewed or final moves the item to state `confirmed`; `rejected` leaves it
 *   `labelled` (the analyst's label stands, the supervisor does not accept it for the catalogue).
 * - The catalogue merges the members of one candidate event into one event (picks from every
 *   member; the type most members carry, ties to the earliest member); other items are one event each.
 */

const analyst = alias(users, 'analyst');
const reviewer = alias(users, 'reviewer');

/** The time shown for an event and how it was found. */
export function eventTime(label: StoredLabel | null, firstTrigger: number | null, windowStart: Date): { time: string; basis: ReviewRow['eventTimeBasis'] } {
  if (label?.kind === 'event') {
    const ps = label.picks.filter((p) => p.phase === 'P').map((p) => p.time).sort((a, b) => Date.parse(a) - Date.parse(b) || a.localeCompare(b));
    if (ps[0]) return { time: ps[0], basis: 'earliest P pick' };
  }
  if (firstTrigger !== null) return { time: new Date(firstTrigger).toISOString(), basis: 'earliest trigger' };
  return { time: windowStart.toISOString(), basis: 'window start' };
}

function selectReview(db: Database) {
  return db
    .select({
      itemId: queueItems.id,
      state: queueItems.state,
      network: stations.network,
      code: stations.code,
      stationId: queueItems.stationId,
      flag: queueItems.flag,
      score: queueItems.score,
      label: queueItems.label,
      windowStart: queueItems.windowStart,
      version: queueItems.version,
      updatedAt: queueItems.updatedAt,
      analystId: analyst.id,
      analystName: analyst.displayName,
      status: itemReviews.evaluationStatus,
      reviewComment: itemReviews.comment,
      reviewedAt: itemReviews.reviewedAt,
      reviewerId: reviewer.id,
      reviewerName: reviewer.displayName,
      arrivalAt: itemArrivals.arrivalAt,
      candidateEventId: itemArrivals.candidateEventId,
    })
    .from(queueItems)
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .leftJoin(analyst, eq(analyst.id, queueItems.claimedByUserId))
    .leftJoin(itemReviews, eq(itemReviews.itemId, queueItems.id))
    .leftJoin(reviewer, eq(reviewer.id, itemReviews.reviewedByUserId))
    .leftJoin(itemArrivals, eq(itemArrivals.itemId, queueItems.id));
}

type ReviewRecord = Awaited<ReturnType<ReturnType<typeof selectReview>['where']>>[number];

function present(r: ReviewRecord): ReviewRow & { parsedLabel: StoredLabel | null } {
  const parsed = storedLabelSchema.safeParse(r.label);
  const label = parsed.success ? parsed.data : null;
  // The first trigger comes from item_arrivals (written by ingest's transaction, or catchUpArrivals), so the
  // analysis JSON is never read for a list.
  const trig = r.arrivalAt ? r.arrivalAt.getTime() : null;
  const t = eventTime(label, trig, r.windowStart);
  const status = (r.status ?? 'preliminary') as EvaluationStatus;
  return {
    itemId: r.itemId,
    state: r.state as ReviewRow['state'],
    station: `${r.network}.${r.code}`,
    stationId: r.stationId,
    flag: r.flag as ReviewRow['flag'],
    score: r.score,
    eventType: label?.kind === 'event' ? label.eventType : 'unknown',
    certainty: label?.kind === 'event' ? label.certainty : 'suspected',
    picks: label?.kind === 'event' ? label.picks.length : 0,
    analyst: r.analystId ? { id: r.analystId, displayName: r.analystName ?? r.analystId } : null,
    eventTime: t.time,
    eventTimeBasis: t.basis,
    evaluationStatus: status,
    reviewedBy: r.reviewerId ? { id: r.reviewerId, displayName: r.reviewerName ?? r.reviewerId } : null,
    reviewComment: r.reviewComment,
    candidateEventId: r.candidateEventId,
    version: r.version,
    parsedLabel: label,
  };
}

function reviewWhere(q: { station?: string[]; type?: string[]; analyst?: string; status?: string[]; from?: string; to?: string }): SQL | undefined {
  const where: SQL[] = [inArray(queueItems.state, ['labelled', 'confirmed']), isNotNull(queueItems.labelType), ne(queueItems.labelType, 'noise')];
  if (q.station?.length) {
    const ors = q.station.map((s) => {
      const [net, code] = s.includes('.') ? s.split('.') : [null, s];
      return net ? and(eq(stations.network, net), eq(stations.code, code ?? '')) : eq(stations.code, s);
    });
    const any = or(...ors);
    if (any) where.push(any);
  }
  if (q.type?.length) where.push(inArray(queueItems.labelType, q.type));
  if (q.analyst) where.push(or(eq(analyst.id, q.analyst), sql`${analyst.displayName} LIKE ${`%${q.analyst.replace(/[\\%_]/g, (c) => `\\${c}`)}%`}`) ?? sql`1=1`);
  if (q.status?.length) {
    const wantsPreliminary = q.status.includes('preliminary');
    const others = q.status.filter((s) => s !== 'preliminary');
    const parts: SQL[] = [];
    if (others.length) parts.push(inArray(itemReviews.evaluationStatus, others));
    if (wantsPreliminary) parts.push(sql`${itemReviews.evaluationStatus} IS NULL`);
    const any = or(...parts);
    if (any) where.push(any);
  }
  if (q.from) where.push(gte(queueItems.windowStart, new Date(q.from)));
  if (q.to) where.push(lt(queueItems.windowStart, new Date(q.to)));
  return and(...where);
}

/** The review list under the query's filters, newest window first. */
export async function listReview(db: Database, q: ReviewQuery): Promise<ReviewRow[]> {
  const rows = await selectReview(db).where(reviewWhere(q)).orderBy(desc(queueItems.windowStart), desc(queueItems.id)).limit(q.limit);
  return rows.map((r) => {
    const { parsedLabel: _omit, ...row } = present(r);
    return row;
  });
}

/**
 * Sets an item's QuakeML evaluation status (see the module comment): a versioned write, an audit
 * row, then the change-log row.
 * @throws 404 for a missing item; 409 when it is not a labelled event or changed since `version`
 */
export async function setEvaluationStatus(deps: InboxDeps, actor: InboxActor, itemId: number, version: number, status: Exclude<EvaluationStatus, 'preliminary'>, comment: string): Promise<void> {
  const now = new Date();
  await deps.db.transaction(async (tx) => {
    const [item] = await tx.select({ state: queueItems.state, version: queueItems.version, labelType: queueItems.labelType, stationId: queueItems.stationId }).from(queueItems).where(eq(queueItems.id, itemId)).for('update');
    if (!item) throw notFound(`Queue item ${itemId}`);
    if (item.version !== version) throw conflict(`Item ${itemId} changed since you loaded it (version ${version}, now ${item.version}); reload it.`);
    if (!['labelled', 'confirmed'].includes(item.state) || item.labelType === null || item.labelType === 'noise') {
      throw conflict(`Item ${itemId} is ${item.state}${item.labelType === 'noise' ? ' (dismissed as noise)' : ''}; only items labelled as events get an evaluation status.`);
    }
    const state = status === 'rejected' ? 'labelled' : 'confirmed';
    await tx.update(queueItems).set({ state, version: item.version + 1, updatedByUserId: actor.id, updatedAt: now }).where(eq(queueItems.id, itemId));
    await tx
      .insert(itemReviews)
      .values({ itemId, evaluationStatus: status, comment: comment || null, reviewedByUserId: actor.id, reviewedAt: now })
      .onDuplicateKeyUpdate({ set: { evaluationStatus: status, comment: comment || null, reviewedByUserId: actor.id, reviewedAt: now } });
    await recordAudit(tx, {
      actor: { id: actor.id, email: actor.email },
      action: 'review.status_set',
      targetType: 'queue_item',
      targetId: itemId,
      details: { status, comment, from: item.state, to: state, version: item.version + 1 },
      ip: deps.ipAddress ?? null,
    });
    const row = await loadQueueRow(tx, eq(queueItems.id, itemId));
    await recordChange(tx, { resource: 'item', resourceId: itemId, kind: 'updated', version: item.version + 1, summary: row ?? undefined, audience: itemAudience(item.stationId) });
  });
  deps.notify?.();
}

/** The latest supervisor comment on an item (for the analyst's screen), or null. */
export async function reviewNote(db: Database, itemId: number): Promise<{ evaluationStatus: string | null; comment: string | null; returnComment: string | null; returnedBy: string | null; returnedAt: string | null } | null> {
  const returner = alias(users, 'returner');
  const [r] = await db
    .select({ s: itemReviews.evaluationStatus, c: itemReviews.comment, rc: itemReviews.returnComment, rb: returner.displayName, ra: itemReviews.returnedAt })
    .from(itemReviews)
    .leftJoin(returner, eq(returner.id, itemReviews.returnedByUserId))
    .where(eq(itemReviews.itemId, itemId));
  return r ? { evaluationStatus: r.s, comment: r.c, returnComment: r.rc, returnedBy: r.rb, returnedAt: r.ra?.toISOString() ?? null } : null;
}

/**
 * The reviewed catalogue for a period (window start in [from, to)) with the given statuses, as
 * export events (see the module comment for how candidate events are merged).
 */
export async function loadCatalogue(db: Database, period: { from: Date; to: Date }, statuses: readonly EvaluationStatus[]): Promise<CatalogueEvent[]> {
  const rows = await selectReview(db)
    .where(reviewWhere({ status: [...statuses], from: period.from.toISOString(), to: period.to.toISOString() }))
    .orderBy(asc(queueItems.windowStart), asc(queueItems.id))
    .limit(20_000);
  const items = rows.map((r) => ({ view: present(r), updatedAt: r.updatedAt, reviewedAt: r.reviewedAt }));
  const groups = new Map<string, typeof items>();
  for (const it of items) {
    const key = it.view.candidateEventId !== null ? `candidate/${it.view.candidateEventId}` : `item/${it.view.itemId}`;
    groups.set(key, [...(groups.get(key) ?? []), it]);
  }
  const events: CatalogueEvent[] = [];
  for (const [localId, members] of groups) {
    members.sort((a, b) => Date.parse(a.view.eventTime) - Date.parse(b.view.eventTime) || a.view.itemId - b.view.itemId);
    const first = members[0];
    if (!first) continue;
    const typeCounts = new Map<string, number>();
    for (const m of members) typeCounts.set(m.view.eventType, (typeCounts.get(m.view.eventType) ?? 0) + 1);
    let eventType = first.view.eventType;
    for (const [t, n] of typeCounts) if (n > (typeCounts.get(eventType) ?? 0)) eventType = t;
    const picks: CataloguePick[] = [];
    const comments: string[] = [];
    for (const m of members) {
      const label = m.view.parsedLabel;
      if (label?.kind !== 'event') continue;
      label.picks.forEach((p, i) => picks.push({ id: `item/${m.view.itemId}/${i}`, phase: p.phase, time: p.time, onset: p.onset, polarity: p.polarity, streamId: p.streamId, evaluationStatus: m.view.evaluationStatus, author: m.view.analyst?.displayName ?? null }));
      if (label.note) comments.push(`${m.view.station} (item ${m.view.itemId}): ${label.note}`);
      if (m.view.reviewComment) comments.push(`Review of item ${m.view.itemId}: ${m.view.reviewComment}`);
      if (m.view.eventType !== eventType) comments.push(`Item ${m.view.itemId} at ${m.view.station} is labelled ${m.view.eventType}`);
    }
    const statuses = members.map((m) => m.view.evaluationStatus);
    const order: EvaluationStatus[] = ['rejected', 'preliminary', 'confirmed', 'reviewed', 'final'];
    const weakest = statuses.reduce((w, s) => (order.indexOf(s) < order.indexOf(w) ? s : w), statuses[0] ?? 'preliminary');
    const created = members.map((m) => (m.reviewedAt ?? m.updatedAt).getTime());
    events.push({
      localId,
      eventType,
      certainty: members.every((m) => m.view.certainty === 'known') ? 'known' : 'suspected',
      evaluationStatus: weakest,
      time: first.view.eventTime,
      timeBasis: first.view.eventTimeBasis,
      author: first.view.analyst?.displayName ?? null,
      reviewer: first.view.reviewedBy?.displayName ?? null,
      creationTime: new Date(Math.max(...created)).toISOString(),
      stations: [...new Set(members.map((m) => m.view.station))],
      picks,
      comments,
    });
  }
  return events.sort((a, b) => Date.parse(a.time) - Date.parse(b.time));
}
