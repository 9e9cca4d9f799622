import { sql } from 'drizzle-orm';
import type { Database } from './client';

/** Error codes (mysql2, MariaDB, Node sockets) that mean "the database cannot be reached right now". */
const DATABASE_DOWN_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'EPIPE',
  'ETIMEDOUT',
  'ENOTFOUND',
  'EHOSTUNREACH',
  'PROTOCOL_CONNECTION_LOST',
  'PROTOCOL_SEQUENCE_TIMEOUT',
  'PROTOCOL_ENQUEUE_AFTER_QUIT',
  'PROTOCOL_ENQUEUE_AFTER_FATAL_ERROR',
  'ER_CON_COUNT_ERROR',
  'ER_SERVER_SHUTDOWN',
  'ER_CONNECTION_KILLED',
  'ER_QUERY_INTERRUPTED',
]);

/**
 * True when `err` (or an error it wraps as `cause`, as drizzle's DrizzleQueryError does, up to 5
 * levels) says the database is unreachable: a connection code from DATABASE_DOWN_CODES, or
 * mysql2's uncoded "closed state" error of a connection the server dropped.
 */
export function isDatabaseDown(err: unknown): boolean {
  let e: unknown = err;
  for (let depth = 0; depth < 5 && e instanceof Error; depth++) {
    const code = (e as { code?: unknown }).code;
    if (typeof code === 'string' && DATABASE_DOWN_CODES.has(code)) return true;
    if (/connection is in closed state|Can't write in closed state|Pool is closed/.test(e.message)) return true;
    e = (e as { cause?: unknown }).cause;
  }
  return false;
}

/** One round trip to the database (`SELECT 1`); rejects when it cannot be reached. */
export async function pingDatabase(db: Database): Promise<void> {
  await db.execute(sql`SELECT 1`);
}
