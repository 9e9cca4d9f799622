import { and, asc, desc, eq, gte, inArray, isNotNull, isNull, lt, sql } from 'drizzle-orm';
import { z } from 'zod';
import type { EventDetail, EventSummary } from '@shared/schemas/events';
import { EVENT_CAUTION } from '@shared/schemas/events';
import type { Database, DbOrTx } from '@server/db/client';
import { eventAmplitudes, eventArrivals, eventMagnitudes, eventMembers, eventOrigins, eventPicks, eventStationMagnitudes, seismicEvents } from '@server/db/schema/events';
import { queueItems } from '@server/db/schema/queue-items';
import { channels, stations } from '@server/db/schema/stations';
import { candidateEvents, itemArrivals } from '@server/db/schema/supervisor';
import { windowChannels } from '@server/db/schema/uploads';
import { users } from '@server/db/schema/users';
import { conflict, notFound, unprocessable } from '@server/errors';
import { recordChange } from '@server/realtime/change-log';
import { automaticPicksForStreams, solveEvent, type ChainAmplitude, type ChainPick, type ChainStation, type ChainStream } from '@server/seismo/event-chain';
import { responseFromRegistry, type ResponseResult } from '@server/seismo/instrument-response';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import { networkSettings } from './event-settings';
import { decodedWindows, memoWoodAnderson } from './window-cache';

/**
 * Events (issue 17): built from candidate-event groups, holding their members' windows, the analysts'
 * and the automatic picks, origins with arrivals, amplitudes and magnitudes. Every change that moves
 * the location (a member added or removed, a pick made, changed or removed, an amplitude re-picked,
 * a relocation asked for) locates again inside the same transaction and records one live update.
 * The location uses the analysts' picks when there is at least one, else the automatic suggestions:
 * the two are never mixed.
 */

/** What the event services need. */
export interface EventDeps {
  db: Database;
  /** Wakes the live-update hub after a commit. */
  notify?: () => void;
}

/** Who acts (null: the system, e.g. building an event from a group). */
export type EventActor = { id: string; email: string } | null;


const stationOf = (streamId: string): string => streamId.split('.').slice(0, 2).join('.');

/** Members still in the event, with their station and window. */
async function activeMembers(db: DbOrTx, eventId: number) {
  return db
    .select({ itemId: eventMembers.itemId, windowId: queueItems.windowId, stationId: stations.id, network: stations.network, code: stations.code, latitude: stations.latitude, longitude: stations.longitude, profile: stations.profile })
    .from(eventMembers)
    .innerJoin(queueItems, eq(queueItems.id, eventMembers.itemId))
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .where(and(eq(eventMembers.eventId, eventId), isNull(eventMembers.removedAt)))
    .orderBy(asc(eventMembers.itemId));
}

type Member = Awaited<ReturnType<typeof activeMembers>>[number];

/** The decoded channels of the members' windows (kept in memory between relocations: window-cache.ts). */
async function memberStreams(db: DbOrTx, members: readonly Member[]): Promise<Array<ChainStream & { itemId: number }>> {
  if (members.length === 0) return [];
  const rows = await decodedWindows(db, members.map((m) => m.windowId));
  return rows.map((r) => {
    const m = members.find((x) => x.windowId === r.windowId) as Member;
    const [network = '', station = '', , channel = ''] = r.streamId.split('.');
    return { itemId: m.itemId, id: r.streamId, network, station, channel, sampleRateHz: r.sampleRateHz, startTimeUs: r.startTimeUs, samples: r.samples };
  });
}

/**
 * Responses of the members' channels from the registry (instrument-response.ts `responseFromRegistry`:
 * every StationXML stage when imported, as `npm run -s locate` reads them; refused, with why, when missing).
 */
async function memberResponses(db: DbOrTx, members: readonly Member[]): Promise<Map<string, ResponseResult>> {
  const out = new Map<string, ResponseResult>();
  if (members.length === 0) return out;
  const rows = await db
    .select({ network: stations.network, code: stations.code, location: channels.location, channel: channels.code, sensitivity: channels.sensitivity, sensitivityFrequencyHz: channels.sensitivityFrequencyHz, sensitivityInputUnits: channels.sensitivityInputUnits, response: channels.response })
    .from(channels)
    .innerJoin(stations, eq(stations.id, channels.stationId))
    .where(inArray(channels.stationId, [...new Set(members.map((m) => m.stationId))]));
  for (const r of rows) {
    const id = `${r.network}.${r.code}.${r.location}.${r.channel}`;
    out.set(id, responseFromRegistry(id, r));
  }
  return out;
}

/**
 * The automatic picks of some members' windows, stored as suggestions (author none, mode automatic),
 * consistent across the network (event-chain.ts `automaticPicksForStreams`): with the member
 * stations' positions and the network's velocity model, against each other and the event's existing
 * automatic P picks by the travel-time bound (the median-time rule when that cannot apply).
 */
async function storeAutomaticPicks(db: DbOrTx, eventId: number, members: readonly Member[], now: Date): Promise<void> {
  if (members.length === 0) return;
  const streams = await memberStreams(db, members);
  const existing = await db.select({ streamId: eventPicks.streamId, timeUs: eventPicks.timeUs, uncertaintyS: eventPicks.uncertaintyS }).from(eventPicks).where(and(eq(eventPicks.eventId, eventId), eq(eventPicks.evaluationMode, 'automatic'), eq(eventPicks.phase, 'P')));
  const reference = existing.length > 0 ? existing.map((p) => p.timeUs).sort((a, b) => a - b)[existing.length >> 1] : undefined;
  // Each station's own trigger settings (its profile: band-reject filters, STA/LTA).
  const profiles = new Map<string, ProcessingProfile>(members.map((m) => [`${m.network}.${m.code}`, processingProfileSchema.parse(m.profile ?? {})]));
  // Every member station's position and the network's model: the P times are checked against each
  // other, and against the event's existing P picks, by the travel-time bound.
  const all = await activeMembers(db, eventId);
  const stationList: ChainStation[] = [...new Map(all.map((m) => [`${m.network}.${m.code}`, { network: m.network, code: m.code, latitudeDeg: m.latitude, longitudeDeg: m.longitude }])).values()];
  const network = members[0]?.network ?? '';
  const settings = await networkSettings(db, network);
  const picks = automaticPicksForStreams(streams, (key) => profiles.get(key) ?? processingProfileSchema.parse({}), reference, { geometry: { stations: stationList, model: settings.model }, anchors: existing });
  if (picks.length === 0) return;
  await db.insert(eventPicks).values(
    picks.map((p) => ({
      eventId,
      itemId: streams.find((s) => s.id === p.streamId)?.itemId ?? null,
      streamId: p.streamId,
      phase: p.phase,
      timeUs: p.timeUs,
      uncertaintyS: p.uncertaintyS,
      onset: p.onset ?? null,
      polarity: p.polarity ?? null,
      evaluationMode: 'automatic',
      method: p.method ?? null,
      createdAt: now,
      updatedAt: now,
    })),
  );
}

