import { Router, type Request } from 'express';
import { z } from 'zod';
import {
  acceptPicksBodySchema,
  amplitudeBodySchema,
  eventCreateBodySchema,
  eventLabelBodySchema,
  eventListQuerySchema,
  memberBodySchema,
  networkParamsSchema,
  pickBodySchema,
  pickUpdateBodySchema,
  relocateBodySchema,
  velocityModelBodySchema,
  EVENT_CAUTION,
} from '@shared/schemas/events';
import { eventTracesQuerySchema } from '@shared/schemas/event-traces';
import { streamIdSchema } from '@shared/schemas/label';
import { can } from '@shared/auth/policies';
import type { AppContext } from '@server/context';
import { clientAddress, currentUser, requireUser } from '@server/auth/authenticate';
import { forbidden, notFound } from '@server/errors';
import { parseInput } from '@server/http/validate';
import { authorizedStations, requirePermission } from '@server/policies/authorize';
import {
  acceptAutomaticPicks,
  addMember,
  addPick,
  createEventFromItems,
  deletePick,
  eventStationIds,
  getEventDetail,
  labelEvent,
  listEvents,
  relocateEvent,
  removeMember,
  repickAmplitude,
  revertAmplitude,
  updatePick,
  type EventDeps,
} from './event-service';
import { eventGeometry } from './event-geometry';
import { createTracesCache } from '@server/http/traces-cache';
import { planEventTraces } from './event-traces';
import { networkSettings, saveVelocityModel, velocityModelView } from './event-settings';

const id = (what: string) => z.string().regex(/^\d{1,15}$/, `must be ${what} (a whole number)`).transform(Number);
/** Params `:id` of an event. */
export const eventParams = z.object({ id: id('an event id') });
/** Params `:id/picks/:pickId`. */
export const pickParams = z.object({ id: id('an event id'), pickId: id('a pick id') });
/** Params `:id/members/:itemId`. */
export const memberParams = z.object({ id: id('an event id'), itemId: id('a queue item id') });
/** Params `:id/amplitudes/:streamId`. */
export const amplitudeParams = z.object({ id: id('an event id'), streamId: streamIdSchema });
/** Query `?eventVersion=` of the DELETE routes (the event version read). */
export const versionQuery = z.object({ eventVersion: z.coerce.number().int().positive() });

/**
 * The events API (issue 17), mounted at /api/events. Every route needs a session (401) and its
 * permission (403, from shared/auth/policies.ts, the module the live channel filters with);
 * an event outside an operator's stations answers 404.
 * - `GET /` (event.view): events by first arrival `?from=&to=&limit=`, built first from any new
 *   candidate-event group; `GET /:id` (event.view): the event with its origin, arrivals, picks
 *   (analysts' and automatic apart), amplitudes and magnitudes; `POST /` (event.edit) `{itemIds}`:
 *   an event assembled from windows no candidate group joined
 * - picks (event.pick): `POST /:id/picks`, `PUT /:id/picks/:pickId`, `DELETE /:id/picks/:pickId?eventVersion=`,
 *   `POST /:id/picks/accept {pickIds?}`
 * - event.edit: `PUT /:id/amplitudes`, `DELETE /:id/amplitudes/:streamId?eventVersion=`,
 *   `POST /:id/members {itemId}`, `DELETE /:id/members/:itemId?eventVersion=`, `POST /:id/relocate
 *   {fixedDepthKm?}`, `PUT /:id/label` (the evaluation status needs review.evaluate)
 * - velocity models: `GET /velocity-models/:network` (event.view), `PUT` (velocity-model.edit)
 * Every change relocates the event in its transaction and answers with the event as GET /:id does.
 */
