import { and, count, desc, eq, gte, like, lte, or, type SQL } from 'drizzle-orm';
import type { z } from 'zod';
import type { AuditRow, auditQuerySchema } from '@shared/auth/schemas';
import type { Database, DbOrTx } from '@server/db/client';
import { auditLog } from '@server/db/schema/audit-log';

/** Who acted: a person (id + e-mail), a script (label only), or nobody known (null). */
export type AuditActor = { id: string | null; email?: string | null; label?: string | null } | null;

/** One audit entry: who, what, on what, details, and from where. The time is added here. */
export type AuditEntry = {
  actor: AuditActor;
  /** Stable dotted name, e.g. `auth.sign_in`, `user.roles_changed`, `queue.claimed`. */
  action: string;
  targetType?: string | null;
  targetId?: string | number | null;
  details?: unknown;
  /** Client address. */
  ip?: string | null;
};

/** Audit action names used by the accounts feature. Later features add their own (e.g. `queue.*`). */
export const accountAuditActions = [
  'auth.sign_in',
  'auth.sign_in_failed',
  'auth.sign_out',
  'auth.session_ended',
  'auth.password_changed',
  'auth.password_reset_requested',
  'auth.password_reset',
  'invitation.created',
  'invitation.revoked',
  'invitation.accepted',
  'user.roles_changed',
  'user.stations_changed',
  'user.deactivated',
  'user.reactivated',
] as const;

/**
 * Appends one row to the audit log. Pass the transaction of the change it records, so both are
 * committed together or not at all. Throws when `action` is not a dotted lower-case name.
 */
export async function recordAudit(db: DbOrTx, entry: AuditEntry): Promise<void> {
  if (!/^[a-z][a-z_]*(\.[a-z][a-z_]*)+$/.test(entry.action)) throw new Error(`audit action must be a dotted lower-case name, got "${entry.action}"`);
  await db.insert(auditLog).values({
    actorUserId: entry.actor?.id ?? null,
    actorLabel: (entry.actor?.email ?? entry.actor?.label ?? null)?.slice(0, 254) ?? null,
    action: entry.action,
    targetType: entry.targetType ?? null,
    targetId: entry.targetId === undefined || entry.targetId === null ? null : String(entry.targetId),
    details: entry.details ?? null,
    ipAddress: entry.ip?.slice(0, 64) ?? null,
    createdAt: new Date(),
  });
}

/** Filters of the audit page (validated by `auditQuerySchema`). */
export type AuditQuery = z.infer<typeof auditQuerySchema>;

function escapeLike(text: string): string {
  return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}

/** One page of the audit log, newest first, and the number of rows matching the filters. */
export async function listAudit(db: Database, q: AuditQuery): Promise<{ rows: AuditRow[]; total: number }> {
  const where: SQL[] = [];
  if (q.action) where.push(q.action.endsWith('.') ? like(auditLog.action, `${escapeLike(q.action)}%`) : eq(auditLog.action, q.action));
  if (q.actor) {
    const pattern = `%${escapeLike(q.actor)}%`;
    const match = or(like(auditLog.actorLabel, pattern), eq(auditLog.actorUserId, q.actor));
    if (match) where.push(match);
  }
  if (q.targetType) where.push(eq(auditLog.targetType, q.targetType));
  if (q.targetId) where.push(eq(auditLog.targetId, q.targetId));
  if (q.from) where.push(gte(auditLog.createdAt, new Date(q.from)));
  if (q.to) where.push(lte(auditLog.createdAt, new Date(q.to)));
  const condition = where.length ? and(...where) : undefined;
  const rows = await db.select().from(auditLog).where(condition).orderBy(desc(auditLog.createdAt), desc(auditLog.id)).limit(q.limit).offset(q.offset);
  const [totalRow] = await db.select({ n: count() }).from(auditLog).where(condition);
  return {
    total: totalRow?.n ?? 0,
    rows: rows.map((r) => ({
      id: r.id,
      createdAt: r.createdAt.toISOString(),
      actorUserId: r.actorUserId,
      actorLabel: r.actorLabel,
      action: r.action,
      targetType: r.targetType,
      targetId: r.targetId,
      details: r.details,
      ipAddress: r.ipAddress,
    })),
  };
}