/** Locks the event row, checks the version the caller read. @throws 404, 409 */
async function lockEvent(db: DbOrTx, eventId: number, expectedVersion?: number) {
  const [ev] = await db.select().from(seismicEvents).where(eq(seismicEvents.id, eventId)).for('update');
  if (!ev) throw notFound(`Event ${eventId}`);
  if (expectedVersion !== undefined && ev.version !== expectedVersion) throw conflict(`Event ${eventId} changed meanwhile (version ${ev.version}, you read ${expectedVersion}): reload it`, { version: ev.version });
  return ev;
}

/**
 * Locates the event again from its current members and picks, and stores the new origin (preferred)
 * with its arrivals, amplitudes, station magnitudes and magnitude, or the refusal. Call inside the
 * transaction that changed the event, after `lockEvent`. Records the live update as its last write.
 */
async function relocateLocked(db: DbOrTx, eventId: number, actor: EventActor, now: Date, opts: { fixedDepthKm?: number; kind?: 'created' | 'updated'; reason: string }): Promise<void> {
  const [ev] = await db.select().from(seismicEvents).where(eq(seismicEvents.id, eventId));
  if (!ev) throw notFound(`Event ${eventId}`);
  const members = await activeMembers(db, eventId);
  const memberStations = new Set(members.map((m) => `${m.network}.${m.code}`));
  const picks = (await db.select().from(eventPicks).where(eq(eventPicks.eventId, eventId))).filter((p) => memberStations.has(stationOf(p.streamId)));
  const manual = picks.filter((p) => p.evaluationMode === 'manual');
  const source = manual.length > 0 ? 'manual' : 'automatic';
  const used = manual.length > 0 ? manual : picks.filter((p) => p.evaluationMode === 'automatic');
  const chainPicks: ChainPick[] = used.map((p) => ({ streamId: p.streamId, phase: p.phase === 'S' ? 'S' : 'P', timeUs: p.timeUs, uncertaintyS: p.uncertaintyS, evaluationMode: p.evaluationMode === 'manual' ? 'manual' : 'automatic' }));
  const settings = await networkSettings(db, ev.network);
  const stationList: ChainStation[] = [...new Map(members.map((m) => [`${m.network}.${m.code}`, { network: m.network, code: m.code, latitudeDeg: m.latitude, longitudeDeg: m.longitude }])).values()];
  const streams = await memberStreams(db, members);
  const responses = await memberResponses(db, members);
  const overrides = new Map<string, ChainAmplitude>();
  for (const a of await db.select().from(eventAmplitudes).where(and(eq(eventAmplitudes.eventId, eventId), isNull(eventAmplitudes.originId)))) {
    overrides.set(a.streamId, { streamId: a.streamId, amplitudeMm: a.amplitudeMm, periodS: a.periodS, timeUs: a.timeUs, windowStartUs: a.windowStartUs, windowEndUs: a.windowEndUs, evaluationMode: 'manual' });
  }
  let solution;
  try {
    solution = solveEvent(streams, stationList, chainPicks, {
      velocityModel: settings.model,
      responses,
      profile: processingProfileSchema.parse({}),
      locate: opts.fixedDepthKm === undefined ? {} : { fixedDepthKm: opts.fixedDepthKm },
      minusLogA0: settings.minusLogA0,
      stationCorrections: settings.stationCorrections,
      amplitudeOverrides: overrides,
      woodAnderson: memoWoodAnderson,
    });
  } catch (err) {
    throw unprocessable(`Event ${eventId} cannot be located: ${err instanceof Error ? err.message : String(err)}`);
  }
  const stationIds = [...new Set(members.map((m) => m.stationId))];
  let originId: number | null = null;
  let magnitudeId: number | null = null;
  // A solution the picks do not constrain (stations all at one place, say) comes with unbounded
  // uncertainties: no usable location, and no number the database can store. Refused with why,
  // like any other location the picks cannot give; the event itself stays.
  const u = solution.origin?.uncertainty;
  const unbounded = u !== undefined && ![u.horizontalKm68, u.ellipse.semiMajorKm, u.ellipse.semiMinorKm, u.ellipse.azimuthDeg, u.timeS68, u.depthKm68 ?? 0, solution.origin?.rmsS ?? 0].every(Number.isFinite);
  const refusal = unbounded ? 'the picks do not constrain the epicentre (its uncertainty is unbounded): pick stations on more sides of it' : (solution.refusal?.reason ?? null);
  const o = unbounded ? null : solution.origin;
  if (o) {
    const [ins] = await db
      .insert(eventOrigins)
      .values({
        eventId,
        timeUs: Math.round(o.timeS * 1e6),
        latitude: o.latitudeDeg,
        longitude: o.longitudeDeg,
        depthKm: o.depthKm,
        depthFixed: o.depthFixed,
        depthFixedReason: o.depthFixedReason,
        horizontalKm68: o.uncertainty.horizontalKm68,
        ellipseMajorKm: o.uncertainty.ellipse.semiMajorKm,
        ellipseMinorKm: o.uncertainty.ellipse.semiMinorKm,
        ellipseAzimuthDeg: o.uncertainty.ellipse.azimuthDeg,
        depthKm68: o.uncertainty.depthKm68,
        timeS68: o.uncertainty.timeS68,
        rmsS: o.rmsS,
        azimuthalGapDeg: o.azimuthalGapDeg,
        minimumDistanceKm: o.minimumDistanceKm,
        usedPhases: o.usedPhaseCount,
        usedStations: o.usedStationCount,
        velocityModel: { name: settings.model.name, layers: settings.model.layers, isDefault: settings.model.isDefault === true },
        evaluationMode: source,
        authorUserId: actor?.id ?? null,
        notes: solution.notes,
        createdAt: now,
      })
      .$returningId();
    if (!ins) throw new Error('origin insert returned no id');
    originId = ins.id;
    const pickIdOf = new Map(used.map((p) => [`${p.streamId}#${p.phase}`, p.id]));
    if (solution.arrivals.length > 0) {
      await db.insert(eventArrivals).values(
        solution.arrivals.map((a) => ({
          originId: ins.id,
          pickId: pickIdOf.get(`${a.streamId}#${a.phase}`) ?? null,
          streamId: a.streamId,
          phase: a.phase,
          modelPhase: a.modelPhase,
          residualS: a.residualS,
          distanceKm: a.distanceKm,
          azimuthDeg: a.azimuthDeg,
          takeoffAngleDeg: a.takeoffAngleDeg,
          weight: a.weight,
        })),
      );
    }
    if (solution.amplitudes.length > 0) {
      await db.insert(eventAmplitudes).values(
        solution.amplitudes.map((a) => ({ eventId, originId: ins.id, streamId: a.streamId, amplitudeMm: a.amplitudeMm, periodS: a.periodS, timeUs: a.timeUs, windowStartUs: a.windowStartUs, windowEndUs: a.windowEndUs, evaluationMode: a.evaluationMode, authorUserId: a.evaluationMode === 'manual' ? (actor?.id ?? null) : null, createdAt: now })),
      );
    }
    if (solution.stationMagnitudes.length > 0) {
      await db.insert(eventStationMagnitudes).values(
        solution.stationMagnitudes.map((m) => ({ originId: ins.id, station: m.stationId, streamIds: m.streamIds, value: m.value, amplitudeMm: m.amplitudeMm, periodS: m.periodS, distanceKm: m.distanceKm, hypocentralDistanceKm: m.hypocentralDistanceKm })),
      );
    }
    if (solution.magnitude) {
      const mag = solution.magnitude;
      const [mi] = await db
        .insert(eventMagnitudes)
        .values({ eventId, originId: ins.id, type: mag.type, value: mag.value, uncertainty: mag.uncertainty, stationCount: mag.stationCount, method: mag.method, evaluationMode: source, authorUserId: actor?.id ?? null, createdAt: now })
        .$returningId();
      magnitudeId = mi?.id ?? null;
    }
  }
  const version = ev.version + (opts.kind === 'created' ? 0 : 1);
  await db
    .update(seismicEvents)
    .set({ preferredOriginId: originId ?? ev.preferredOriginId, preferredMagnitudeId: originId !== null ? magnitudeId : ev.preferredMagnitudeId, locationRefusal: refusal, version, updatedAt: now })
    .where(eq(seismicEvents.id, eventId));
  await recordChange(db, {
    resource: 'event',
    resourceId: eventId,
    kind: opts.kind ?? 'updated',
    version,
    summary: {
      reason: opts.reason,
      located: o !== null,
      ...(o ? { origin: new Date(Math.round(o.timeS * 1000)).toISOString(), latitude: Number(o.latitudeDeg.toFixed(4)), longitude: Number(o.longitudeDeg.toFixed(4)), depthKm: Number(o.depthKm.toFixed(1)) } : {}),
      ...(o && solution.magnitude ? { ml: Number(solution.magnitude.value.toFixed(1)) } : {}),
    },
    audience: { action: 'event.view', stationIds },
  });
}

