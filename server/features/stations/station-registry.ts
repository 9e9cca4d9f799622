import { createHash, randomBytes } from 'node:crypto';
import { and, count, desc, eq, inArray, isNull, max, sql } from 'drizzle-orm';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import {
  channelResponseSchema,
  profileNyquistIssues,
  stationCreateSchema,
  stationUpdateSchema,
  channelInputSchema,
  type ChannelView,
  type FieldIssue,
  type StationDetail,
  type StationSummary,
  type TokenCreated,
  type TokenView,
} from '@shared/schemas/station';
import type { z } from 'zod';
import type { Database, DbOrTx } from '@server/db/client';
import { recordAudit } from '@server/features/audit/audit';
import { channels, ingestTokens, stationAssignments, stations } from '@server/db/schema/stations';
import { users } from '@server/db/schema/users';
import { windows } from '@server/db/schema/uploads';
import { AppError, badRequest, conflict, notFound } from '@server/errors';
import type { IngestPrincipal } from '@server/auth/principal';
import type { PolesZerosResponse } from '@server/dsp/response';

/**
 * The station registry: stations, channels, processing profiles and per-station ingest tokens.
 * Routes validate the body with the shared zod schemas first; this module checks what needs the
 * database (unique codes, the profile against the channels' sample rates) and writes an audit row
 * for every change.
 */

/** Who is acting, for audit rows. */
export interface Actor {
  userId: string | null;
  label: string;
  ipAddress: string | null;
}

/** Adds one audit row through the one audit writer (inside the caller's transaction when given one). */
export async function writeAudit(
  db: DbOrTx,
  actor: Actor,
  action: string,
  target: { type: string; id: string | number },
  details?: unknown,
): Promise<void> {
  await recordAudit(db, { actor: { id: actor.userId, label: actor.label }, action, targetType: target.type, targetId: target.id, details, ip: actor.ipAddress });
}

/** The station's stream id prefix `NET.STA`. */
export const stationKey = (network: string, code: string) => `${network}.${code}`;

/** A 400 whose details list field-level issues (the same shape parseInput uses). */
export function fieldError(issues: FieldIssue[], prefix = ''): AppError {
  const withPrefix = issues.map((i) => ({ path: prefix ? `${prefix}.${i.path}` : i.path, message: i.message }));
  const first = withPrefix[0];
  return badRequest(first ? `${first.path}: ${first.message}` : 'invalid input', { issues: withPrefix });
}

type StationRow = typeof stations.$inferSelect;
type ChannelRow = typeof channels.$inferSelect;

function channelView(station: Pick<StationRow, 'network' | 'code'>, c: ChannelRow): ChannelView {
  return {
    id: c.id,
    location: c.location,
    code: c.code,
    streamId: `${station.network}.${station.code}.${c.location}.${c.code}`,
    sampleRateHz: c.sampleRateHz,
    sensitivity: c.sensitivity,
    sensitivityFrequencyHz: c.sensitivityFrequencyHz,
    sensitivityInputUnits: c.sensitivityInputUnits,
    hasResponse: c.response !== null && c.response !== undefined,
  };
}

/** The station's profile with every default filled in (a stored profile that no longer parses falls back to the defaults). */
export function storedProfile(row: Pick<StationRow, 'profile'>): ProcessingProfile {
  const parsed = processingProfileSchema.safeParse(row.profile ?? {});
  return parsed.success ? parsed.data : processingProfileSchema.parse({});
}

