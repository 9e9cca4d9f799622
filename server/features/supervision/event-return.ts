import { Router } from 'express';
import { and, eq, isNull } from 'drizzle-orm';
import { eventReturnBodySchema, type EventReturnResult } from '@shared/schemas/event-return';
import type { AppContext } from '@server/context';
import type { DbOrTx } from '@server/db/client';
import { eventMembers, seismicEvents } from '@server/db/schema/events';
import { queueItems } from '@server/db/schema/queue-items';
import { itemReviews } from '@server/db/schema/supervisor';
import { clientAddress, currentUser, requireUser } from '@server/auth/authenticate';
import { conflict, notFound } from '@server/errors';
import { parseInput } from '@server/http/validate';
import { authorizedStations, requirePermission } from '@server/policies/authorize';
import { recordAudit } from '@server/features/audit/audit';
import { loadQueueRow } from '@server/features/queue/queue-rows';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { idParams } from './router';
import type { InboxActor, InboxDeps } from './inbox';

/** Member windows in these states go back to the queue; `new`, `claimed` and `returned` ones are already with the analysts. */
const RETURNABLE = ['labelled', 'confirmed', 'escalated'] as const;

/**
 * Returns an event to the analysts: in one transaction the event's evaluation status goes back to
 * `preliminary` (it leaves the reviewed catalogue until reviewed again), every active member window
 * carries the supervisor's comment (the analyst sees it on the window), and the member windows that
 * were labelled, confirmed or escalated go back to the queue (state `returned`, unclaimed), as a
 * returned window does on its own. Audited, and each change goes to the live channel.
 * @param scope the stations the supervisor may review (an event outside them answers 404)
 * @throws 404 for a missing event (or one outside `scope`); 409 when it changed since `eventVersion`
 */
export async function returnEvent(deps: InboxDeps, actor: InboxActor, eventId: number, eventVersion: number, comment: string, scope: 'all' | readonly number[]): Promise<EventReturnResult> {
  const now = new Date();
  const result = await deps.db.transaction(async (tx: DbOrTx) => {
    const [ev] = await tx.select({ version: seismicEvents.version, status: seismicEvents.evaluationStatus }).from(seismicEvents).where(eq(seismicEvents.id, eventId)).for('update');
    if (!ev) throw notFound(`Event ${eventId}`);
    const members = await tx
      .select({ itemId: queueItems.id, state: queueItems.state, version: queueItems.version, stationId: queueItems.stationId })
      .from(eventMembers)
      .innerJoin(queueItems, eq(queueItems.id, eventMembers.itemId))
      .where(and(eq(eventMembers.eventId, eventId), isNull(eventMembers.removedAt)))
      .for('update');
    const stationIds = [...new Set(members.map((m) => m.stationId))];
    if (scope !== 'all' && !stationIds.some((s) => scope.includes(s))) throw notFound(`Event ${eventId}`);
    if (ev.version !== eventVersion) throw conflict(`Event ${eventId} changed since you loaded it (version ${eventVersion}, now ${ev.version}); reload it.`);
    const version = ev.version + 1;
    await tx.update(seismicEvents).set({ evaluationStatus: 'preliminary', version, updatedAt: now }).where(eq(seismicEvents.id, eventId));
    const returned: number[] = [];
    for (const m of members) {
      const back = (RETURNABLE as readonly string[]).includes(m.state);
      if (back) {
        await tx.update(queueItems).set({ state: 'returned', version: m.version + 1, claimedByUserId: null, claimedAt: null, updatedByUserId: actor.id, updatedAt: now }).where(eq(queueItems.id, m.itemId));
        returned.push(m.itemId);
      }
      // The comment on every member, so the analyst sees it on whichever window they open.
      await tx
        .insert(itemReviews)
        .values({ itemId: m.itemId, returnComment: comment, returnedByUserId: actor.id, returnedAt: now, evaluationStatus: null })
        .onDuplicateKeyUpdate({ set: { returnComment: comment, returnedByUserId: actor.id, returnedAt: now, evaluationStatus: null, reviewedAt: null, reviewedByUserId: null } });
      if (back) {
        const row = await loadQueueRow(tx, eq(queueItems.id, m.itemId));
        await recordChange(tx, { resource: 'item', resourceId: m.itemId, kind: 'updated', version: m.version + 1, summary: row ?? undefined, audience: itemAudience(m.stationId) });
      }
    }
    await recordAudit(tx, {
      actor: { id: actor.id, email: actor.email },
      action: 'review.event_returned',
      targetType: 'event',
      targetId: eventId,
      details: { from: ev.status, to: 'preliminary', version, comment, returnedItemIds: returned },
      ip: deps.ipAddress ?? null,
    });
    await recordChange(tx, { resource: 'event', resourceId: eventId, kind: 'updated', version, summary: { reason: 'returned for analyst review' }, audience: { action: 'event.view', stationIds } });
    return { eventId, eventVersion: version, evaluationStatus: 'preliminary' as const, returnedItemIds: returned };
  });
  deps.notify?.();
  return result;
}

/**
 * `POST /api/supervisor/events/:id/return {eventVersion, comment}` (review.evaluate): see
 * `returnEvent`. Mounted beside the supervisor router; 401 without a session, 403 without the
 * permission, 400 naming the field, 404, 409 on a stale version.
 */
export function eventReturnRouter(ctx: AppContext): Router {
  const router = Router();
  router.use(requireUser);
  router.post('/events/:id/return', requirePermission('review.evaluate'), async (req, res) => {
    const { id } = parseInput(idParams, req.params, 'params');
    const body = parseInput(eventReturnBodySchema, req.body);
    const u = currentUser(req);
    const deps: InboxDeps = { db: ctx.database.db, notify: () => ctx.hub.notify(), ipAddress: clientAddress(req) };
    res.json(await returnEvent(deps, { id: u.id, displayName: u.displayName, email: u.email }, id, body.eventVersion, body.comment, authorizedStations(u, 'review.evaluate')));
  });
  return router;
}
