import { createHash, randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Pool } from 'mysql2/promise';
import { z } from 'zod';
import type { Role } from '@shared/auth/roles';
import { hashPassword } from '@server/auth/password';
import { createSessionStore, sessionCookieName } from '@server/auth/sessions';
import type { Database } from '@server/db/client';
import { channels, ingestTokens } from '@server/db/schema/stations';
import { userRoles, users } from '@server/db/schema/users';
import { ensureStation } from '@tests/setup/queue-fixtures';

/**
 * Rows the fault, hostile-input and benchmark runs need, written straight to the database (the
 * invented Kestrel Valley network XX): people with real sessions, stations with channels, and
 * per-station ingest tokens stored as their SHA-256 hash (as server/db/schema/stations.ts says).
 */

/** A person with a session: the Cookie header value and, when asked, the password. */
export interface SeededPerson {
  id: string;
  email: string;
  sessionId: string;
  cookie: string;
}

/** Creates an active user with `roles` and a session; `password` is hashed with argon2id when given. */
export async function seedPerson(db: Database, opts: { roles: Role[]; password?: string; email?: string }): Promise<SeededPerson> {
  const id = `f${randomBytes(9).toString('hex')}`;
  const email = opts.email ?? `${id}@kestrel.example`;
  const now = new Date();
  const passwordHash = opts.password ? await hashPassword(opts.password) : null;
  await db.insert(users).values({ id, email, displayName: `Fault test ${id.slice(-4)}`, passwordHash, active: true, createdAt: now, updatedAt: now });
  for (const role of opts.roles) await db.insert(userRoles).values({ userId: id, role });
  const session = await createSessionStore(db, { idleHours: 24 }).create(id, { ipAddress: '127.0.0.1', userAgent: 'fault-test' });
  return { id, email, sessionId: session.id, cookie: `${sessionCookieName}=${session.id}` };
}

/** Registers XX.<code> (tests/setup/queue-fixtures.ts `ensureStation`) with HHZ/HHN/HHE channels at `rateHz` (location 00) when it has none; returns its id. */
export async function seedStation(db: Database, code: string, rateHz = 100): Promise<number> {
  const stationId = await ensureStation(db, code);
  const [hasChannel] = await db.select({ id: channels.id }).from(channels).where(eq(channels.stationId, stationId)).limit(1);
  if (hasChannel) return stationId;
  const now = new Date();
  for (const cha of ['HHZ', 'HHN', 'HHE']) {
    await db.insert(channels).values({ stationId, location: '00', code: cha, sampleRateHz: rateHz, sensitivity: null, createdAt: now, updatedAt: now });
  }
  return stationId;
}

/** Creates an ingest token for a station; returns the secret (only its SHA-256 is stored). */
export async function seedIngestToken(db: Database, stationId: number, label = 'fault test'): Promise<string> {
  const token = `kvi_${randomBytes(24).toString('base64url')}`;
  await db.insert(ingestTokens).values({ stationId, label, tokenHash: createHash('sha256').update(token, 'utf8').digest('hex'), createdAt: new Date() });
  return token;
}

/** The tables one upload writes. */
export const ingestTables = ['uploads', 'windows', 'window_channels', 'window_features', 'queue_items', 'change_log'] as const;

const countRows = z.array(z.object({ n: z.coerce.number() })).length(1);

/** Row counts of the tables an upload writes. */
export async function ingestRowCounts(pool: Pool): Promise<Record<(typeof ingestTables)[number], number>> {
  const out = { uploads: 0, windows: 0, window_channels: 0, window_features: 0, queue_items: 0, change_log: 0 };
  for (const t of ingestTables) {
    const [rows] = await pool.query(`SELECT COUNT(*) AS n FROM \`${t}\``);
    out[t] = countRows.parse(rows)[0]?.n ?? NaN;
  }
  return out;
}