/** Stations visible in `scope` (`'all'` or ids), by network and code. */
export async function listStations(db: Database, scope: 'all' | readonly number[]): Promise<StationSummary[]> {
  if (scope !== 'all' && scope.length === 0) return [];
  const where = scope === 'all' ? undefined : inArray(stations.id, [...scope]);
  const rows = await db.select().from(stations).where(where).orderBy(stations.network, stations.code);
  if (rows.length === 0) return [];
  const ids = rows.map((r) => r.id);
  const chCounts = await db.select({ stationId: channels.stationId, n: count() }).from(channels).where(inArray(channels.stationId, ids)).groupBy(channels.stationId);
  const last = await db.select({ stationId: windows.stationId, at: max(windows.startTime) }).from(windows).where(inArray(windows.stationId, ids)).groupBy(windows.stationId);
  const nBy = new Map(chCounts.map((c) => [c.stationId, c.n]));
  const lastBy = new Map(last.map((l) => [l.stationId, l.at]));
  return rows.map((r) => summary(r, nBy.get(r.id) ?? 0, lastBy.get(r.id) ?? null));
}

function summary(r: StationRow, channelCount: number, lastWindowAt: Date | string | null): StationSummary {
  return {
    id: r.id,
    network: r.network,
    code: r.code,
    name: r.name,
    latitude: r.latitude,
    longitude: r.longitude,
    elevationM: r.elevationM,
    siteDescription: r.siteDescription,
    channelCount,
    lastWindowAt: lastWindowAt === null ? null : new Date(lastWindowAt).toISOString(),
  };
}

