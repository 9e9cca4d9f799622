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
import type { CatalogueEvent, CatalogueLocation, CataloguePick } from './quakeml-export';
import { eventIdsWithStatus, eventMembershipOf, getEventDetail } from '@server/features/events/event-service';
import type { EventDetail } from '@shared/schemas/events';
import { z } from 'zod';

/**
 * Review of labelled events and the reviewed catalogue.
 * - The review list holds items labelled as events (states labelled and confirmed), with their
 *   QuakeML evaluation status (`preliminary` until a supervisor sets one) and candidate event.
 * - The time shown for a window is its earliest P pick, else its earliest trigger (window start +
 *   first trigger-on of the lead channel), else the window start; `eventTimeBasis` says which (a
 *   station time). In the catalogue a located event shows its origin time.
 * - Setting confirmed, reviewed or final moves the item to state `confirmed`; `rejected` leaves it
 *   `labelled` (the analyst's label stands, the supervisor does not accept it for the catalogue).
 * - The catalogue lists events (server/features/events): the reviewed windows an event holds merge
 *   into it, with its location and ML; other reviewed windows are one event each, without a location.
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

/** The export's location of an event from its detail (preferred origin, arrivals, amplitudes, magnitudes). */
export function catalogueLocation(d: EventDetail): CatalogueLocation | null {
  const o = d.origin;
  if (!o) return null;
  const ampId = new Map(d.amplitudes.map((a) => [a.streamId, `${d.event.id}-${o.id}-${a.id}`]));
  return {
    originId: `${d.event.id}-${o.id}`,
    time: o.time,
    latitude: o.latitude,
    longitude: o.longitude,
    depthKm: o.depthKm,
    depthFixed: o.depthFixed,
    depthFixedReason: o.depthFixedReason,
    ellipse: o.uncertainty.ellipse,
    depthKm68: o.uncertainty.depthKm,
    timeS68: o.uncertainty.timeS,
    rmsS: o.rmsS,
    azimuthalGapDeg: o.azimuthalGapDeg,
    minimumDistanceKm: o.minimumDistanceKm,
    usedPhases: o.usedPhases,
    usedStations: o.usedStations,
    evaluationMode: o.evaluationMode,
    modelName: o.velocityModel.name,
    author: o.author,
    creationTime: o.createdAt,
    notes: o.notes,
    arrivals: d.arrivals.map((a) => ({ pickId: a.pickId === null ? null : `event-${d.event.id}-${a.pickId}`, phase: a.phase, modelPhase: a.modelPhase, residualS: a.residualS, distanceKm: a.distanceKm, azimuthDeg: a.azimuthDeg, takeoffAngleDeg: a.takeoffAngleDeg, weight: a.weight })),
    amplitudes: d.amplitudes.map((a) => ({ id: `${d.event.id}-${o.id}-${a.id}`, streamId: a.streamId, amplitudeMm: a.amplitudeMm, periodS: a.periodS, time: a.time, evaluationMode: a.evaluationMode })),
    stationMagnitudes: d.stationMagnitudes.map((m, k) => ({ id: `${d.event.id}-${o.id}-${k}`, station: m.station, streamIds: m.streamIds, value: m.value, amplitudeIds: m.streamIds.map((id) => ampId.get(id)).filter((x): x is string => x !== undefined) })),
    magnitude: d.magnitude ? { id: `${d.event.id}-${o.id}`, value: d.magnitude.value, uncertainty: d.magnitude.uncertainty, stationCount: d.magnitude.stationCount, method: d.magnitude.method, evaluationMode: d.magnitude.evaluationMode } : null,
  };
}

const STATUS_ORDER: EvaluationStatus[] = ['rejected', 'preliminary', 'confirmed', 'reviewed', 'final'];

/**
 * The reviewed catalogue for a period (window start in [from, to)) with the given statuses, as
 * export events, one per event: the reviewed windows an event holds merge into it (with its
 * preferred origin, arrivals, amplitudes and magnitudes, and the picks its location used), and
 * events whose own evaluation status is one of `statuses` come in even when no member window was
 * reviewed. An event's status is its own when a supervisor set one, else the weakest of its reviewed
 * windows'. A reviewed window no event holds is an event of its own, without a location.
 */