export function eventsRouter(ctx: AppContext): Router {
  const router = Router();
  const db = ctx.database.db;
  /** The record sections' traces, at most 32 MB (a 10-station event's answer is about 1 MB). */
  const tracesCache = createTracesCache(32 * 1024 * 1024);
  const deps: EventDeps = { db, notify: () => ctx.hub.notify() };
  const actor = (req: Request) => {
    const u = currentUser(req);
    return { id: u.id, email: u.email };
  };
  const detail = async (req: Request, eventId: number) => {
    const d = await getEventDetail(db, eventId, authorizedStations(currentUser(req), 'event.view'));
    if (!d) throw notFound(`Event ${eventId}`);
    return d;
  };
  /**
   * 404 unless the viewer may see the event (an operator: one of its stations). The same rule as
   * `getEventDetail`'s scope, from the member stations alone: a change is answered with the full
   * detail once, after it, not read twice.
   */
  const visible = async (req: Request, eventId: number): Promise<void> => {
    const scope = authorizedStations(currentUser(req), 'event.view');
    const ids = await eventStationIds(db, eventId);
    if (!ids || (scope !== 'all' && !ids.some((s) => scope.includes(s)))) throw notFound(`Event ${eventId}`);
  };

  router.use(requireUser);

  router.get('/velocity-models/:network', requirePermission('event.view'), async (req, res) => {
    const { network } = parseInput(networkParamsSchema, req.params, 'params');
    res.json(velocityModelView(network, await networkSettings(db, network)));
  });
  router.put('/velocity-models/:network', requirePermission('velocity-model.edit'), async (req, res) => {
    const { network } = parseInput(networkParamsSchema, req.params, 'params');
    const body = parseInput(velocityModelBodySchema, req.body);
    const saved = await db.transaction((tx) => saveVelocityModel(tx, actor(req), network, body, clientAddress(req)));
    ctx.hub.notify();
    res.json(velocityModelView(network, saved));
  });

  router.get('/', requirePermission('event.view'), async (req, res) => {
    const q = parseInput(eventListQuerySchema, req.query, 'query');
    const events = await listEvents(db, { from: q.from ? new Date(q.from) : undefined, to: q.to ? new Date(q.to) : undefined, limit: q.limit }, authorizedStations(currentUser(req), 'event.view'));
    res.json({ caution: EVENT_CAUTION, events });
  });
  router.post('/', requirePermission('event.edit'), async (req, res) => {
    const body = parseInput(eventCreateBodySchema, req.body);
    const eventId = await createEventFromItems(deps, actor(req), body.itemIds);
    res.status(201).json(await detail(req, eventId));
  });
  router.get('/:id', requirePermission('event.view'), async (req, res) => {
    const { id: eventId } = parseInput(eventParams, req.params, 'params');
    res.json(await detail(req, eventId));
  });
  router.get('/:id/traces', requirePermission('event.view'), async (req, res) => {
    const { id } = parseInput(eventParams, req.params, 'params');
    const q = parseInput(eventTracesQuerySchema, req.query, 'query');
    // Kept (traces-cache.ts) under a key naming every input: opening the event again, or a second
    // analyst on it, is served without decoding and filtering its windows again.
    const plan = await planEventTraces(db, id, q.points, authorizedStations(currentUser(req), 'event.view'));
    if (!plan) throw notFound(`Event ${id}`);
    const json = await tracesCache.get(plan.key, async () => Buffer.from(JSON.stringify(await plan.compute())));
    res.type('application/json').send(Buffer.from(json.buffer, json.byteOffset, json.byteLength));
  });
  router.get('/:id/geometry', requirePermission('event.view'), async (req, res) => {
    const { id } = parseInput(eventParams, req.params, 'params');
    const g = await eventGeometry(db, id, authorizedStations(currentUser(req), 'event.view'));
    if (!g) throw notFound(`Event ${id}`);
    res.json(g);
  });

  router.post('/:id/picks', requirePermission('event.pick'), async (req, res) => {
    const { id: eventId } = parseInput(eventParams, req.params, 'params');
    const body = parseInput(pickBodySchema, req.body);
    await visible(req, eventId);
    await addPick(deps, actor(req), eventId, body);
    res.status(201).json(await detail(req, eventId));
  });
  router.post('/:id/picks/accept', requirePermission('event.pick'), async (req, res) => {
    const { id: eventId } = parseInput(eventParams, req.params, 'params');
    const body = parseInput(acceptPicksBodySchema, req.body);
    await visible(req, eventId);
    await acceptAutomaticPicks(deps, actor(req), eventId, body.pickIds, body.eventVersion);
    res.json(await detail(req, eventId));
  });
  router.put('/:id/picks/:pickId', requirePermission('event.pick'), async (req, res) => {
    const { id: eventId, pickId } = parseInput(pickParams, req.params, 'params');
    const body = parseInput(pickUpdateBodySchema, req.body);
    await visible(req, eventId);
    await updatePick(deps, actor(req), eventId, pickId, body);
    res.json(await detail(req, eventId));
  });
  router.delete('/:id/picks/:pickId', requirePermission('event.pick'), async (req, res) => {
    const { id: eventId, pickId } = parseInput(pickParams, req.params, 'params');
    const { eventVersion } = parseInput(versionQuery, req.query, 'query');
    await visible(req, eventId);
    await deletePick(deps, actor(req), eventId, pickId, eventVersion);
    res.json(await detail(req, eventId));
  });

  router.put('/:id/amplitudes', requirePermission('event.edit'), async (req, res) => {
    const { id: eventId } = parseInput(eventParams, req.params, 'params');
    const body = parseInput(amplitudeBodySchema, req.body);
    await visible(req, eventId);
    await repickAmplitude(deps, actor(req), eventId, body);
    res.json(await detail(req, eventId));
  });
  router.delete('/:id/amplitudes/:streamId', requirePermission('event.edit'), async (req, res) => {
    const { id: eventId, streamId } = parseInput(amplitudeParams, req.params, 'params');
    const { eventVersion } = parseInput(versionQuery, req.query, 'query');
    await visible(req, eventId);
    await revertAmplitude(deps, actor(req), eventId, streamId, eventVersion);
    res.json(await detail(req, eventId));
  });

  router.post('/:id/members', requirePermission('event.edit'), async (req, res) => {
    const { id: eventId } = parseInput(eventParams, req.params, 'params');
    const body = parseInput(memberBodySchema, req.body);
    await visible(req, eventId);
    await addMember(deps, actor(req), eventId, body.itemId, body.eventVersion);
    res.json(await detail(req, eventId));
  });
  router.delete('/:id/members/:itemId', requirePermission('event.edit'), async (req, res) => {
    const { id: eventId, itemId } = parseInput(memberParams, req.params, 'params');
    const { eventVersion } = parseInput(versionQuery, req.query, 'query');
    await visible(req, eventId);
    await removeMember(deps, actor(req), eventId, itemId, eventVersion);
    res.json(await detail(req, eventId));
  });
  router.post('/:id/relocate', requirePermission('event.edit'), async (req, res) => {
    const { id: eventId } = parseInput(eventParams, req.params, 'params');
    const body = parseInput(relocateBodySchema, req.body);
    await visible(req, eventId);
    await relocateEvent(deps, actor(req), eventId, body);
    res.json(await detail(req, eventId));
  });
  router.put('/:id/label', requirePermission('event.edit'), async (req, res) => {
    const { id: eventId } = parseInput(eventParams, req.params, 'params');
    const body = parseInput(eventLabelBodySchema, req.body);
    if (body.evaluationStatus !== undefined && !can(currentUser(req), 'review.evaluate')) throw forbidden('You may not set the evaluation status (review.evaluate)');
    await visible(req, eventId);
    await labelEvent(deps, eventId, body);
    res.json(await detail(req, eventId));
  });
  return router;
}
