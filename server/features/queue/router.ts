import { Router, type Request } from 'express';
import { z } from 'zod';
import { dismissBodySchema, escalateBodySchema, labelBodySchema, queueQuerySchema, tracesQuerySchema, versionBodySchema } from '@shared/schemas/queue';
import type { AppContext } from '@server/context';
import { notFound } from '@server/errors';
import { clientAddress, currentUser, requireUser } from '@server/auth/authenticate';
import type { AuthUser } from '@server/auth/principal';
import { parseInput } from '@server/http/validate';
import { authorize, authorizedStations, requirePermission } from '@server/policies/authorize';
import { getItemDetail } from './queue-detail';
import { listQueue } from './queue-query';
import { itemStationId } from './queue-rows';
import { planTraces } from './queue-traces';
import { createTracesCache } from '@server/http/traces-cache';
import {
  claimItem,
  dismissItem,
  escalateItem,
  keepClaimAlive,
  labelItem,
  releaseItem,
  type QueueServiceDeps,
} from './queue-transitions';

/** Params `:id` of the queue item routes: a queue item id. */
export const idParams = z.object({ id: z.string().regex(/^\d{1,15}$/, 'must be a queue item id (a whole number)').transform(Number) });

/**
 * The review queue API (issue 6), mounted at /api/queue:
 * - `GET /` list with filters, keyset cursor and counts per state (queue.view; operators see their stations)
 * - `GET /items/:id` detail with the analysis; `GET /items/:id/traces?from=&to=&points=` display traces
 * - `POST /items/:id/claim|release|keepalive|label|dismiss|escalate` with `{ version, ... }`:
 *   a stale version or a state that does not allow the action answers 409 naming who changed it.
 * Every route needs a session (401) and the action's permission (403).
 */
export function queueRouter(ctx: AppContext): Router {
  const router = Router();
  const db = ctx.database.db;
  const deps = (req: Request): QueueServiceDeps => ({ db, notify: () => ctx.hub.notify(), ipAddress: clientAddress(req) });
  const person = (u: AuthUser) => ({ id: u.id, displayName: u.displayName, email: u.email });
  /** Computed display traces, at most 48 MB (a 120 s 3-channel window's answer is a few hundred kB). */
  const tracesCache = createTracesCache(48 * 1024 * 1024);

  /** Loads the item's station and checks the action on it (404 when the item does not exist). */
  const authorizeOnItem = async (user: AuthUser, action: Parameters<typeof authorize>[1], id: number) => {
    const stationId = await itemStationId(db, id);
    if (stationId === null) throw notFound(`Queue item ${id}`);
    authorize(user, action, { stationId });
  };

  router.use(requireUser);

  router.get('/', requirePermission('queue.view'), async (req, res) => {
    const user = currentUser(req);
    const q = parseInput(queueQuerySchema, req.query, 'query');
    res.json(await listQueue(db, q, authorizedStations(user, 'queue.view')));
  });

  router.get('/items/:id', requirePermission('queue.view'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    res.json(await getItemDetail(db, id, authorizedStations(user, 'queue.view'), ctx.env.SEISIFT_CLAIM_IDLE_MINUTES));
  });

  router.get('/items/:id/traces', requirePermission('queue.view'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    const q = parseInput(tracesQuerySchema, req.query, 'query');
    // Read here, computed and serialised in a worker: a window of an hour at 200 sps is tens of
    // megabytes of filtering, which must not hold the event loop (docs/RELIABILITY.md, bench:traces).
    // The answer is kept (traces-cache.ts) under a key naming every input: the next item's prefetch,
    // the screen and a return to the item compute it once.
    const plan = await planTraces(db, id, q, authorizedStations(user, 'queue.view'));
    const json = await tracesCache.get(plan.key, async () => ctx.analysisPool.traces(await plan.load()));
    res.type('application/json').send(Buffer.from(json.buffer, json.byteOffset, json.byteLength));
  });

  router.post('/items/:id/claim', requirePermission('queue.claim'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(versionBodySchema, req.body);
    await authorizeOnItem(user, 'queue.claim', id);
    res.json(await claimItem(deps(req), person(user), id, body.version));
  });

  router.post('/items/:id/release', requirePermission('queue.claim'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(versionBodySchema, req.body);
    await authorizeOnItem(user, 'queue.claim', id);
    res.json(await releaseItem(deps(req), person(user), id, body.version));
  });

  router.post('/items/:id/keepalive', requirePermission('queue.claim'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    await authorizeOnItem(user, 'queue.claim', id);
    const at = await keepClaimAlive(deps(req), person(user), id);
    res.json({ claimedAt: at.toISOString() });
  });

  router.post('/items/:id/label', requirePermission('queue.label'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(labelBodySchema, req.body);
    await authorizeOnItem(user, 'queue.label', id);
    res.json(await labelItem(deps(req), person(user), id, body.version, body.label));
  });

  router.post('/items/:id/dismiss', requirePermission('queue.dismiss'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(dismissBodySchema, req.body);
    await authorizeOnItem(user, 'queue.dismiss', id);
    res.json(await dismissItem(deps(req), person(user), id, body.version, { noiseReason: body.noiseReason, note: body.note }));
  });

  router.post('/items/:id/escalate', requirePermission('queue.escalate'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(escalateBodySchema, req.body);
    await authorizeOnItem(user, 'queue.escalate', id);
    const onError = (err: unknown) => ctx.logger.error({ err, itemId: id }, 'escalation listener failed');
    res.json(await escalateItem({ ...deps(req), onError }, person(user), id, body.version, { reason: body.reason }, ctx.escalationListeners));
  });

  return router;
}