export async function loadCatalogue(db: Database, period: { from: Date; to: Date }, statuses: readonly EvaluationStatus[]): Promise<CatalogueEvent[]> {
  const rows = await selectReview(db)
    .where(reviewWhere({ status: [...STATUS_ORDER], from: period.from.toISOString(), to: period.to.toISOString() }))
    .orderBy(asc(queueItems.windowStart), asc(queueItems.id))
    .limit(20_000);
  const items = rows.map((r) => ({ view: present(r), updatedAt: r.updatedAt, reviewedAt: r.reviewedAt }));
  const membership = await eventMembershipOf(db, items.map((i) => i.view.itemId));
  const groups = new Map<string, typeof items>();
  for (const it of items) {
    const eventId = membership.get(it.view.itemId);
    const key = eventId !== undefined ? `event/${eventId}` : `item/${it.view.itemId}`;
    groups.set(key, [...(groups.get(key) ?? []), it]);
  }
  for (const id of await eventIdsWithStatus(db, period, statuses)) if (!groups.has(`event/${id}`)) groups.set(`event/${id}`, []);
  const events: CatalogueEvent[] = [];
  for (const [localId, members] of groups) {
    members.sort((a, b) => Date.parse(a.view.eventTime) - Date.parse(b.view.eventTime) || a.view.itemId - b.view.itemId);
    const detail = localId.startsWith('event/') ? await getEventDetail(db, Number(localId.slice('event/'.length)), 'all') : null;
    const first = members[0];
    if (!first && !detail) continue;
    const typeCounts = new Map<string, number>();
    for (const m of members) typeCounts.set(m.view.eventType, (typeCounts.get(m.view.eventType) ?? 0) + 1);
    let eventType = detail?.event.eventType ?? first?.view.eventType ?? 'not reported';
    if (!detail?.event.eventType) for (const [t, n] of typeCounts) if (n > (typeCounts.get(eventType) ?? 0)) eventType = t;
    const picks: CataloguePick[] = [];
    const comments: string[] = [];
    const memberStatuses = members.map((m) => m.view.evaluationStatus);
    const weakest = memberStatuses.reduce((w, st) => (STATUS_ORDER.indexOf(st) < STATUS_ORDER.indexOf(w) ? st : w), memberStatuses[0] ?? 'preliminary');
    const own = detail?.event.evaluationStatus;
    const status: EvaluationStatus = own !== undefined && own !== 'preliminary' ? own : weakest;
    if (!statuses.includes(status)) continue;
    for (const m of members) {
      const label = m.view.parsedLabel;
      if (label?.kind !== 'event') continue;
      if (!detail) label.picks.forEach((p, i) => picks.push({ id: `item/${m.view.itemId}/${i}`, phase: p.phase, time: p.time, onset: p.onset, polarity: p.polarity, streamId: p.streamId, evaluationStatus: status, author: m.view.analyst?.displayName ?? null }));
      if (label.note) comments.push(`${m.view.station} (item ${m.view.itemId}): ${label.note}`);
      if (m.view.reviewComment) comments.push(`Review of item ${m.view.itemId}: ${m.view.reviewComment}`);
      if (m.view.eventType !== eventType) comments.push(`Item ${m.view.itemId} at ${m.view.station} is labelled ${m.view.eventType}`);
    }
    const location = detail ? catalogueLocation(detail) : null;
    if (detail) {
      const used = detail.picks.usedForLocation === 'manual' ? detail.picks.analyst : detail.picks.automatic;
      for (const p of used) {
        picks.push({
          id: `event-${detail.event.id}-${p.id}`,
          phase: p.phase,
          time: p.time,
          onset: z.enum(['impulsive', 'emergent', 'questionable']).catch('questionable').parse(p.onset),
          polarity: z.enum(['positive', 'negative', 'undecidable']).catch('undecidable').parse(p.polarity),
          streamId: p.streamId,
          evaluationStatus: status,
          author: p.author,
          evaluationMode: p.evaluationMode,
          uncertaintyS: p.uncertaintyS,
        });
      }
      if (!location && detail.event.locationRefusal) comments.push(`Not located: ${detail.event.locationRefusal}`);
    }
    const created = members.map((m) => (m.reviewedAt ?? m.updatedAt).getTime());
    const time = location?.time ?? first?.view.eventTime ?? detail?.event.firstArrival ?? period.from.toISOString();
    events.push({
      localId,
      eventType,
      certainty: detail?.event.typeCertainty === 'known' || (members.length > 0 && members.every((m) => m.view.certainty === 'known')) ? 'known' : 'suspected',
      evaluationStatus: status,
      time,
      timeBasis: location ? 'origin time' : (first?.view.eventTimeBasis ?? 'earliest trigger'),
      author: first?.view.analyst?.displayName ?? location?.author ?? null,
      reviewer: first?.view.reviewedBy?.displayName ?? null,
      creationTime: new Date(created.length > 0 ? Math.max(...created) : Date.parse(location?.creationTime ?? time)).toISOString(),
      stations: detail ? [...new Set(detail.members.filter((m) => !m.removed).map((m) => m.station))] : [...new Set(members.map((m) => m.view.station))],
      picks,
      comments,
      ...(location ? { location } : {}),
    });
  }
  return events.sort((a, b) => Date.parse(a.time) - Date.parse(b.time));
}