/**
 * Events whose candidate group was folded into another (a later window made another window the
 * group's anchor, so its candidate row was replaced and the event lost its link): an event without a
 * candidate group whose windows now sit in candidate group c
 * - becomes c's event when c has none (the windows c gained are added by `syncEventsFromGroups`);
 * - is merged into c's event E when there is one: its windows E lacks and its analysts' picks move to
 *   E, its type and certainty fill E's when E has none, it is deleted (said on the live channel with
 *   the event it went into) and E is located again.
 * So one earthquake stays one event, and no analyst's work is lost. Events no group holds (assembled
 * by an analyst from windows no group joined) are left alone. At most `limit` per call.
 * @returns the ids of the events adopted or merged into
 */
async function reconcileOrphanEvents(db: Database, limit: number): Promise<number[]> {
  const orphans = await db
    .selectDistinct({ eventId: seismicEvents.id, candidateEventId: itemArrivals.candidateEventId })
    .from(seismicEvents)
    .innerJoin(eventMembers, and(eq(eventMembers.eventId, seismicEvents.id), isNull(eventMembers.removedAt)))
    .innerJoin(itemArrivals, eq(itemArrivals.itemId, eventMembers.itemId))
    .where(and(isNull(seismicEvents.candidateEventId), isNotNull(itemArrivals.candidateEventId)))
    .orderBy(asc(seismicEvents.id))
    .limit(limit);
  const touched: number[] = [];
  for (const { eventId: orphanId, candidateEventId } of orphans) {
    if (candidateEventId === null) continue;
    const into = await db.transaction(async (tx) => {
      const [group] = await tx.select({ id: candidateEvents.id }).from(candidateEvents).where(eq(candidateEvents.id, candidateEventId)).for('update');
      const [orphan] = await tx.select().from(seismicEvents).where(eq(seismicEvents.id, orphanId)).for('update');
      if (!group || !orphan || orphan.candidateEventId !== null) return null;
      const [owner] = await tx.select({ id: seismicEvents.id }).from(seismicEvents).where(eq(seismicEvents.candidateEventId, group.id)).for('update');
      const now = new Date();
      if (!owner) {
        await tx.update(seismicEvents).set({ candidateEventId: group.id, version: orphan.version + 1, updatedAt: now }).where(eq(seismicEvents.id, orphanId));
        return orphanId;
      }
      const target = await lockEvent(tx, owner.id);
      const moving = await activeMembers(tx, orphanId);
      const [orphanSources, targetRows] = await Promise.all([
        tx.select({ itemId: eventMembers.itemId, source: eventMembers.source }).from(eventMembers).where(eq(eventMembers.eventId, orphanId)),
        tx.select({ itemId: eventMembers.itemId, removedAt: eventMembers.removedAt }).from(eventMembers).where(eq(eventMembers.eventId, target.id)),
      ]);
      const targetHas = new Set(targetRows.map((r) => r.itemId));
      const there = new Set(targetRows.filter((r) => r.removedAt === null).map((r) => r.itemId));
      const add = moving.filter((m) => !there.has(m.itemId));
      // A window E once had and an analyst took out comes back only as the orphan held it (active).
      for (const m of add) {
        const source = orphanSources.find((r) => r.itemId === m.itemId)?.source ?? 'group';
        if (targetHas.has(m.itemId)) await tx.update(eventMembers).set({ removedAt: null, source }).where(and(eq(eventMembers.eventId, target.id), eq(eventMembers.itemId, m.itemId)));
        else await tx.insert(eventMembers).values({ eventId: target.id, itemId: m.itemId, source });
      }
      await tx.update(eventPicks).set({ eventId: target.id, updatedAt: now }).where(and(eq(eventPicks.eventId, orphanId), eq(eventPicks.evaluationMode, 'manual')));
      if (target.eventType === null && orphan.eventType !== null) await tx.update(seismicEvents).set({ eventType: orphan.eventType, typeCertainty: orphan.typeCertainty }).where(eq(seismicEvents.id, target.id));
      await tx.delete(seismicEvents).where(eq(seismicEvents.id, orphanId));
      await recordChange(tx, { resource: 'event', resourceId: orphanId, kind: 'deleted', version: 0, summary: { mergedInto: target.id }, audience: { action: 'event.view', stationIds: [...new Set(moving.map((m) => m.stationId))] } });
      if (add.length > 0) await storeAutomaticPicks(tx, target.id, (await activeMembers(tx, target.id)).filter((m) => add.some((a) => a.itemId === m.itemId)), now);
      await relocateLocked(tx, target.id, null, now, { reason: `event ${orphanId} of the same candidate group merged into it` });
      return target.id;
    });
    if (into !== null) touched.push(into);
  }
  return [...new Set(touched)];
}

