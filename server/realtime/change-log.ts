import { asc, eq, gt, lt, min, sql } from 'drizzle-orm';
import { changeAudienceSchema, type ChangeAudience, type ChangeMessage } from '@shared/realtime';
import type { Database, DbOrTx } from '@server/db/client';
import { changeCounter, changeLog } from '@server/db/schema/change-log';

/** What changed. */
export interface ChangeInput {
  resource: string;
  resourceId: number;
  kind: 'created' | 'updated' | 'deleted';
  version: number;
  summary?: Record<string, unknown>;
  /** Who may see it (shared/auth/policies.ts `canSee`); required, so no change is written without. */
  audience: ChangeAudience;
}

/** A change as the log keeps it: the message sent to sockets plus who may see it (never sent). */
export type StoredChange = ChangeMessage & { audience: ChangeAudience | null };

/** The audience of a queue item's change: whoever may see that station's queue (`queue.view`). */
export function itemAudience(stationId: number): ChangeAudience {
  return { action: 'queue.view', stationIds: [stationId] };
}

/**
 * Records a change inside the caller's transaction and returns its sequence number. It locks the
 * single counter row until that transaction ends, so call it as the LAST write of the transaction:
 * sequence order is then commit order, and a reader of `seq > N` never skips a change that commits later.
 */
export async function recordChange(tx: DbOrTx, change: ChangeInput): Promise<number> {
  // LAST_INSERT_ID(expr) hands the new value back in the statement's own result header
  // (MariaDB/MySQL manual, LAST_INSERT_ID), so taking the number costs no second round trip.
  const [header] = await tx.update(changeCounter).set({ seq: sql`LAST_INSERT_ID(${changeCounter.seq} + 1)` }).where(eq(changeCounter.id, 1));
  if (header.affectedRows !== 1) throw new Error('change_counter row 1 is missing (migration 0001 inserts it)');
  const seq = header.insertId;
  await tx.insert(changeLog).values({
    seq,
    resource: change.resource,
    resourceId: change.resourceId,
    kind: change.kind,
    version: change.version,
    summary: change.summary ?? null,
    audience: change.audience,
    createdAt: new Date(),
  });
  return seq;
}

/** The last sequence number handed out (0 when nothing has changed yet). */
export async function latestSeq(db: Database): Promise<number> {
  const [row] = await db.select({ seq: changeCounter.seq }).from(changeCounter).where(eq(changeCounter.id, 1));
  return row?.seq ?? 0;
}

/** The oldest sequence number still kept, or undefined when the log is empty. */
export async function oldestKeptSeq(db: Database): Promise<number | undefined> {
  const [row] = await db.select({ seq: min(changeLog.seq) }).from(changeLog);
  return row?.seq ?? undefined;
}

/** Changes with seq > `since`, in order, at most `limit`, each with its audience (null when unreadable). */
export async function changesSince(db: Database, since: number, limit = 1000): Promise<StoredChange[]> {
  const rows = await db.select().from(changeLog).where(gt(changeLog.seq, since)).orderBy(asc(changeLog.seq)).limit(limit);
  return rows.map((r) => ({
    seq: r.seq,
    resource: r.resource,
    id: r.resourceId,
    kind: r.kind as ChangeMessage['kind'],
    version: r.version,
    summary: r.summary ?? null,
    at: r.createdAt.toISOString(),
    audience: readAudience(r.audience),
  }));
}

/** A stored audience, or null when missing or not of the expected shape (such a change reaches nobody). */
function readAudience(raw: unknown): ChangeAudience | null {
  const parsed = changeAudienceSchema.safeParse(raw);
  return parsed.success ? parsed.data : null;
}

/**
 * Deletes changes older than `before`, `batch` rows per statement (found along the created_at
 * index, so no statement holds its locks for long), and returns how many went. The counter is
 * kept, so sequence numbers never repeat; a client that resumes from a pruned seq is told to refetch.
 */
export async function pruneChanges(db: Database, before: Date, batch = 5000): Promise<number> {
  let deleted = 0;
  for (;;) {
    const [header] = await db.delete(changeLog).where(lt(changeLog.createdAt, before)).limit(batch);
    deleted += header.affectedRows;
    if (header.affectedRows < batch) return deleted;
  }
}
