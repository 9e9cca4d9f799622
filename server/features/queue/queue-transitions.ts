import { and, desc, eq, inArray, isNull, lt, sql, type SQL } from 'drizzle-orm';
import { itemTransitions, type ItemAction, type ItemState } from '@shared/schemas/item-states';
import type { Dismissal, EventLabel, Escalation, StoredLabel } from '@shared/schemas/label';
import type { QueueRow } from '@shared/schemas/queue';
import type { Database, DbOrTx } from '@server/db/client';
import { auditLog } from '@server/db/schema/audit-log';
import { queueItems } from '@server/db/schema/queue-items';
import { users } from '@server/db/schema/users';
import { conflict, notFound } from '@server/errors';
import { loadQueueRow } from './queue-rows';
import { recordAudit } from '@server/features/audit/audit';
import { itemAudience, recordChange } from '@server/realtime/change-log';

/**
 * The life of a queue item (issue 6): every change is one transaction that
 * 1. updates the row `WHERE id = ? AND version = ?` (and the states/claimer the action allows),
 *    bumping `version` — a stale or losing write changes nothing and answers 409 naming who changed
 *    the item and how (from the latest audit row);
 * 2. writes an audit row;
 * 3. records the change in the change log, LAST (it locks the sequence counter until commit);
 * and after commit wakes the live hub (`notify`).
 * Because the update is one conditional statement, twenty concurrent claims of one item see
 * exactly one row updated between them: InnoDB locks the row, the others re-read the bumped version
 * and match nothing.
 */

/** Who acts: a person, or the system (claim lapse). */
export type QueueActor = { id: string; displayName: string; email: string } | { system: string };

/** What the transition functions need. */
export interface QueueServiceDeps {
  db: Database;
  /** Wakes the live hub after a commit (ctx.hub.notify). */
  notify?: () => void;
  /** The clock (tests pass their own). */
  now?: () => Date;
  /** The client address, for the audit row. */
  ipAddress?: string | null;
}

/** Audit action names of item changes, and the words a 409 uses for them. */
export const itemAuditActions: Record<ItemAction, { action: string; words: string }> = {
  claim: { action: 'queue.claimed', words: 'claimed it' },
  release: { action: 'queue.released', words: 'released their claim' },
  label: { action: 'queue.labelled', words: 'labelled it' },
  dismiss: { action: 'queue.dismissed', words: 'dismissed it as noise' },
  escalate: { action: 'queue.escalated', words: 'escalated it' },
  lapse: { action: 'queue.claim_lapsed', words: 'ended the claim (claim lapsed: idle too long)' },
};

/** The audit target type of queue items. */
export const itemAuditTarget = 'queue_item';

interface TransitionSpec {
  action: ItemAction;
  itemId: number;
  version: number;
  actor: QueueActor;
  /** Columns set besides state, version, updated_by/at. */
  set?: Partial<typeof queueItems.$inferInsert>;
  /** The action needs the item claimed by the acting person. */
  requireOwnClaim?: boolean;
  /** Extra WHERE condition (claim lapse: the claim time it saw). */
  extraWhere?: SQL;
  details?: Record<string, unknown>;
}

const actorId = (a: QueueActor): string | null => ('system' in a ? null : a.id);
const actorLabel = (a: QueueActor): string => ('system' in a ? a.system : a.email);

/**
 * Applies one transition (see the module comment). Returns the row as the write left it.
 * @throws AppError 404 when the item does not exist; 409 `conflict` when its version moved on, or
 *   its state or claim does not allow the action — the message names who changed it and how.
 */
async function transition(deps: QueueServiceDeps, spec: TransitionSpec): Promise<QueueRow> {
  const now = deps.now?.() ?? new Date();
  const rule = itemTransitions[spec.action];
  const fromStates: readonly ItemState[] = rule.from;
  const conditions: SQL[] = [eq(queueItems.id, spec.itemId), eq(queueItems.version, spec.version), inArray(queueItems.state, [...fromStates])];
  const who = actorId(spec.actor);
  if (spec.requireOwnClaim) conditions.push(who === null ? isNull(queueItems.claimedByUserId) : eq(queueItems.claimedByUserId, who));
  if (spec.extraWhere) conditions.push(spec.extraWhere);
  const row = await deps.db.transaction(async (tx) => {
    const [result] = await tx
      .update(queueItems)
      .set({ ...spec.set, state: rule.to, version: sql`${queueItems.version} + 1`, updatedByUserId: who, updatedAt: now })
      .where(and(...conditions));
    if (result.affectedRows !== 1) throw await explainConflict(tx, spec);
    await recordAudit(tx, {
      actor: { id: who, email: 'system' in spec.actor ? null : spec.actor.email, label: actorLabel(spec.actor) },
      action: itemAuditActions[spec.action].action,
      targetType: itemAuditTarget,
      targetId: spec.itemId,
      details: { from: fromStates, to: rule.to, version: spec.version + 1, ...spec.details },
      ip: deps.ipAddress ?? null,
    });
    const fresh = await loadQueueRow(tx, eq(queueItems.id, spec.itemId));
    if (!fresh) throw notFound(`Queue item ${spec.itemId}`);
    await recordChange(tx, { resource: 'item', resourceId: spec.itemId, kind: 'updated', version: fresh.version, summary: fresh, audience: itemAudience(fresh.stationId) });
    return fresh;
  });
  deps.notify?.();
  return row;
}