/**
 * Makes an event of every candidate event that has none yet (members: the group's windows; picks:
 * automatic suggestions; then located), and adds to existing events the group members they lack
 * (not those an analyst took out), locating again. At most `limit` groups per call.
 * @returns the ids of the events created or changed
 */
export async function syncEventsFromGroups(deps: EventDeps, limit = 100): Promise<number[]> {
  const { db } = deps;
  const touched: number[] = await reconcileOrphanEvents(db, limit);
  const fresh = await db
    .select({ id: candidateEvents.id, firstArrivalAt: candidateEvents.firstArrivalAt })
    .from(candidateEvents)
    .leftJoin(seismicEvents, eq(seismicEvents.candidateEventId, candidateEvents.id))
    .where(isNull(seismicEvents.id))
    .orderBy(asc(candidateEvents.firstArrivalAt))
    .limit(limit);
  for (const c of fresh) {
    const id = await db.transaction(async (tx) => {
      const [group] = await tx.select().from(candidateEvents).where(eq(candidateEvents.id, c.id)).for('update');
      if (!group) return null;
      const [exists] = await tx.select({ id: seismicEvents.id }).from(seismicEvents).where(eq(seismicEvents.candidateEventId, c.id));
      if (exists) return null;
      const memberRows = await tx
        .select({ itemId: itemArrivals.itemId, network: stations.network })
        .from(itemArrivals)
        .innerJoin(stations, eq(stations.id, itemArrivals.stationId))
        .where(eq(itemArrivals.candidateEventId, c.id))
        .orderBy(asc(itemArrivals.arrivalAt));
      // A window belongs to one event at a time: those another event holds stay there.
      const held = await eventMembershipOf(tx, memberRows.map((m) => m.itemId));
      const free = memberRows.filter((m) => !held.has(m.itemId));
      if (free.length === 0) return null;
      const now = new Date();
      const [ins] = await tx
        .insert(seismicEvents)
        .values({ network: memberRows[0]?.network ?? '', candidateEventId: c.id, firstArrivalAt: group.firstArrivalAt, version: 1, createdAt: now, updatedAt: now })
        .$returningId();
      if (!ins) throw new Error('event insert returned no id');
      await tx.insert(eventMembers).values(free.map((m) => ({ eventId: ins.id, itemId: m.itemId, source: 'group' })));
      await storeAutomaticPicks(tx, ins.id, await activeMembers(tx, ins.id), now);
      await relocateLocked(tx, ins.id, null, now, { kind: 'created', reason: 'built from a candidate event' });
      return ins.id;
    });
    if (id !== null) touched.push(id);
  }
  // Groups that grew since their event was built.
  const grown = await db
    .select({ eventId: seismicEvents.id, itemId: itemArrivals.itemId })
    .from(itemArrivals)
    .innerJoin(seismicEvents, eq(seismicEvents.candidateEventId, itemArrivals.candidateEventId))
    .leftJoin(eventMembers, and(eq(eventMembers.eventId, seismicEvents.id), eq(eventMembers.itemId, itemArrivals.itemId)))
    .where(isNull(eventMembers.itemId))
    .limit(limit);
  for (const eventId of [...new Set(grown.map((g) => g.eventId))]) {
    await db.transaction(async (tx) => {
      await lockEvent(tx, eventId);
      const now = new Date();
      const items = grown.filter((g) => g.eventId === eventId).map((g) => g.itemId);
      await tx.insert(eventMembers).values(items.map((itemId) => ({ eventId, itemId, source: 'group' }))).onDuplicateKeyUpdate({ set: { source: sql`source` } });
      await storeAutomaticPicks(tx, eventId, (await activeMembers(tx, eventId)).filter((m) => items.includes(m.itemId)), now);
      await relocateLocked(tx, eventId, null, now, { reason: 'the candidate event gained members' });
    });
    touched.push(eventId);
  }
  if (touched.length > 0) deps.notify?.();
  return touched;
}

/**
 * An event an analyst assembles from windows (queue items) that no candidate group joined: its
 * members, automatic picks as suggestions, then located (or refused with the reason), in one
 * transaction with one live update.
 * @throws AppError 404 for a missing item; 409 when one is already in an event; 422 without items
 */
export async function createEventFromItems(deps: EventDeps, actor: EventActor, itemIds: readonly number[]): Promise<number> {
  const ids = [...new Set(itemIds)];
  if (ids.length === 0) throw unprocessable('itemIds: an event needs at least one window');
  const id = await deps.db.transaction(async (tx) => {
    const items = await tx
      .select({ id: queueItems.id, windowStart: queueItems.windowStart, network: stations.network })
      .from(queueItems)
      .innerJoin(stations, eq(stations.id, queueItems.stationId))
      .where(inArray(queueItems.id, ids))
      .for('update');
    const missing = ids.filter((i) => !items.some((x) => x.id === i));
    if (missing.length > 0) throw notFound(`Queue item ${missing.join(', ')}`);
    const taken = await eventMembershipOf(tx, ids);
    if (taken.size > 0) throw conflict(`Window ${[...taken.keys()].join(', ')} is already in event ${[...new Set(taken.values())].join(', ')}`);
    const now = new Date();
    const first = items.reduce((a, b) => (b.windowStart < a.windowStart ? b : a));
    const [ins] = await tx.insert(seismicEvents).values({ network: first.network, firstArrivalAt: first.windowStart, version: 1, createdAt: now, updatedAt: now }).$returningId();
    if (!ins) throw new Error('event insert returned no id');
    await tx.insert(eventMembers).values(ids.map((itemId) => ({ eventId: ins.id, itemId, source: 'analyst', changedByUserId: actor?.id ?? null })));
    await storeAutomaticPicks(tx, ins.id, await activeMembers(tx, ins.id), now);
    const p = await tx.select({ t: eventPicks.timeUs }).from(eventPicks).where(and(eq(eventPicks.eventId, ins.id), eq(eventPicks.phase, 'P')));
    if (p.length > 0) await tx.update(seismicEvents).set({ firstArrivalAt: new Date(Math.min(...p.map((x) => x.t)) / 1000) }).where(eq(seismicEvents.id, ins.id));
    await relocateLocked(tx, ins.id, actor, now, { kind: 'created', reason: 'assembled from windows' });
    return ins.id;
  });
  deps.notify?.();
  return id;
}