/** One station with channels and profile; null when missing. */
export async function getStation(db: Database, id: number): Promise<StationDetail | null> {
  const [row] = await db.select().from(stations).where(eq(stations.id, id));
  if (!row) return null;
  const chRows = await db.select().from(channels).where(eq(channels.stationId, id)).orderBy(channels.location, channels.code);
  const [last] = await db.select({ at: max(windows.startTime) }).from(windows).where(eq(windows.stationId, id));
  return {
    ...summary(row, chRows.length, last?.at ?? null),
    channels: chRows.map((c) => channelView(row, c)),
    profile: storedProfile(row),
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

/** The station row; throws 404 when missing. */
export async function requireStationRow(db: DbOrTx, id: number): Promise<StationRow> {
  const [row] = await db.select().from(stations).where(eq(stations.id, id));
  if (!row) throw notFound(`Station ${id}`);
  return row;
}

/**
 * Registers a station (profile: the defaults). Throws 409 naming the codes when NET.STA exists.
 * @param opts.assignTo a user to assign to the new station (an operator registering their own)
 * @returns the new station's id
 */
export async function createStation(db: Database, input: z.output<typeof stationCreateSchema>, actor: Actor, opts: { assignTo?: string } = {}): Promise<number> {
  return db.transaction(async (tx) => {
    const [dup] = await tx.select({ id: stations.id }).from(stations).where(and(eq(stations.network, input.network), eq(stations.code, input.code)));
    if (dup) throw conflict(`Station ${stationKey(input.network, input.code)} is already registered`, { field: 'code' });
    const now = new Date();
    const [res] = await tx.insert(stations).values({
      network: input.network,
      code: input.code,
      name: input.name,
      latitude: input.latitude,
      longitude: input.longitude,
      elevationM: input.elevationM,
      siteDescription: input.siteDescription ?? null,
      profile: processingProfileSchema.parse({}),
      createdAt: now,
      updatedAt: now,
    }).$returningId();
    if (!res) throw new Error('insert returned no id');
    if (opts.assignTo) await tx.insert(stationAssignments).values({ userId: opts.assignTo, stationId: res.id });
    await writeAudit(tx, actor, 'station.create', { type: 'station', id: res.id }, { station: stationKey(input.network, input.code) });
    return res.id;
  });
}

/** Updates a station's editable facts; throws 404 when missing. */
export async function updateStation(db: Database, id: number, patch: z.output<typeof stationUpdateSchema>, actor: Actor): Promise<void> {
  await db.transaction(async (tx) => {
    const row = await requireStationRow(tx, id);
    const changes: Record<string, { from: unknown; to: unknown }> = {};
    for (const key of ['name', 'latitude', 'longitude', 'elevationM', 'siteDescription'] as const) {
      const to = patch[key];
      if (to !== undefined && to !== row[key]) changes[key] = { from: row[key], to };
    }
    if (Object.keys(changes).length === 0) return;
    await tx.update(stations).set({ ...patch, updatedAt: new Date() }).where(eq(stations.id, id));
    await writeAudit(tx, actor, 'station.update', { type: 'station', id }, { station: stationKey(row.network, row.code), changes });
  });
}

/**
 * Adds or replaces (by location + code) a channel. Refuses (400, field `sampleRateHz`) a rate that
 * the station's current profile cannot use, naming the profile field.
 */
export async function upsertChannel(db: Database, stationId: number, input: z.output<typeof channelInputSchema>, actor: Actor): Promise<number> {
  return db.transaction(async (tx) => {
    const row = await requireStationRow(tx, stationId);
    const streamId = `${row.network}.${row.code}.${input.location}.${input.code}`;
    const issues = profileNyquistIssues(storedProfile(row), [{ streamId, sampleRateHz: input.sampleRateHz }]);
    if (issues.length > 0) {
      throw fieldError(issues.map((i) => ({ path: 'sampleRateHz', message: `the station's profile field ${i.path} ${i.message}: change the profile first` })));
    }
    const now = new Date();
    const values = {
      sampleRateHz: input.sampleRateHz,
      sensitivity: input.sensitivity ?? null,
      sensitivityFrequencyHz: input.sensitivityFrequencyHz ?? null,
      sensitivityInputUnits: input.sensitivityInputUnits ?? null,
      response: input.response ?? null,
      updatedAt: now,
    };
    const [existing] = await tx
      .select({ id: channels.id })
      .from(channels)
      .where(and(eq(channels.stationId, stationId), eq(channels.location, input.location), eq(channels.code, input.code)));
    let id: number;
    if (existing) {
      await tx.update(channels).set(values).where(eq(channels.id, existing.id));
      id = existing.id;
    } else {
      const [res] = await tx.insert(channels).values({ stationId, location: input.location, code: input.code, createdAt: now, ...values }).$returningId();
      if (!res) throw new Error('insert returned no id');
      id = res.id;
    }
    await writeAudit(tx, actor, existing ? 'channel.update' : 'channel.create', { type: 'channel', id }, { streamId, ...values, response: values.response ? 'poles and zeros' : null });
    return id;
  });
}

/** Removes a channel; 404 when it is not the station's. */
export async function deleteChannel(db: Database, stationId: number, channelId: number, actor: Actor): Promise<void> {
  await db.transaction(async (tx) => {
    const row = await requireStationRow(tx, stationId);
    const [ch] = await tx.select().from(channels).where(and(eq(channels.id, channelId), eq(channels.stationId, stationId)));
    if (!ch) throw notFound(`Channel ${channelId} of station ${stationKey(row.network, row.code)}`);
    await tx.delete(channels).where(eq(channels.id, channelId));
    await writeAudit(tx, actor, 'channel.delete', { type: 'channel', id: channelId }, { streamId: `${row.network}.${row.code}.${ch.location}.${ch.code}` });
  });
}

/**
 * Replaces the station's processing profile after checking it against every channel's sample rate
 * (400 with field-level issues under `profile.`, e.g. `profile.bands.high.fmax: must be below
 * 0.45·fs = 18 Hz of XX.KV01.00.HHZ (40 Hz)`).
 * @returns the stored profile
 */
export async function updateProfile(db: Database, stationId: number, profile: ProcessingProfile, actor: Actor): Promise<ProcessingProfile> {
  return db.transaction(async (tx) => {
    const row = await requireStationRow(tx, stationId);
    const chRows = await tx.select().from(channels).where(eq(channels.stationId, stationId));
    const issues = profileNyquistIssues(
      profile,
      chRows.map((c) => ({ streamId: `${row.network}.${row.code}.${c.location}.${c.code}`, sampleRateHz: c.sampleRateHz })),
    );
    if (issues.length > 0) throw fieldError(issues, 'profile');
    await tx.update(stations).set({ profile, updatedAt: new Date() }).where(eq(stations.id, stationId));
    await writeAudit(tx, actor, 'station.profile', { type: 'station', id: stationId }, { station: stationKey(row.network, row.code), from: storedProfile(row), to: profile });
    return profile;
  });
}

/** SHA-256 of a token secret, hex (what ingest_tokens.token_hash holds). */
export function hashToken(secret: string): string {
  return createHash('sha256').update(secret, 'utf8').digest('hex');
}

/** Token secrets start with this, so a leaked one is recognisable in logs and scanners. */
export const TOKEN_PREFIX = 'ssi_';

function tokenView(r: typeof ingestTokens.$inferSelect, createdBy: string | null): TokenView {
  return {
    id: r.id,
    stationId: r.stationId,
    label: r.label,
    createdAt: r.createdAt.toISOString(),
    lastUsedAt: r.lastUsedAt ? r.lastUsedAt.toISOString() : null,
    revokedAt: r.revokedAt ? r.revokedAt.toISOString() : null,
    createdBy,
  };
}

/**
 * Creates an ingest token for one station: 32 random bytes, base64url, prefixed `ssi_`. Only the
 * SHA-256 hash is stored; the secret is in the answer this once.
 */
export async function createToken(db: Database, stationId: number, label: string, actor: Actor): Promise<TokenCreated> {
  return db.transaction(async (tx) => {
    const row = await requireStationRow(tx, stationId);
    const secret = TOKEN_PREFIX + randomBytes(32).toString('base64url');
    const now = new Date();
    const [res] = await tx
      .insert(ingestTokens)
      .values({ stationId, label, tokenHash: hashToken(secret), createdByUserId: actor.userId, createdAt: now })
      .$returningId();
    if (!res) throw new Error('insert returned no id');
    await writeAudit(tx, actor, 'token.create', { type: 'ingest_token', id: res.id }, { station: stationKey(row.network, row.code), label });
    const [created] = await tx.select().from(ingestTokens).where(eq(ingestTokens.id, res.id));
    if (!created) throw new Error('token vanished');
    return { token: tokenView(created, actor.label), secret };
  });
}

/** The station's tokens, newest first (never the secrets). */
export async function listTokens(db: Database, stationId: number): Promise<TokenView[]> {
  const rows = await db
    .select({ t: ingestTokens, by: users.displayName })
    .from(ingestTokens)
    .leftJoin(users, eq(users.id, ingestTokens.createdByUserId))
    .where(eq(ingestTokens.stationId, stationId))
    .orderBy(desc(ingestTokens.createdAt), desc(ingestTokens.id));
  return rows.map((r) => tokenView(r.t, r.by));
}

/** Revokes a token of the station (idempotent); 404 when it is not the station's. */
export async function revokeToken(db: Database, stationId: number, tokenId: number, actor: Actor): Promise<TokenView> {
  return db.transaction(async (tx) => {
    const [t] = await tx.select().from(ingestTokens).where(and(eq(ingestTokens.id, tokenId), eq(ingestTokens.stationId, stationId)));
    if (!t) throw notFound(`Ingest token ${tokenId} of station ${stationId}`);
    if (!t.revokedAt) {
      await tx.update(ingestTokens).set({ revokedAt: new Date() }).where(eq(ingestTokens.id, tokenId));
      await writeAudit(tx, actor, 'token.revoke', { type: 'ingest_token', id: tokenId }, { label: t.label });
    }
    const [after] = await tx.select().from(ingestTokens).where(eq(ingestTokens.id, tokenId));
    if (!after) throw notFound(`Ingest token ${tokenId}`);
    return tokenView(after, null);
  });
}

/** How stale an ingest token's recorded last use may get before a request updates it, ms. */
export const TOKEN_LAST_USED_RESOLUTION_MS = 60_000;

/**
 * The BearerResolver for `authenticate` (server/auth/authenticate.ts): hashes the presented token
 * with SHA-256, finds an unrevoked ingest token with that hash and records its last use (to the
 * minute: `TOKEN_LAST_USED_RESOLUTION_MS`). Unknown
 * or revoked tokens resolve to null (the middleware answers 401).
 */
export function ingestTokenResolver(db: Database): (token: string) => Promise<IngestPrincipal | null> {
  return async (token) => {
    if (token.length === 0 || token.length > 200) return null;
    const [row] = await db
      .select({ id: ingestTokens.id, stationId: ingestTokens.stationId, label: ingestTokens.label, lastUsedAt: ingestTokens.lastUsedAt })
      .from(ingestTokens)
      .where(and(eq(ingestTokens.tokenHash, hashToken(token)), isNull(ingestTokens.revokedAt)));
    if (!row) return null;
    // Last use to the minute: a station sending a window every few seconds does not pay for a
    // committed write on every request.
    const now = new Date();
    if (row.lastUsedAt === null || now.getTime() - row.lastUsedAt.getTime() >= TOKEN_LAST_USED_RESOLUTION_MS) {
      await db.update(ingestTokens).set({ lastUsedAt: now }).where(eq(ingestTokens.id, row.id));
    }
    return { tokenId: row.id, stationId: row.stationId, label: row.label };
  };
}

/** A registered channel with what ingest needs. */
export interface RegisteredChannel {
  streamId: string;
  sampleRateHz: number;
  sensitivity: number | null;
  sensitivityInputUnits: string | null;
  response: unknown;
}

/** A registered station with its channels, as ingest looks it up by NET.STA. */
export interface RegisteredStation {
  id: number;
  network: string;
  code: string;
  profile: ProcessingProfile;
  channels: Map<string, RegisteredChannel>;
}

const VELOCITY_UNITS = /^(m\/s|m\/sec|meters?\/s(ec(ond)?)?)$/i;

/**
 * What the engine divides a channel by: its full poles-and-zeros response when one is stored, else
 * its flat sensitivity (counts per m/s), else null (the channel is analysed in counts). A
 * sensitivity whose input units are not velocity (e.g. an accelerometer's M/S**2) is not used,
 * since the engine's physical units are m/s. The ingest (analysis) and the trace view both ask here.
 */
export function channelSensitivity(ch: Pick<RegisteredChannel, 'sensitivity' | 'sensitivityInputUnits' | 'response'>): number | PolesZerosResponse | null {
  const units = ch.sensitivityInputUnits;
  const velocity = units === null || units.trim() === '' || VELOCITY_UNITS.test(units.trim());
  if (!velocity) return null;
  const paz = channelResponseSchema.safeParse(ch.response);
  if (paz.success) return paz.data;
  return ch.sensitivity !== null && ch.sensitivity > 0 ? ch.sensitivity : null;
}

/** Stations by `NET.STA` key among `keys` (unknown keys are absent from the map). */
export async function stationsByKeys(db: DbOrTx, keys: readonly string[]): Promise<Map<string, RegisteredStation>> {
  const out = new Map<string, RegisteredStation>();
  if (keys.length === 0) return out;
  const conds = keys.map((k) => {
    const [net = '', sta = ''] = k.split('.');
    return sql`(${stations.network} = ${net} AND ${stations.code} = ${sta})`;
  });
  // One round trip: each station with its channels (a station without channels comes once, with nulls).
  const rows = await db.select({ s: stations, c: channels }).from(stations).leftJoin(channels, eq(channels.stationId, stations.id)).where(sql.join(conds, sql` OR `));
  for (const { s: r, c } of rows) {
    const key = stationKey(r.network, r.code);
    let station = out.get(key);
    if (!station) {
      station = { id: r.id, network: r.network, code: r.code, profile: storedProfile(r), channels: new Map<string, RegisteredChannel>() };
      out.set(key, station);
    }
    if (!c) continue;
    const streamId = `${r.network}.${r.code}.${c.location}.${c.code}`;
    station.channels.set(streamId, { streamId, sampleRateHz: c.sampleRateHz, sensitivity: c.sensitivity, sensitivityInputUnits: c.sensitivityInputUnits, response: c.response });
  }
  return out;
}