/**
 * Builds the 409 for a write that matched no row: who changed the item and how (latest audit row),
 * or why its state or claim does not allow the action.
 */
async function explainConflict(tx: DbOrTx, spec: TransitionSpec) {
  const row = await loadQueueRow(tx, eq(queueItems.id, spec.itemId));
  if (!row) return notFound(`Queue item ${spec.itemId}`);
  const [last] = await tx
    .select({ action: auditLog.action, actorLabel: auditLog.actorLabel, createdAt: auditLog.createdAt, name: users.displayName })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorUserId))
    .where(and(eq(auditLog.targetType, itemAuditTarget), eq(auditLog.targetId, String(spec.itemId))))
    .orderBy(desc(auditLog.id))
    .limit(1);
  const lastWords = last
    ? `${last.name ?? last.actorLabel ?? 'someone'} ${Object.values(itemAuditActions).find((a) => a.action === last.action)?.words ?? last.action} at ${last.createdAt.toISOString()}`
    : null;
  const details = { itemId: row.id, state: row.state, version: row.version, claimedBy: row.claimedBy, lastChange: last ? { action: last.action, by: last.name ?? last.actorLabel, at: last.createdAt.toISOString() } : null };
  if (row.version !== spec.version) {
    return conflict(
      `Item ${row.id} changed since you loaded it (version ${spec.version}, now ${row.version}): ${lastWords ?? 'it was changed'}; it is now ${row.state}${row.claimedBy ? ` (claimed by ${row.claimedBy.displayName})` : ''}. Reload it.`,
      details,
    );
  }
  const allowed: readonly string[] = itemTransitions[spec.action].from;
  if (!allowed.includes(row.state)) {
    return conflict(`Item ${row.id} is ${row.state}${row.claimedBy ? ` (claimed by ${row.claimedBy.displayName})` : ''}; you can ${spec.action} it only when it is ${allowed.join(' or ')}.`, details);
  }
  if (spec.requireOwnClaim) {
    return conflict(
      row.claimedBy ? `Item ${row.id} is claimed by ${row.claimedBy.displayName}, not you; claim it first once they release it.` : `Item ${row.id} is not claimed; claim it first.`,
      details,
    );
  }
  return conflict(`Item ${row.id} changed while you were writing${lastWords ? `: ${lastWords}` : ''}. Reload it.`, details);
}

/** A person (not the system). */
export type QueuePerson = Extract<QueueActor, { id: string }>;

/**
 * Claims an item for `actor`: new or returned → in review. Exactly one of several concurrent claims wins.
 * @throws 404 / 409 as `transition`
 */
export function claimItem(deps: QueueServiceDeps, actor: QueuePerson, itemId: number, version: number): Promise<QueueRow> {
  const now = deps.now?.() ?? new Date();
  return transition({ ...deps, now: () => now }, { action: 'claim', itemId, version, actor, set: { claimedByUserId: actor.id, claimedAt: now } });
}

/** Gives a claim back: in review (own claim) → new. @throws 404 / 409 */
export function releaseItem(deps: QueueServiceDeps, actor: QueuePerson, itemId: number, version: number): Promise<QueueRow> {
  return transition(deps, { action: 'release', itemId, version, actor, requireOwnClaim: true, set: { claimedByUserId: null, claimedAt: null } });
}

/** Labels a claimed item as a real source: in review (own claim) → labelled. @throws 404 / 409 */
export function labelItem(deps: QueueServiceDeps, actor: QueuePerson, itemId: number, version: number, label: EventLabel): Promise<QueueRow> {
  const stored: StoredLabel = { kind: 'event', ...label };
  return transition(deps, {
    action: 'label',
    itemId,
    version,
    actor,
    requireOwnClaim: true,
    set: { label: stored, labelType: label.eventType },
    details: { eventType: label.eventType, certainty: label.certainty, picks: label.picks.length },
  });
}