/** The station ids of an event's active members (for scope checks). */
export async function eventStationIds(db: DbOrTx, eventId: number): Promise<number[] | null> {
  const [ev] = await db.select({ id: seismicEvents.id }).from(seismicEvents).where(eq(seismicEvents.id, eventId));
  if (!ev) return null;
  const rows = await db
    .select({ stationId: queueItems.stationId })
    .from(eventMembers)
    .innerJoin(queueItems, eq(queueItems.id, eventMembers.itemId))
    .where(and(eq(eventMembers.eventId, eventId), isNull(eventMembers.removedAt)));
  return [...new Set(rows.map((r) => r.stationId))];
}

/** Runs `change` on the locked event and relocates, in one transaction; notifies after the commit. */
async function changeEvent(deps: EventDeps, eventId: number, expectedVersion: number, actor: EventActor, reason: string, change: (tx: DbOrTx, now: Date) => Promise<{ fixedDepthKm?: number } | void>): Promise<void> {
  await deps.db.transaction(async (tx) => {
    await lockEvent(tx, eventId, expectedVersion);
    const now = new Date();
    const opts = (await change(tx, now)) ?? {};
    await relocateLocked(tx, eventId, actor, now, { ...opts, reason });
  });
  deps.notify?.();
}

/** The member window (of the event) a stream's pick belongs to, checked: its station is a member and the time lies in that window. @throws 422 */
async function memberForPick(db: DbOrTx, eventId: number, streamId: string, timeUs: number): Promise<number> {
  const members = await activeMembers(db, eventId);
  const candidates = members.filter((m) => `${m.network}.${m.code}` === stationOf(streamId));
  if (candidates.length === 0) throw unprocessable(`${streamId}: station ${stationOf(streamId)} has no window in this event (add its window as a member first)`);
  const rows = await db.select({ windowId: windowChannels.windowId, streamId: windowChannels.streamId, startTimeUs: windowChannels.startTimeUs, sampleCount: windowChannels.sampleCount, sampleRateHz: windowChannels.sampleRateHz }).from(windowChannels).where(inArray(windowChannels.windowId, candidates.map((c) => c.windowId)));
  const hit = rows.find((r) => r.streamId === streamId && timeUs >= r.startTimeUs && timeUs <= r.startTimeUs + (r.sampleCount / r.sampleRateHz) * 1e6);
  if (!hit) {
    const has = rows.some((r) => r.streamId === streamId);
    throw unprocessable(has ? `${streamId}: the time lies outside the member window of this channel` : `${streamId}: no member window of this event holds that channel`);
  }
  return (candidates.find((c) => c.windowId === hit.windowId) as Member).itemId;
}

const toUs = (iso: string): number => {
  const m = /\.(\d{1,6})Z$/u.exec(iso);
  const frac = m ? Number((m[1] as string).padEnd(6, '0')) : 0;
  return Math.floor(Date.parse(iso.replace(/\.\d+Z$/u, 'Z'))) * 1000 + frac;
};

/** An analyst's pick: stored as `manual` with its author; the event relocates from the analysts' picks. @throws 404, 409, 422 */
export async function addPick(
  deps: EventDeps,
  actor: NonNullable<EventActor>,
  eventId: number,
  body: { streamId: string; phase: 'P' | 'S'; time: string; uncertaintyS: number; onset: string; polarity: string; eventVersion: number },
): Promise<number> {
  let id = 0;
  await changeEvent(deps, eventId, body.eventVersion, actor, `${body.phase} pick on ${body.streamId}`, async (tx, now) => {
    const timeUs = toUs(body.time);
    const itemId = await memberForPick(tx, eventId, body.streamId, timeUs);
    const [dup] = await tx
      .select({ id: eventPicks.id })
      .from(eventPicks)
      .where(and(eq(eventPicks.eventId, eventId), eq(eventPicks.evaluationMode, 'manual'), eq(eventPicks.phase, body.phase), sql`SUBSTRING_INDEX(${eventPicks.streamId}, '.', 2) = ${stationOf(body.streamId)}`));
    if (dup) throw conflict(`Station ${stationOf(body.streamId)} already has an analyst's ${body.phase} pick (${dup.id}): change that one`);
    const [ins] = await tx
      .insert(eventPicks)
      .values({ eventId, itemId, streamId: body.streamId, phase: body.phase, timeUs, uncertaintyS: body.uncertaintyS, onset: body.onset, polarity: body.polarity, evaluationMode: 'manual', authorUserId: actor.id, createdAt: now, updatedAt: now })
      .$returningId();
    id = ins?.id ?? 0;
  });
  return id;
}

/** Changes an analyst's pick (never an automatic one: accept it first). @throws 404, 409, 422 */
export async function updatePick(
  deps: EventDeps,
  actor: NonNullable<EventActor>,
  eventId: number,
  pickId: number,
  body: { streamId?: string | undefined; phase: 'P' | 'S'; time: string; uncertaintyS: number; onset: string; polarity: string; eventVersion: number },
): Promise<void> {
  await changeEvent(deps, eventId, body.eventVersion, actor, `pick ${pickId} changed`, async (tx, now) => {
    const [p] = await tx.select().from(eventPicks).where(and(eq(eventPicks.id, pickId), eq(eventPicks.eventId, eventId)));
    if (!p) throw notFound(`Pick ${pickId} of event ${eventId}`);
    if (p.evaluationMode !== 'manual') throw unprocessable(`Pick ${pickId} is an automatic suggestion: accept it (POST /api/events/${eventId}/picks/accept) or add your own`);
    const streamId = body.streamId ?? p.streamId;
    const timeUs = toUs(body.time);
    const itemId = await memberForPick(tx, eventId, streamId, timeUs);
    await tx
      .update(eventPicks)
      .set({ streamId, itemId, phase: body.phase, timeUs, uncertaintyS: body.uncertaintyS, onset: body.onset, polarity: body.polarity, authorUserId: actor.id, version: p.version + 1, updatedAt: now })
      .where(eq(eventPicks.id, pickId));
  });
}

/** Removes an analyst's pick. @throws 404, 409, 422 */
export async function deletePick(deps: EventDeps, actor: NonNullable<EventActor>, eventId: number, pickId: number, eventVersion: number): Promise<void> {
  await changeEvent(deps, eventId, eventVersion, actor, `pick ${pickId} removed`, async (tx) => {
    const [p] = await tx.select().from(eventPicks).where(and(eq(eventPicks.id, pickId), eq(eventPicks.eventId, eventId)));
    if (!p) throw notFound(`Pick ${pickId} of event ${eventId}`);
    if (p.evaluationMode !== 'manual') throw unprocessable(`Pick ${pickId} is an automatic suggestion: suggestions are not removed, only not accepted`);
    await tx.update(eventArrivals).set({ pickId: null }).where(eq(eventArrivals.pickId, pickId));
    await tx.delete(eventPicks).where(eq(eventPicks.id, pickId));
  });
}

