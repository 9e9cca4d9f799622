import { and, count, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { Database, DbOrTx } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { inboxEntries, itemReviews } from '@server/db/schema/supervisor';
import { users } from '@server/db/schema/users';
import type { StoredLabel } from '@shared/schemas/label';
import type { ConfirmLabel } from '@shared/schemas/supervisor';
import { AppError, conflict, notFound } from '@server/errors';
import { loadQueueRow } from '@server/features/queue/queue-rows';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { recordAudit } from '@server/features/audit/audit';

/**
 * The supervisors' escalation inbox. Each escalation gives every supervisor an entry; a supervisor
 * reads it, acknowledges it ("I am on it"), then confirms the item (escalated → confirmed) or
 * returns it to the queue with a comment the analyst sees (→ returned, claim cleared). Settling an
 * item settles every supervisor's entry for it. Every change records an `inbox` change (summary:
 * the owner's user id and unread count, nothing else) so open inboxes update live.
 */

/** A supervisor acting. */
export interface InboxActor {
  id: string;
  email: string;
  displayName: string;
}

/** What the inbox functions need. */
export interface InboxDeps {
  db: Database;
  notify?: () => void;
  ipAddress?: string | null;
}

/** One inbox entry as the inbox screen shows it. */
export interface InboxEntryView {
  id: number;
  itemId: number;
  station: string;
  subject: string;
  reason: string;
  escalatedBy: string | null;
  createdAt: string;
  readAt: string | null;
  acknowledgedAt: string | null;
  resolution: string | null;
  resolutionComment: string | null;
  resolvedBy: string | null;
  resolvedAt: string | null;
  itemState: string;
  itemVersion: number;
  /** The item's event type when it has an event label; null when it has none (then confirming needs one). */
  itemLabelType: string | null;
  mailError: string | null;
}

/** Unread entries of one supervisor. */
export async function unreadCount(db: DbOrTx, userId: string): Promise<number> {
  const [row] = await db.select({ n: count() }).from(inboxEntries).where(and(eq(inboxEntries.userId, userId), isNull(inboxEntries.readAt)));
  return row?.n ?? 0;
}

/** Records an `inbox` change for `userId`'s entry (last write of the transaction). */
export async function recordInboxChange(tx: DbOrTx, entryId: number, userId: string, kind: 'created' | 'updated'): Promise<void> {
  await recordChange(tx, { resource: 'inbox', resourceId: entryId, kind, version: 1, summary: { userId, unread: await unreadCount(tx, userId) }, audience: { action: 'inbox.view', userId } });
}

/** A supervisor's inbox, newest first (at most `limit`), with the unread count. */
export async function listInbox(db: Database, userId: string, limit = 200): Promise<{ entries: InboxEntryView[]; unread: number }> {
  const escalator = sql<string | null>`(SELECT display_name FROM users u WHERE u.id = ${inboxEntries.escalatedByUserId})`;
  const resolver = sql<string | null>`(SELECT display_name FROM users u WHERE u.id = ${inboxEntries.resolvedByUserId})`;
  const rows = await db
    .select({ e: inboxEntries, escalatedBy: escalator, resolvedBy: resolver, network: stations.network, code: stations.code, state: queueItems.state, version: queueItems.version, labelType: queueItems.labelType })
    .from(inboxEntries)
    .innerJoin(queueItems, eq(queueItems.id, inboxEntries.itemId))
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .where(eq(inboxEntries.userId, userId))
    .orderBy(desc(inboxEntries.createdAt), desc(inboxEntries.id))
    .limit(limit);
  return {
    unread: await unreadCount(db, userId),
    entries: rows.map((r) => ({
      id: r.e.id,
      itemId: r.e.itemId,
      station: `${r.network}.${r.code}`,
      subject: r.e.subject,
      reason: r.e.reason,
      escalatedBy: r.escalatedBy,
      createdAt: r.e.createdAt.toISOString(),
      readAt: r.e.readAt?.toISOString() ?? null,
      acknowledgedAt: r.e.acknowledgedAt?.toISOString() ?? null,
      resolution: r.e.resolution,
      resolutionComment: r.e.resolutionComment,
      resolvedBy: r.resolvedBy,
      resolvedAt: r.e.resolvedAt?.toISOString() ?? null,
      itemState: r.state,
      itemVersion: r.version,
      itemLabelType: r.labelType === 'noise' ? null : r.labelType,
      mailError: r.e.mailError,
    })),
  };
}

async function ownEntry(db: DbOrTx, actor: InboxActor, entryId: number) {
  const [e] = await db.select().from(inboxEntries).where(eq(inboxEntries.id, entryId));
  if (!e || e.userId !== actor.id) throw notFound(`Inbox entry ${entryId}`);
  return e;
}

/** Marks an entry read. Idempotent. @throws 404 for another supervisor's or a missing entry */
export async function markRead(deps: InboxDeps, actor: InboxActor, entryId: number): Promise<void> {
  const e = await ownEntry(deps.db, actor, entryId);
  if (e.readAt) return;
  await deps.db.transaction(async (tx) => {
    await tx.update(inboxEntries).set({ readAt: new Date() }).where(and(eq(inboxEntries.id, entryId), isNull(inboxEntries.readAt)));
    await recordInboxChange(tx, entryId, actor.id, 'updated');
  });
  deps.notify?.();
}

/** Acknowledges an entry (read too). @throws 404; 409 when the item is already settled */
export async function acknowledge(deps: InboxDeps, actor: InboxActor, entryId: number): Promise<void> {
  const e = await ownEntry(deps.db, actor, entryId);
  if (e.resolution) throw conflict(`This escalation was already ${e.resolution}`);
  const now = new Date();
  await deps.db.transaction(async (tx) => {
    await tx.update(inboxEntries).set({ acknowledgedAt: e.acknowledgedAt ?? now, readAt: e.readAt ?? now }).where(eq(inboxEntries.id, entryId));
    await recordAudit(tx, { actor: { id: actor.id, email: actor.email }, action: 'inbox.acknowledged', targetType: 'queue_item', targetId: e.itemId, details: { entryId }, ip: deps.ipAddress ?? null });
    await recordInboxChange(tx, entryId, actor.id, 'updated');
  });
  deps.notify?.();
}

/** 422 `label_required`: confirming an item that has no event label needs one. */
export const labelRequired = (itemId: number) =>
  new AppError(422, 'label_required', `Item ${itemId} has no event label (it was escalated, not labelled): say which event type it is to confirm it, or return it to the queue.`, {
    issues: [{ path: 'label.eventType', message: 'required to confirm an item without an event label' }],
  });

/**
 * Settles an item as a supervisor: `confirmed` (from escalated or labelled) or `returned` (from
 * escalated, labelled or confirmed; claim cleared, the comment stored for the analyst). One
 * versioned write of the item, an audit row, every open inbox entry for the item settled, then the
 * change-log rows. A confirmed item must carry an event label (the catalogue is made of them): an
 * escalated item has only the escalation's reason, so confirming it takes `label`, stored as the
 * item's event label (no picks) with the escalation's reason kept in its note.
 * @param version the item version the supervisor saw (null: the current one, for the inbox)
 * @param label the event label for an item that has none (refused for one that has)
 * @throws 404 for a missing item; 409 when its state does not allow it, it changed meanwhile or it
 *   already has an event label and `label` is given; 422 `label_required` when it needs one
 */
export async function settleItem(deps: InboxDeps, actor: InboxActor, itemId: number, version: number | null, outcome: 'confirmed' | 'returned', comment: string, label?: ConfirmLabel): Promise<void> {
  const now = new Date();
  const from = outcome === 'confirmed' ? ['escalated', 'labelled'] : ['escalated', 'labelled', 'confirmed'];
  await deps.db.transaction(async (tx) => {
    const [item] = await tx.select({ state: queueItems.state, version: queueItems.version, labelType: queueItems.labelType, label: queueItems.label, stationId: queueItems.stationId }).from(queueItems).where(eq(queueItems.id, itemId)).for('update');
    if (!item) throw notFound(`Queue item ${itemId}`);
    if (version !== null && item.version !== version) throw conflict(`Item ${itemId} changed since you loaded it (version ${version}, now ${item.version}); reload it.`);
    if (!from.includes(item.state)) throw conflict(`Item ${itemId} is ${item.state}; you can ${outcome === 'confirmed' ? 'confirm' : 'return'} it only when it is ${from.join(' or ')}.`);
    const hasEventLabel = item.labelType !== null && item.labelType !== 'noise';
    let newLabel: StoredLabel | null = null;
    if (outcome === 'confirmed' && label) {
      if (hasEventLabel) throw conflict(`Item ${itemId} is already labelled ${item.labelType}; confirm it without a label, or return it to change the label.`);
      const reason = typeof item.label === 'object' && item.label !== null && 'reason' in item.label && typeof item.label.reason === 'string' ? item.label.reason : null;
      const note = [label.note, reason ? `Escalated: ${reason}` : ''].filter((t) => t !== '').join('\n');
      newLabel = { kind: 'event', eventType: label.eventType, certainty: label.certainty, distanceClass: label.distanceClass, picks: [], note };
    } else if (outcome === 'confirmed' && !hasEventLabel) {
      throw labelRequired(itemId);
    }
    await tx
      .update(queueItems)
      .set({
        state: outcome,
        version: item.version + 1,
        updatedByUserId: actor.id,
        updatedAt: now,
        ...(outcome === 'returned' ? { claimedByUserId: null, claimedAt: null } : {}),
        ...(newLabel ? { label: newLabel, labelType: newLabel.kind === 'event' ? newLabel.eventType : null } : {}),
      })
      .where(eq(queueItems.id, itemId));
    if (outcome === 'returned') {
      await tx
        .insert(itemReviews)
        .values({ itemId, returnComment: comment, returnedByUserId: actor.id, returnedAt: now, evaluationStatus: null })
        .onDuplicateKeyUpdate({ set: { returnComment: comment, returnedByUserId: actor.id, returnedAt: now, evaluationStatus: null, reviewedAt: null, reviewedByUserId: null } });
    }
    await recordAudit(tx, {
      actor: { id: actor.id, email: actor.email },
      action: outcome === 'confirmed' ? 'review.confirmed' : 'review.returned',
      targetType: 'queue_item',
      targetId: itemId,
      details: { from: item.state, to: outcome, version: item.version + 1, comment, ...(newLabel?.kind === 'event' ? { eventType: newLabel.eventType, certainty: newLabel.certainty } : {}) },
      ip: deps.ipAddress ?? null,
    });
    const open = await tx.select({ id: inboxEntries.id, userId: inboxEntries.userId }).from(inboxEntries).where(and(eq(inboxEntries.itemId, itemId), isNull(inboxEntries.resolution)));
    if (open.length > 0) {
      await tx
        .update(inboxEntries)
        .set({ resolution: outcome, resolutionComment: comment || null, resolvedByUserId: actor.id, resolvedAt: now })
        .where(inArray(inboxEntries.id, open.map((o) => o.id)));
      // The acting supervisor has read their own entry by acting on it.
      await tx.update(inboxEntries).set({ readAt: now }).where(and(eq(inboxEntries.itemId, itemId), eq(inboxEntries.userId, actor.id), isNull(inboxEntries.readAt)));
    }
    const row = await loadQueueRow(tx, eq(queueItems.id, itemId));
    for (const o of open) await recordInboxChange(tx, o.id, o.userId, 'updated');
    await recordChange(tx, { resource: 'item', resourceId: itemId, kind: 'updated', version: item.version + 1, summary: row ?? undefined, audience: itemAudience(item.stationId) });
  });
  deps.notify?.();
}

/**
 * Confirms the item behind an inbox entry; an escalated item without an event label needs `label`.
 * @throws 404 / 409 / 422 as settleItem
 */
export async function confirmFromInbox(deps: InboxDeps, actor: InboxActor, entryId: number, label?: ConfirmLabel): Promise<void> {
  const e = await ownEntry(deps.db, actor, entryId);
  await settleItem(deps, actor, e.itemId, null, 'confirmed', '', label);
}

/** Returns the item behind an inbox entry to the queue with a comment. @throws 404 / 409 as settleItem */
export async function returnFromInbox(deps: InboxDeps, actor: InboxActor, entryId: number, comment: string): Promise<void> {
  const e = await ownEntry(deps.db, actor, entryId);
  await settleItem(deps, actor, e.itemId, null, 'returned', comment);
}

/** Active supervisors (recipients of escalations). */
export async function activeSupervisors(db: DbOrTx): Promise<Array<{ id: string; email: string; displayName: string }>> {
  return db
    .select({ id: users.id, email: users.email, displayName: users.displayName })
    .from(users)
    .where(and(eq(users.active, true), sql`EXISTS (SELECT 1 FROM user_roles r WHERE r.user_id = ${users.id} AND r.role = 'supervisor')`));
}