/** Dismisses a claimed item as noise: in review (own claim) → dismissed. @throws 404 / 409 */
export function dismissItem(deps: QueueServiceDeps, actor: QueuePerson, itemId: number, version: number, dismissal: Dismissal): Promise<QueueRow> {
  const stored: StoredLabel = { kind: 'noise', ...dismissal };
  return transition(deps, {
    action: 'dismiss',
    itemId,
    version,
    actor,
    requireOwnClaim: true,
    set: { label: stored, labelType: 'noise' },
    details: { noiseReason: dismissal.noiseReason },
  });
}

/**
 * Listeners called after an escalation commits (the supervisor issue adds e-mail and the inbox
 * here). A listener that throws is logged by the caller's logger and does not undo the escalation.
 */
export type EscalationListener = (row: QueueRow, escalation: Escalation, actor: QueuePerson) => Promise<void> | void;

/**
 * Escalates a claimed item to the supervisors with a reason: in review (own claim) → escalated.
 * The item keeps its claimer, so supervisors see who escalated it.
 * @param listeners run after commit, in order (see EscalationListener)
 * @throws 404 / 409
 */
export async function escalateItem(
  deps: QueueServiceDeps & { onError?: (err: unknown) => void },
  actor: QueuePerson,
  itemId: number,
  version: number,
  escalation: Escalation,
  listeners: readonly EscalationListener[] = [],
): Promise<QueueRow> {
  const stored: StoredLabel = { kind: 'escalation', ...escalation };
  const row = await transition(deps, { action: 'escalate', itemId, version, actor, requireOwnClaim: true, set: { label: stored, labelType: null }, details: { reason: escalation.reason } });
  for (const listener of listeners) {
    try {
      await listener(row, escalation, actor);
    } catch (err) {
      deps.onError?.(err);
    }
  }
  return row;
}

/**
 * Keeps a claim alive while its analyst works on the item (the review screen calls it every
 * minute): moves `claimed_at` to now. Not a change of the item (no version, audit or change log).
 * @returns the new claim time
 * @throws 404 when the item does not exist; 409 when it is not in review under this person's claim
 */
export async function keepClaimAlive(deps: QueueServiceDeps, actor: QueuePerson, itemId: number): Promise<Date> {
  const now = deps.now?.() ?? new Date();
  const [result] = await deps.db
    .update(queueItems)
    .set({ claimedAt: now })
    .where(and(eq(queueItems.id, itemId), eq(queueItems.state, 'in review'), eq(queueItems.claimedByUserId, actor.id)));
  if (result.affectedRows === 1) return now;
  const row = await loadQueueRow(deps.db, eq(queueItems.id, itemId));
  if (!row) throw notFound(`Queue item ${itemId}`);
  throw conflict(`Item ${itemId} is ${row.state}${row.claimedBy ? ` (claimed by ${row.claimedBy.displayName})` : ''}, not under your claim; claim it again.`, {
    itemId,
    state: row.state,
    version: row.version,
    claimedBy: row.claimedBy,
  });
}

/**
 * Ends every claim idle for longer than `idleMinutes`: in review → new, audit row `claim lapsed`
 * naming the former claimer. Each lapse is a versioned write that also requires the claim time it
 * saw, so a claim kept alive (or released) in the meantime is left alone.
 * @returns the rows that lapsed
 * @throws RangeError when idleMinutes is not a positive number
 */
export async function lapseIdleClaims(deps: QueueServiceDeps, idleMinutes: number): Promise<QueueRow[]> {
  if (!(idleMinutes > 0) || !Number.isFinite(idleMinutes)) throw new RangeError(`idle minutes must be a positive number, got ${idleMinutes}`);
  const now = deps.now?.() ?? new Date();
  const cutoff = new Date(now.getTime() - idleMinutes * 60_000);
  const stale = await deps.db
    .select({ id: queueItems.id, version: queueItems.version, claimedAt: queueItems.claimedAt, claimedBy: queueItems.claimedByUserId })
    .from(queueItems)
    .where(and(eq(queueItems.state, 'in review'), lt(queueItems.claimedAt, cutoff)))
    .limit(500);
  const lapsed: QueueRow[] = [];
  for (const s of stale) {
    if (!s.claimedAt) continue;
    try {
      lapsed.push(
        await transition(
          { ...deps, now: () => now },
          {
            action: 'lapse',
            itemId: s.id,
            version: s.version,
            actor: { system: 'claim lapse' },
            set: { claimedByUserId: null, claimedAt: null },
            extraWhere: eq(queueItems.claimedAt, s.claimedAt),
            details: { formerClaimerUserId: s.claimedBy, claimedAt: s.claimedAt.toISOString(), idleMinutes },
          },
        ),
      );
    } catch (err) {
      // Someone acted on it in the meantime (released, labelled, kept alive): that write stands.
      if (!(err instanceof Error && 'status' in err && (err.status === 409 || err.status === 404))) throw err;
    }
  }
  return lapsed;
}