/** Takes automatic suggestions over as the analyst's own picks (all of them when `pickIds` is absent); stations that already have the analyst's pick of that phase keep it. */
export async function acceptAutomaticPicks(deps: EventDeps, actor: NonNullable<EventActor>, eventId: number, pickIds: readonly number[] | undefined, eventVersion: number): Promise<number> {
  let accepted = 0;
  await changeEvent(deps, eventId, eventVersion, actor, 'automatic picks accepted', async (tx, now) => {
    const all = await tx.select().from(eventPicks).where(eq(eventPicks.eventId, eventId));
    const autos = all.filter((p) => p.evaluationMode === 'automatic' && (pickIds === undefined || pickIds.includes(p.id)));
    if (pickIds !== undefined) {
      const missing = pickIds.filter((id) => !autos.some((p) => p.id === id));
      if (missing.length > 0) throw unprocessable(`pickIds: ${missing.join(', ')} ${missing.length === 1 ? 'is not an automatic pick' : 'are not automatic picks'} of event ${eventId}`);
    }
    const taken = new Set(all.filter((p) => p.evaluationMode === 'manual').map((p) => `${stationOf(p.streamId)}#${p.phase}`));
    const rows = autos.filter((p) => !taken.has(`${stationOf(p.streamId)}#${p.phase}`));
    if (rows.length > 0) {
      await tx.insert(eventPicks).values(
        rows.map((p) => ({ eventId, itemId: p.itemId, streamId: p.streamId, phase: p.phase, timeUs: p.timeUs, uncertaintyS: p.uncertaintyS, onset: p.onset, polarity: p.polarity, evaluationMode: 'manual', authorUserId: actor.id, method: `accepted automatic pick ${p.id}`, createdAt: now, updatedAt: now })),
      );
    }
    accepted = rows.length;
  });
  return accepted;
}

/** An analyst's Wood-Anderson amplitude for a horizontal channel: replaces the reading in this and every later location. */
export async function repickAmplitude(deps: EventDeps, actor: NonNullable<EventActor>, eventId: number, body: { streamId: string; amplitudeMm: number; periodS: number | null; time: string; eventVersion: number }): Promise<void> {
  if (!/[NE12]$/u.test(body.streamId)) throw unprocessable(`${body.streamId}: ML reads amplitudes on the horizontal channels only`);
  await changeEvent(deps, eventId, body.eventVersion, actor, `amplitude re-picked on ${body.streamId}`, async (tx, now) => {
    const timeUs = toUs(body.time);
    await memberForPick(tx, eventId, body.streamId, timeUs);
    await tx.delete(eventAmplitudes).where(and(eq(eventAmplitudes.eventId, eventId), isNull(eventAmplitudes.originId), eq(eventAmplitudes.streamId, body.streamId)));
    await tx.insert(eventAmplitudes).values({ eventId, originId: null, streamId: body.streamId, amplitudeMm: body.amplitudeMm, periodS: body.periodS, timeUs, windowStartUs: timeUs, windowEndUs: timeUs, evaluationMode: 'manual', authorUserId: actor.id, createdAt: now });
  });
}

/** Drops an analyst's amplitude: the automatic reading counts again. */
export async function revertAmplitude(deps: EventDeps, actor: NonNullable<EventActor>, eventId: number, streamId: string, eventVersion: number): Promise<void> {
  await changeEvent(deps, eventId, eventVersion, actor, `amplitude on ${streamId} back to the automatic reading`, async (tx) => {
    const [r] = await tx.delete(eventAmplitudes).where(and(eq(eventAmplitudes.eventId, eventId), isNull(eventAmplitudes.originId), eq(eventAmplitudes.streamId, streamId)));
    if (r.affectedRows === 0) throw notFound(`An analyst's amplitude on ${streamId} in event ${eventId}`);
  });
}

/** Adds a window (queue item) to the event, with its automatic picks. @throws 404, 409, 422 */
export async function addMember(deps: EventDeps, actor: NonNullable<EventActor>, eventId: number, itemId: number, eventVersion: number): Promise<void> {
  await changeEvent(deps, eventId, eventVersion, actor, `window ${itemId} added`, async (tx, now) => {
    const [item] = await tx.select({ id: queueItems.id }).from(queueItems).where(eq(queueItems.id, itemId));
    if (!item) throw notFound(`Queue item ${itemId}`);
    const [row] = await tx.select().from(eventMembers).where(and(eq(eventMembers.eventId, eventId), eq(eventMembers.itemId, itemId)));
    if (row && row.removedAt === null) throw conflict(`Window ${itemId} is already in event ${eventId}`);
    if (row) await tx.update(eventMembers).set({ removedAt: null, changedByUserId: actor.id }).where(and(eq(eventMembers.eventId, eventId), eq(eventMembers.itemId, itemId)));
    else await tx.insert(eventMembers).values({ eventId, itemId, source: 'analyst', changedByUserId: actor.id });
    const hasAuto = await tx.select({ id: eventPicks.id }).from(eventPicks).where(and(eq(eventPicks.eventId, eventId), eq(eventPicks.itemId, itemId), eq(eventPicks.evaluationMode, 'automatic'))).limit(1);
    if (hasAuto.length === 0) await storeAutomaticPicks(tx, eventId, (await activeMembers(tx, eventId)).filter((m) => m.itemId === itemId), now);
  });
}

/** Takes a window out of the event (kept as removed, so the group does not bring it back). @throws 404, 409 */
export async function removeMember(deps: EventDeps, actor: NonNullable<EventActor>, eventId: number, itemId: number, eventVersion: number): Promise<void> {
  await changeEvent(deps, eventId, eventVersion, actor, `window ${itemId} removed`, async (tx, now) => {
    const [r] = await tx.update(eventMembers).set({ removedAt: now, changedByUserId: actor.id }).where(and(eq(eventMembers.eventId, eventId), eq(eventMembers.itemId, itemId), isNull(eventMembers.removedAt)));
    if (r.affectedRows === 0) throw notFound(`Window ${itemId} in event ${eventId}`);
  });
}

/** Locates again on request, optionally with the depth fixed by the analyst. */
export async function relocateEvent(deps: EventDeps, actor: NonNullable<EventActor>, eventId: number, body: { fixedDepthKm?: number | undefined; eventVersion: number }): Promise<void> {
  await changeEvent(deps, eventId, body.eventVersion, actor, body.fixedDepthKm === undefined ? 'relocated' : `relocated with the depth fixed at ${body.fixedDepthKm} km`, async () => (body.fixedDepthKm === undefined ? {} : { fixedDepthKm: body.fixedDepthKm }));
}

