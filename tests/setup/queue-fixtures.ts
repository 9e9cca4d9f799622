import { createHash, randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Role } from '@shared/auth/roles';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import type { ItemState } from '@shared/schemas/item-states';
import type { Flag } from '@shared/schemas/flags';
import { createSessionStore, sessionCookieName } from '@server/auth/sessions';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stationAssignments, stations } from '@server/db/schema/stations';
import { uploads, windowChannels, windows } from '@server/db/schema/uploads';
import { userRoles, users } from '@server/db/schema/users';
import type { DecodedStream } from '@server/formats/types';
import { analyzeWindow } from '@server/dsp/pipeline';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { presentQueueRow } from '@server/features/queue/presenters';
import { selectQueueRows } from '@server/features/queue/queue-rows';

/**
 * Test rows in the shape the ingest path writes them (upload → window with the engine's analysis →
 * window_channels → queue item `new` → change log), until tests can go through the real ingest
 * service. The waveforms are synthetic test signals, never check values of their own: checks
 * compare what the API returns with what the same stored samples give through the engine.
 */

/** A signed-in test person: their user id and a Cookie header value. */
export interface TestPerson {
  id: string;
  email: string;
  displayName: string;
  cookie: string;
  sessionId: string;
}

let seq = 0;
const unique = () => `${Date.now().toString(36)}${(seq++).toString(36)}${randomBytes(3).toString('hex')}`;

/**
 * Inserts an active user with `roles` (and station assignments) and opens a session for them.
 * @returns the person with a `Cookie` header value for supertest, ws and browsers
 */
export async function createPerson(db: Database, opts: { roles: Role[]; displayName?: string; stationIds?: number[] }): Promise<TestPerson> {
  const id = `u${unique()}`;
  const email = `${id}@kestrel.example`;
  const displayName = opts.displayName ?? `Test ${opts.roles.join('+')} ${id.slice(-4)}`;
  const now = new Date();
  await db.insert(users).values({ id, email, displayName, passwordHash: null, active: true, createdAt: now, updatedAt: now });
  for (const role of opts.roles) await db.insert(userRoles).values({ userId: id, role });
  for (const stationId of opts.stationIds ?? []) await db.insert(stationAssignments).values({ userId: id, stationId });
  const session = await createSessionStore(db, { idleHours: 24 }).create(id, { ipAddress: '127.0.0.1', userAgent: 'vitest' });
  return { id, email, displayName, sessionId: session.id, cookie: `${sessionCookieName}=${session.id}` };
}

/** Inserts (or finds) a Kestrel Valley station XX.<code>; returns its id. */
export async function ensureStation(db: Database, code: string): Promise<number> {
  const [found] = await db.select({ id: stations.id }).from(stations).where(eq(stations.code, code));
  if (found) return found.id;
  const now = new Date();
  // Concurrent callers may race to create the same station: the unique key decides, the loser reads it.
  const inserted = await db
    .insert(stations)
    .values({
      network: 'XX',
      code,
      name: `Kestrel Valley ${code}`,
      latitude: 46.5,
      longitude: 8.1,
      elevationM: 900,
      profile: defaultProcessingProfile,
      createdAt: now,
      updatedAt: now,
    })
    .then(([res]) => res.insertId)
    .catch(async (err: unknown) => {
      const [again] = await db.select({ id: stations.id }).from(stations).where(eq(stations.code, code));
      if (again) return again.id;
      throw err;
    });
  return inserted;
}

/**
 * A synthetic 3-component window: 100 Hz, `durationS` s of deterministic pseudo-random noise
 * (a linear congruential generator, so runs repeat) with, when `burstAtS` is set, a 5 Hz burst
 * on the vertical from that time. Test input only.
 */
export function syntheticStreams(code: string, startTimeUs: number, opts: { durationS?: number; burstAtS?: number; sampleRateHz?: number } = {}): DecodedStream[] {
  const fs = opts.sampleRateHz ?? 100;
  const n = Math.round((opts.durationS ?? 90) * fs);
  let state = 12345 + code.charCodeAt(code.length - 1);
  const rand = () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648 - 0.5;
  };
  return ['HHZ', 'HHN', 'HHE'].map((cha) => {
    const samples = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let v = 200 * rand();
      if (cha === 'HHZ' && opts.burstAtS !== undefined && i / fs >= opts.burstAtS) {
        const t = i / fs - opts.burstAtS;
        v += 3000 * Math.exp(-t / 3) * Math.sin(2 * Math.PI * 5 * t);
      }
      samples[i] = Math.round(v);
    }
    return {
      id: `XX.${code}.00.${cha}`,
      network: 'XX',
      station: code,
      location: '00',
      channel: cha,
      sampleRateHz: fs,
      startTimeUs,
      samples,
      discontinuities: [],
      encoding: 'int32',
      format: 'mseed2',
    };
  });
}