/** Labels the event: type, certainty and (a supervisor's) evaluation status; no relocation. */
export async function labelEvent(deps: EventDeps, eventId: number, body: { eventType: string | null; typeCertainty: string | null; evaluationStatus?: string | undefined; eventVersion: number }): Promise<void> {
  await deps.db.transaction(async (tx) => {
    const ev = await lockEvent(tx, eventId, body.eventVersion);
    const version = ev.version + 1;
    await tx.update(seismicEvents).set({ eventType: body.eventType, typeCertainty: body.typeCertainty, ...(body.evaluationStatus ? { evaluationStatus: body.evaluationStatus } : {}), version, updatedAt: new Date() }).where(eq(seismicEvents.id, eventId));
    const stationIds = (await eventStationIds(tx, eventId)) ?? [];
    await recordChange(tx, { resource: 'event', resourceId: eventId, kind: 'updated', version, summary: { reason: 'labelled', eventType: body.eventType }, audience: { action: 'event.view', stationIds } });
  });
  deps.notify?.();
}

// ---------------------------------------------------------------------------------------------
// Reading.

const iso = (us: number): string => new Date(Math.round(us / 1000)).toISOString();

async function authorNames(db: DbOrTx, ids: ReadonlyArray<string | null>): Promise<Map<string, string>> {
  const wanted = [...new Set(ids.filter((i): i is string => i !== null))];
  if (wanted.length === 0) return new Map();
  const rows = await db.select({ id: users.id, name: users.displayName }).from(users).where(inArray(users.id, wanted));
  return new Map(rows.map((r) => [r.id, r.name]));
}

/** Event rows with their preferred origin and magnitude, for the list and the catalogue. */
export async function listEvents(db: Database, q: { from?: Date | undefined; to?: Date | undefined; limit: number }, scope: 'all' | readonly number[]): Promise<EventSummary[]> {
  const conds = [q.from ? gte(seismicEvents.firstArrivalAt, q.from) : undefined, q.to ? lt(seismicEvents.firstArrivalAt, q.to) : undefined].filter((c) => c !== undefined);
  const rows = await db
    .select({ e: seismicEvents, o: eventOrigins, m: eventMagnitudes })
    .from(seismicEvents)
    .leftJoin(eventOrigins, eq(eventOrigins.id, seismicEvents.preferredOriginId))
    .leftJoin(eventMagnitudes, eq(eventMagnitudes.id, seismicEvents.preferredMagnitudeId))
    .where(conds.length > 0 ? and(...conds) : undefined)
    .orderBy(desc(seismicEvents.firstArrivalAt))
    .limit(q.limit);
  if (rows.length === 0) return [];
  const mem = await db
    .select({ eventId: eventMembers.eventId, stationId: queueItems.stationId, itemId: eventMembers.itemId, network: stations.network, code: stations.code })
    .from(eventMembers)
    .innerJoin(queueItems, eq(queueItems.id, eventMembers.itemId))
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .where(and(inArray(eventMembers.eventId, rows.map((r) => r.e.id)), isNull(eventMembers.removedAt)));
  const out: EventSummary[] = [];
  for (const { e, o, m } of rows) {
    const st = [...new Set(mem.filter((x) => x.eventId === e.id).map((x) => x.stationId))];
    if (scope !== 'all' && !st.some((s) => scope.includes(s))) continue;
    const own = mem.filter((x) => x.eventId === e.id);
    out.push(summary(e, o, m, st.length, own.map((x) => x.itemId), own.map((x) => `${x.network}.${x.code}`)));
  }
  return out;
}

function summary(e: typeof seismicEvents.$inferSelect, o: typeof eventOrigins.$inferSelect | null, m: typeof eventMagnitudes.$inferSelect | null, stationCount: number, memberItemIds: number[], stationCodes: string[]): EventSummary {
  return {
    id: e.id,
    network: e.network,
    firstArrival: e.firstArrivalAt.toISOString(),
    originTime: o ? iso(o.timeUs) : null,
    latitude: o?.latitude ?? null,
    longitude: o?.longitude ?? null,
    depthKm: o?.depthKm ?? null,
    depthFixed: o?.depthFixed ?? null,
    horizontalKm68: o?.horizontalKm68 ?? null,
    magnitude: m?.value ?? null,
    magnitudeUncertainty: m?.uncertainty ?? null,
    magnitudeType: m?.type ?? null,
    magnitudeStationCount: m?.stationCount ?? null,
    stationCount,
    usedStations: o?.usedStations ?? null,
    azimuthalGapDeg: o?.azimuthalGapDeg ?? null,
    rmsS: o?.rmsS ?? null,
    eventType: e.eventType,
    typeCertainty: e.typeCertainty,
    evaluationStatus: z.enum(['preliminary', 'confirmed', 'reviewed', 'final', 'rejected']).catch('preliminary').parse(e.evaluationStatus),
    evaluationMode: o ? (o.evaluationMode === 'manual' ? 'manual' : 'automatic') : null,
    locationRefusal: e.locationRefusal,
    candidateEventId: e.candidateEventId,
    memberItemIds,
    stations: [...new Set(stationCodes)].sort(),
    version: e.version,
  };
}