/** Options of `createItem`. */
export interface ItemOptions {
  station?: string;
  state?: ItemState;
  score?: number;
  flag?: Flag;
  /** Arrival time (created_at), default now. */
  createdAt?: Date;
  /** Window start, default createdAt − 2 min. */
  windowStart?: Date;
  labelType?: string | null;
  /** Store real samples and the engine's analysis (default false: a small placeholder analysis). */
  withSamples?: boolean;
  burstAtS?: number;
  durationS?: number;
  /** The "why flagged" reasons of a placeholder analysis (default ['test fixture']). */
  reasons?: string[];
  /** The placeholder analysis's baseline (default none stated). */
  baseline?: 'station' | 'network default';
}

/**
 * Inserts one queue item with its upload and window the way ingest does, and records its
 * `created` change (the hub is not notified: call ctx.hub.notify() when a test listens).
 * @returns the item id
 */
export async function createItem(db: Database, opts: ItemOptions = {}): Promise<number> {
  const code = opts.station ?? 'KV01';
  const stationId = await ensureStation(db, code);
  const createdAt = opts.createdAt ?? new Date();
  const windowStart = opts.windowStart ?? new Date(createdAt.getTime() - 120_000);
  const streams = opts.withSamples ? syntheticStreams(code, windowStart.getTime() * 1000, { burstAtS: opts.burstAtS, durationS: opts.durationS }) : [];
  const analysis = opts.withSamples ? analyzeWindow(streams, defaultProcessingProfile) : null;
  const id = unique();
  const original = Buffer.from(`fixture ${id}`);
  return db.transaction(async (tx) => {
    const [up] = await tx.insert(uploads).values({
      sha256: createHash('sha256').update(original).digest('hex'),
      filename: `${code}-${id}.mseed`,
      contentType: 'application/vnd.fdsn.mseed',
      sizeBytes: original.length,
      format: 'mseed2',
      original,
      stationId,
      createdAt,
    });
    const durationS = opts.withSamples ? (opts.durationS ?? 90) : 90;
    const [win] = await tx.insert(windows).values({
      uploadId: up.insertId,
      stationId,
      startTime: windowStart,
      endTime: new Date(windowStart.getTime() + durationS * 1000),
      analysis: analysis ?? { channels: [], score: opts.score ?? 0, flag: opts.flag ?? 'needs eyes', reasons: [], ...(opts.baseline ? { baseline: opts.baseline } : {}) },
      engineVersion: 'test',
      createdAt,
    });
    for (const s of streams) {
      const buf = Buffer.alloc(s.samples.length * 8);
      for (let i = 0; i < s.samples.length; i++) buf.writeDoubleLE(s.samples[i] as number, i * 8);
      await tx.insert(windowChannels).values({
        windowId: win.insertId,
        streamId: s.id,
        sampleRateHz: s.sampleRateHz,
        startTimeUs: s.startTimeUs,
        sampleCount: s.samples.length,
        samples: buf,
        qc: [],
      });
    }
    const [item] = await tx.insert(queueItems).values({
      windowId: win.insertId,
      stationId,
      state: opts.state ?? 'new',
      score: opts.score ?? analysis?.score ?? 0,
      flag: opts.flag ?? analysis?.flag ?? 'needs eyes',
      reasons: analysis?.reasons ?? opts.reasons ?? ['test fixture'],
      windowStart,
      version: 1,
      labelType: opts.labelType ?? null,
      createdAt,
      updatedAt: createdAt,
    });
    const [row] = await selectQueueRows(tx).where(eq(queueItems.id, item.insertId));
    await recordChange(tx, { resource: 'item', resourceId: item.insertId, kind: 'created', version: 1, summary: row ? presentQueueRow(row) : {}, audience: itemAudience(stationId) });
    return item.insertId;
  });
}