/** Everything about one event (null when missing or out of `scope`). */
export async function getEventDetail(db: Database, eventId: number, scope: 'all' | readonly number[]): Promise<EventDetail | null> {
  const [row] = await db
    .select({ e: seismicEvents, o: eventOrigins, m: eventMagnitudes })
    .from(seismicEvents)
    .leftJoin(eventOrigins, eq(eventOrigins.id, seismicEvents.preferredOriginId))
    .leftJoin(eventMagnitudes, eq(eventMagnitudes.id, seismicEvents.preferredMagnitudeId))
    .where(eq(seismicEvents.id, eventId));
  if (!row) return null;
  const { e, o, m } = row;
  const members = await db
    .select({ itemId: eventMembers.itemId, source: eventMembers.source, removedAt: eventMembers.removedAt, stationId: stations.id, network: stations.network, code: stations.code, windowStart: queueItems.windowStart })
    .from(eventMembers)
    .innerJoin(queueItems, eq(queueItems.id, eventMembers.itemId))
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .where(eq(eventMembers.eventId, eventId))
    .orderBy(asc(queueItems.windowStart), asc(eventMembers.itemId));
  const activeStations = [...new Set(members.filter((x) => x.removedAt === null).map((x) => x.stationId))];
  if (scope !== 'all' && !activeStations.some((s) => scope.includes(s))) return null;
  const picks = await db.select().from(eventPicks).where(eq(eventPicks.eventId, eventId)).orderBy(asc(eventPicks.timeUs), asc(eventPicks.id));
  const arrivals = o ? await db.select().from(eventArrivals).where(eq(eventArrivals.originId, o.id)).orderBy(asc(eventArrivals.distanceKm), asc(eventArrivals.phase)) : [];
  const amps = o ? await db.select().from(eventAmplitudes).where(eq(eventAmplitudes.originId, o.id)).orderBy(asc(eventAmplitudes.streamId)) : [];
  const stationMags = o ? await db.select().from(eventStationMagnitudes).where(eq(eventStationMagnitudes.originId, o.id)).orderBy(asc(eventStationMagnitudes.distanceKm)) : [];
  const origins = await db.select({ id: eventOrigins.id, timeUs: eventOrigins.timeUs, latitude: eventOrigins.latitude, longitude: eventOrigins.longitude, depthKm: eventOrigins.depthKm, rmsS: eventOrigins.rmsS, evaluationMode: eventOrigins.evaluationMode, createdAt: eventOrigins.createdAt }).from(eventOrigins).where(eq(eventOrigins.eventId, eventId)).orderBy(desc(eventOrigins.id)).limit(50);
  const names = await authorNames(db, [...picks.map((p) => p.authorUserId), o?.authorUserId ?? null, ...amps.map((a) => a.authorUserId)]);
  const name = (id: string | null): string | null => (id === null ? null : (names.get(id) ?? 'former user'));
  const pickView = (p: typeof eventPicks.$inferSelect) => ({
    id: p.id,
    streamId: p.streamId,
    phase: p.phase === 'S' ? ('S' as const) : ('P' as const),
    time: iso(p.timeUs),
    uncertaintyS: p.uncertaintyS,
    onset: p.onset,
    polarity: p.polarity,
    evaluationMode: p.evaluationMode === 'manual' ? ('manual' as const) : ('automatic' as const),
    author: name(p.authorUserId),
    method: p.method,
    version: p.version,
  });
  const velocityModel = z.object({ name: z.string(), isDefault: z.boolean().default(false) }).catch({ name: 'unknown', isDefault: false }).parse(o?.velocityModel);
  const manual = picks.filter((p) => p.evaluationMode === 'manual');
  return {
    caution: EVENT_CAUTION,
    event: summary(
      e,
      o,
      m,
      activeStations.length,
      members.filter((x) => x.removedAt === null).map((x) => x.itemId),
      members.filter((x) => x.removedAt === null).map((x) => `${x.network}.${x.code}`),
    ),
    members: members.map((x) => ({ itemId: x.itemId, station: `${x.network}.${x.code}`, stationId: x.stationId, source: x.source, removed: x.removedAt !== null, windowStart: x.windowStart.toISOString() })),
    origin: o
      ? {
          id: o.id,
          time: iso(o.timeUs),
          latitude: o.latitude,
          longitude: o.longitude,
          depthKm: o.depthKm,
          depthFixed: o.depthFixed,
          depthFixedReason: o.depthFixedReason,
          uncertainty: { horizontalKm68: o.horizontalKm68, ellipse: { semiMajorKm: o.ellipseMajorKm, semiMinorKm: o.ellipseMinorKm, azimuthDeg: o.ellipseAzimuthDeg }, depthKm: o.depthKm68, timeS: o.timeS68 },
          rmsS: o.rmsS,
          azimuthalGapDeg: o.azimuthalGapDeg,
          minimumDistanceKm: o.minimumDistanceKm,
          usedPhases: o.usedPhases,
          usedStations: o.usedStations,
          velocityModel,
          evaluationMode: o.evaluationMode === 'manual' ? 'manual' : 'automatic',
          author: name(o.authorUserId),
          notes: o.notes,
          createdAt: o.createdAt.toISOString(),
        }
      : null,
    arrivals: arrivals.map((a) => ({ pickId: a.pickId, streamId: a.streamId, phase: a.phase, modelPhase: a.modelPhase, residualS: a.residualS, distanceKm: a.distanceKm, azimuthDeg: a.azimuthDeg, takeoffAngleDeg: a.takeoffAngleDeg, weight: a.weight })),
    picks: { analyst: manual.map(pickView), automatic: picks.filter((p) => p.evaluationMode !== 'manual').map(pickView), usedForLocation: manual.length > 0 ? 'manual' : 'automatic' },
    amplitudes: amps.map((a) => ({ id: a.id, streamId: a.streamId, amplitudeMm: a.amplitudeMm, periodS: a.periodS, time: iso(a.timeUs), evaluationMode: a.evaluationMode === 'manual' ? ('manual' as const) : ('automatic' as const), author: name(a.authorUserId) })),
    stationMagnitudes: stationMags.map((s) => ({ station: s.station, streamIds: s.streamIds, value: s.value, amplitudeMm: s.amplitudeMm, periodS: s.periodS, distanceKm: s.distanceKm, hypocentralDistanceKm: s.hypocentralDistanceKm })),
    magnitude: m ? { type: m.type, value: m.value, uncertainty: m.uncertainty, stationCount: m.stationCount, method: m.method, evaluationMode: m.evaluationMode === 'manual' ? 'manual' : 'automatic' } : null,
    origins: origins.map((x) => ({ id: x.id, time: iso(x.timeUs), latitude: x.latitude, longitude: x.longitude, depthKm: x.depthKm, rmsS: x.rmsS, evaluationMode: x.evaluationMode, createdAt: x.createdAt.toISOString(), preferred: x.id === e.preferredOriginId })),
  };
}

/** Which event (if any) holds each item, among `itemIds` (active members only). */
export async function eventMembershipOf(db: DbOrTx, itemIds: readonly number[]): Promise<Map<number, number>> {
  if (itemIds.length === 0) return new Map();
  const rows = await db
    .select({ itemId: eventMembers.itemId, eventId: eventMembers.eventId })
    .from(eventMembers)
    .where(and(inArray(eventMembers.itemId, [...itemIds]), isNull(eventMembers.removedAt)))
    .orderBy(asc(eventMembers.eventId));
  return new Map(rows.map((r) => [r.itemId, r.eventId]));
}

/** Ids of the events whose first arrival lies in [from, to) and whose own evaluation status is one of `statuses`. */
export async function eventIdsWithStatus(db: DbOrTx, period: { from: Date; to: Date }, statuses: readonly string[]): Promise<number[]> {
  if (statuses.length === 0) return [];
  const rows = await db
    .select({ id: seismicEvents.id })
    .from(seismicEvents)
    .where(and(gte(seismicEvents.firstArrivalAt, period.from), lt(seismicEvents.firstArrivalAt, period.to), inArray(seismicEvents.evaluationStatus, [...statuses])))
    .orderBy(asc(seismicEvents.firstArrivalAt));
  return rows.map((r) => r.id);
}
