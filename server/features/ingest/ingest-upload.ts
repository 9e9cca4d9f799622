import { createHash, webcrypto } from 'node:crypto';
import { eq, inArray } from 'drizzle-orm';
import { z } from 'zod';
import { can } from '@shared/auth/policies';
import { capMessage, clipInput, MAX_QUOTED_CHARS } from '@shared/quote-input';
import { flagSchema } from '@shared/schemas/flags';
import type { UploadOutcome } from '@shared/schemas/upload';
import type { Database, DbOrTx } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { uploads, windowChannels, windows } from '@server/db/schema/uploads';
import { windowFeatures } from '@server/db/schema/window-features';
import type { AnalysisResult, AnalyzeOptions, ChannelResult } from '@server/dsp/pipeline';
import type { PolesZerosResponse } from '@server/dsp/response';
import type { DecodedStream } from '@server/formats/types';
import { defaultWindowLimits, type WindowLimits } from '@server/formats/window-limits';
import type { AnalysisPool } from '@server/jobs/analysis-pool';
import type { Logger } from '@server/logger';
import { isDatabaseDown } from '@server/db/availability';
import { presentQueueRow } from '@server/features/queue/presenters';
import { itemArrivals } from '@server/db/schema/supervisor';
import type { AuthUser, IngestPrincipal } from '@server/auth/principal';
import { itemAudience, recordChange } from '@server/realtime/change-log';
import { firstTriggerMs, recheckLoneTriggers, regroupArrivals } from '@server/features/events/candidate-events';
import { syncEventsFromGroups } from '@server/features/events/event-service';
import { decodeStoredSamples, encodeSamples } from '@server/db/samples-codec';
import { stationBaseline } from '@server/features/stations/station-baseline';
import { channelSensitivity, stationKey, stationsByKeys, writeAudit, type Actor, type RegisteredStation } from '@server/features/stations/station-registry';
import { applyResemblance, type ResemblanceOutcome } from '@server/features/similarity/resemblance';
import { similaritySettings, type SimilaritySettings } from '@server/features/similarity/settings';
import { loadStationBank, pruneStationTemplates, resolveMatches, storeTemplateAndMatches, type StationTemplate } from '@server/features/similarity/template-store';
import type { MatchingOutcome } from '@server/features/similarity/window-matching';

/**
 * Ingest of uploaded waveform files: sha256 → duplicate? → decode → stations known and in the
 * caller's scope → analysis in the worker pool (per station window, with the station's profile,
 * baseline, expected rates and sensitivities) → ONE transaction writing the upload with its
 * original bytes, the window(s), their channels' samples, the window features, the queue item(s),
 * an audit row and, last, the change-log rows → `notify()` after the commit.
 *
 * One file never stops another: each gets its own outcome. An error at any step before the commit
 * leaves no row behind (the transaction rolls back; analysis happens before it opens).
 */

/** The engine version stored with every window. */
export const ENGINE_VERSION = '2';

/** One uploaded file. */
export interface IngestFile {
  filename: string;
  contentType?: string | null;
  bytes: Uint8Array;
}

/** Who uploads: a signed-in person or a station's ingest token. */
export type IngestCaller = ({ kind: 'user'; user: AuthUser } | { kind: 'ingest'; ingest: IngestPrincipal }) & { ipAddress: string | null };

/** What the ingest service needs. */
export interface IngestDeps {
  db: Database;
  pool: AnalysisPool;
  /** Told after each commit (the live hub). */
  notify: () => void;
  /** The largest window accepted (default `defaultWindowLimits`: 1 h, 720 000 samples per channel). */
  limits?: WindowLimits;
  logger: Logger;
  /** Template matching settings (default: from the environment, `similaritySettings`). */
  similarity?: SimilaritySettings;
  /**
   * Test-only: runs inside the transaction after every row is written and before the commit; a
   * throw here must roll everything back.
   */
  beforeCommit?: (tx: DbOrTx, info: { filename: string; uploadId: number; itemIds: number[] }) => Promise<void>;
}

/** Options for one request. */
export interface IngestOptions {
  /** Stream id for CSV files. */
  streamId?: string;
  /** Time of t = 0 for CSV files with relative times, µs since epoch (wins over a `# start=` line). */
  startTimeUs?: number;
}

/** A file-level refusal carrying the outcome's status and code. */
class FileRefused extends Error {
  constructor(
    readonly httpStatus: number,
    readonly code: string,
    message: string,
  ) {
    super(message);
  }
}

/** A file name as messages show it: at most MAX_QUOTED_CHARS characters, its extension kept. */
const shownName = (filename: string) => clipInput(filename, MAX_QUOTED_CHARS, 12);

/** SHA-256 of the bytes, hex. */
export function sha256Hex(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

/**
 * SHA-256 of the bytes, hex, hashed on libuv's thread pool (Web Crypto's digest is asynchronous in
 * Node), so hashing a 25 MB upload does not hold the event loop.
 */
export async function sha256HexOffThread(bytes: Uint8Array): Promise<string> {
  return Buffer.from(await webcrypto.subtle.digest('SHA-256', bytes)).toString('hex');
}

function actorOf(caller: IngestCaller): Actor {
  return caller.kind === 'user'
    ? { userId: caller.user.id, label: caller.user.email, ipAddress: caller.ipAddress }
    : { userId: null, label: `ingest token "${caller.ingest.label}"`, ipAddress: caller.ipAddress };
}

/** Whether the caller may upload for `stationId`: the policy for people, the own station for tokens. */
function mayUpload(caller: IngestCaller, stationId: number): boolean {
  return caller.kind === 'user' ? can(caller.user, 'upload.create', { stationId }) : caller.ingest.stationId === stationId;
}

/** The stored items of an existing upload, as an outcome's `items`. */
async function itemsOfUpload(db: DbOrTx, uploadId: number): Promise<NonNullable<UploadOutcome['items']>> {
  const rows = await db
    .select({ id: queueItems.id, flag: queueItems.flag, score: queueItems.score, windowStart: queueItems.windowStart, network: stations.network, code: stations.code, windowId: windows.id })
    .from(windows)
    .innerJoin(queueItems, eq(queueItems.windowId, windows.id))
    .innerJoin(stations, eq(stations.id, windows.stationId))
    .where(eq(windows.uploadId, uploadId))
    .orderBy(queueItems.id);
  const chans = rows.length
    ? await db.select({ windowId: windowChannels.windowId, streamId: windowChannels.streamId }).from(windowChannels).where(inArray(windowChannels.windowId, rows.map((r) => r.windowId)))
    : [];
  return rows.map((r) => ({
    id: r.id,
    station: stationKey(r.network, r.code),
    flag: flagSchema.parse(r.flag),
    score: r.score,
    windowStart: r.windowStart.toISOString(),
    channels: chans.filter((c) => c.windowId === r.windowId).map((c) => c.streamId),
  }));
}

/**
 * Samples as little-endian float64 bytes with no header: the LEGACY layout of
 * window_channels.samples (rows written before `encodeSamples`), kept so old rows can be written
 * in tests and so the layout stays documented. New rows use `encodeSamples` (samples-codec.ts).
 */
export function samplesToBytes(samples: Float64Array): Buffer {
  const buf = Buffer.allocUnsafe(samples.length * 8);
  for (let i = 0; i < samples.length; i++) buf.writeDoubleLE(samples[i] as number, i * 8);
  return buf;
}

/**
 * A stored window_channels.samples blob back to samples, whatever its layout (legacy float64, or
 * tagged int32/float64, raw or DEFLATEd; see `decodeStoredSamples`).
 * @throws RangeError when the blob is not a valid samples blob
 */
export function bytesToSamples(bytes: Uint8Array): Float64Array {
  return decodeStoredSamples(bytes);
}

/** A mysql2 connection's `execute` (prepared statement, binary protocol). */
type Execute = (sql: string, params: unknown[]) => Promise<unknown>;

/**
 * The open transaction's own mysql2 connection's `execute`, or null when it cannot be reached
 * (drizzle keeps it as `session.client`; a pool there would mean another connection, outside the
 * transaction, so that is refused too).
 */
function transactionExecute(tx: DbOrTx): Execute | null {
  const session: unknown = Reflect.get(tx, 'session');
  if (typeof session !== 'object' || session === null) return null;
  const client: unknown = Reflect.get(session, 'client');
  if (typeof client !== 'object' || client === null) return null;
  if (typeof Reflect.get(client, 'getConnection') === 'function') return null;
  const execute: unknown = Reflect.get(client, 'execute');
  if (typeof execute !== 'function') return null;
  return (sql, params) => Promise.resolve(Reflect.apply(execute, client, [sql, params]));
}

const insertResultSchema = z.tuple([z.object({ insertId: z.number() }).loose()], z.unknown());

/**
 * Runs a drizzle INSERT with its parameters sent as binary (mysql2 `execute`, a prepared statement)
 * on the transaction's connection, instead of drizzle's text `query`, which hex-escapes BLOBs and
 * so sends twice their size as SQL (measured: 205 kB of BLOBs commit in 5.2 ms binary against
 * 8.5 ms as text; docs/PERFORMANCE.md). Falls back to the drizzle statement when the connection
 * cannot be reached. Returns the first inserted id, as `$returningId()` would.
 */
async function insertBinary(tx: DbOrTx, insert: { toSQL(): { sql: string; params: unknown[] }; execute(): Promise<unknown> }): Promise<Array<{ id: number }>> {
  const execute = transactionExecute(tx);
  let result: unknown;
  if (execute) {
    const { sql, params } = insert.toSQL();
    result = await execute(sql, params);
  } else result = await insert.execute();
  const parsed = insertResultSchema.safeParse(result);
  if (!parsed.success) throw new Error('insert returned no result header');
  return [{ id: parsed.data[0].insertId }];
}

/**
 * The engine's sensitivity options for a station's channels (`channelSensitivity`: a full
 * poles-and-zeros response, else a flat velocity sensitivity; none for other input units) and the
 * registered sample rates.
 */
export function analysisOptionsFor(station: RegisteredStation, streams: readonly DecodedStream[]): Pick<AnalyzeOptions, 'sensitivity' | 'expectedSampleRateHz'> {
  const sensitivity: Record<string, number | PolesZerosResponse> = {};
  const expectedSampleRateHz: Record<string, number> = {};
  for (const s of streams) {
    const ch = station.channels.get(s.id);
    if (!ch) continue;
    expectedSampleRateHz[s.id] = ch.sampleRateHz;
    const used = channelSensitivity(ch);
    if (used !== null) sensitivity[s.id] = used;
  }
  return { sensitivity, expectedSampleRateHz };
}

/**
 * The noise level of a channel: the median over 1–5 Hz of its acceleration PSD in dB rel
 * 1 (m/s²)²/Hz when the analysis had a sensitivity, else of 10·log10 of the counts PSD.
 * Null when no bin lies in 1–5 Hz.
 */
export function noiseLevel(ch: ChannelResult): { db: number; units: string } | null {
  const vals: number[] = [];
  ch.psd.freqs.forEach((f, i) => {
    if (f < 1 || f > 5) return;
    if (ch.noiseModels) {
      const v = ch.noiseModels.accelerationDb[i];
      if (v !== null && v !== undefined && Number.isFinite(v)) vals.push(v);
    } else {
      const p = ch.psd.values[i];
      if (typeof p === 'number' && p > 0) vals.push(10 * Math.log10(p));
    }
  });
  if (vals.length === 0) return null;
  vals.sort((a, b) => a - b);
  const n = vals.length;
  const med = n % 2 ? (vals[(n - 1) / 2] as number) : ((vals[n / 2 - 1] as number) + (vals[n / 2] as number)) / 2;
  return { db: med, units: ch.noiseModels ? 'dB (m/s²)²/Hz' : 'dB counts²/Hz' };
}

/** One channel of a window as it is stored (samples already encoded: the decoded ones go to the worker). */
interface StoredChannel {
  id: string;
  sampleRateHz: number;
  startTimeUs: number;
  endUs: number;
  sampleCount: number;
  samples: Buffer;
}

interface AnalysedWindow {
  station: RegisteredStation;
  streams: StoredChannel[];
  analysis: AnalysisResult;
  /** Template matching (null when it could not run). */
  matching: MatchingOutcome | null;
  bank: StationTemplate[];
  /** The queue item's score, flag and reasons: the engine's, after the resemblance rule. */
  triage: ResemblanceOutcome;
}

/** `samples` when it spans its whole buffer (so the buffer can be transferred alone), else a copy of it. */
function ownBuffer(samples: Float64Array): Float64Array {
  return samples.byteOffset === 0 && samples.byteLength === samples.buffer.byteLength ? samples : Float64Array.from(samples);
}

const endUs = (s: DecodedStream) => s.startTimeUs + Math.round((s.samples.length / s.sampleRateHz) * 1e6);

function duplicateKeyError(err: unknown): boolean {
  let e: unknown = err;
  for (let depth = 0; e && depth < 4; depth++) {
    if (typeof e === 'object' && e !== null && 'code' in e && e.code === 'ER_DUP_ENTRY') return true;
    e = typeof e === 'object' && e !== null && 'cause' in e ? e.cause : undefined;
  }
  return false;
}

/**
 * Ingests one file and returns its outcome (never throws for a problem with the file itself; an
 * unexpected failure becomes a 500 outcome that is logged). Throws when the database is down
 * (`isDatabaseDown`), so the request is answered 503 instead.
 */
export async function ingestFile(deps: IngestDeps, file: IngestFile, caller: IngestCaller, opts: IngestOptions = {}): Promise<UploadOutcome> {
  const { filename } = file;
  try {
    return await ingestOrThrow(deps, file, caller, opts);
  } catch (err) {
    if (err instanceof FileRefused) return { filename, status: 'rejected', httpStatus: err.httpStatus, code: err.code, message: err.message };
    if (duplicateKeyError(err)) {
      // The same bytes were committed by a concurrent request between our check and our insert.
      try {
        const again = await existingOutcome(deps.db, file, caller, await sha256HexOffThread(file.bytes));
        if (again) return again;
      } catch (e) {
        if (e instanceof FileRefused) return { filename, status: 'rejected', httpStatus: e.httpStatus, code: e.code, message: e.message };
        throw e;
      }
    }
    // The database is unreachable: the whole request becomes 503 + Retry-After (error handler);
    // files committed before this one are found again by sha256 when the client retries.
    if (isDatabaseDown(err)) throw err;
    deps.logger.error({ err, filename }, 'upload: ingest failed');
    return { filename, status: 'rejected', httpStatus: 500, code: 'internal_error', message: `${shownName(filename)}: the file could not be stored because of a server error; nothing was saved` };
  }
}

/**
 * The one refusal for a station the caller may not upload for, registered or not: uploaders are
 * limited to their own stations (operators) or one station (ingest tokens), so telling an
 * unregistered station from someone else's would reveal which stations exist. 403 either way.
 */
function stationRefusal(caller: IngestCaller, filename: string, streamId: string, key: string): FileRefused {
  const why = caller.kind === 'ingest' ? `station ${key} is not this ingest token's station` : `station ${key} is not registered or is not one of your stations`;
  return new FileRefused(403, 'forbidden', `${shownName(filename)}: stream ${streamId}: ${why}`);
}

async function existingOutcome(db: Database, file: IngestFile, caller: IngestCaller, sha: string): Promise<UploadOutcome | null> {
  const [existing] = await db.select({ id: uploads.id, stationId: uploads.stationId, filename: uploads.filename }).from(uploads).where(eq(uploads.sha256, sha));
  if (!existing) return null;
  const items = await itemsOfUpload(db, existing.id);
  const stationIds = new Set<number>([existing.stationId]);
  const stationRows = await db.select({ stationId: windows.stationId }).from(windows).where(eq(windows.uploadId, existing.id));
  for (const r of stationRows) stationIds.add(r.stationId);
  // Bytes already stored for a station the caller may not upload for are not theirs to hear of:
  // the file goes the ordinary way and is refused as any file for that station is (stationRefusal).
  for (const id of stationIds) if (!mayUpload(caller, id)) return null;
  return {
    filename: file.filename,
    status: 'duplicate',
    httpStatus: 200,
    message: `${shownName(file.filename)}: the same file (sha256 ${sha.slice(0, 12)}…) was already uploaded as "${shownName(existing.filename)}"; its existing item is returned`,
    uploadId: existing.id,
    itemIds: items.map((i) => i.id),
    items,
  };
}

async function ingestOrThrow(deps: IngestDeps, file: IngestFile, caller: IngestCaller, opts: IngestOptions): Promise<UploadOutcome> {
  const { filename } = file;
  const sha = await sha256HexOffThread(file.bytes);
  const dup = await existingOutcome(deps.db, file, caller, sha);
  if (dup) return dup;

  // Decoded in the pool (a 25 MB file never holds the event loop), checked against the window limits
  // there. Stored as start + index / rate per channel: a gap or a true overlap is refused (exactPlacement).
  const decodeOptions = { filename, exactPlacement: true, ...(opts.streamId ? { streamId: opts.streamId } : {}), ...(opts.startTimeUs !== undefined ? { startTimeUs: opts.startTimeUs } : {}) };
  const decoded = await deps.pool.decode(file.bytes, decodeOptions, deps.limits ?? defaultWindowLimits);
  if (!decoded.ok) throw new FileRefused(decoded.status, decoded.code, decoded.message);
  const streams = decoded.streams;

  // Group by station; each station must be registered and within the caller's scope.
  const groups = new Map<string, DecodedStream[]>();
  for (const s of streams) {
    const key = stationKey(s.network, s.station);
    const list = groups.get(key) ?? [];
    list.push(s);
    groups.set(key, list);
  }
  const registry = await stationsByKeys(deps.db, [...groups.keys()]);
  for (const [key, list] of groups) {
    const first = list[0] as DecodedStream;
    const station = registry.get(key);
    if (!station || !mayUpload(caller, station.id)) throw stationRefusal(caller, filename, first.id, key);
  }

  // Analyse each station window in the pool (before any transaction opens).
  const analysed: AnalysedWindow[] = [];
  const sim = deps.similarity ?? similaritySettings();
  for (const [key, list] of groups) {
    const station = registry.get(key) as RegisteredStation;
    const { baseline } = await stationBaseline(deps.db, station.id, station.profile.thresholds.minBaselineWindows);
    // Encode what is stored first; the decoded samples then go to the worker without a copy (their
    // buffers are transferred, and detached here).
    const stored: StoredChannel[] = list.map((s) => ({ id: s.id, sampleRateHz: s.sampleRateHz, startTimeUs: s.startTimeUs, endUs: endUs(s), sampleCount: s.samples.length, samples: encodeSamples(s.samples) }));
    const options = { ...analysisOptionsFor(station, list), baseline };
    const toWorker = list.map((s) => ({ ...s, samples: ownBuffer(s.samples), discontinuities: [...s.discontinuities] }));
    // Matching runs in the worker right after the analysis, against the station's bank (kept there
    // between windows: only templates the worker lacks are sent).
    const bank = await loadStationBank(deps.db, station.id);
    let analysis: AnalysisResult;
    let matching: MatchingOutcome | null;
    try {
      ({ analysis, matching } = await deps.pool.runMatched(toWorker, station.profile, options, { stationId: station.id, templates: bank }, { topK: sim.topK, minValue: sim.storeMin }));
    } catch (err) {
      const msg = err instanceof Error ? err.message : String(err);
      throw new FileRefused(422, 'unprocessable', `${shownName(filename)}: station ${key}: analysis refused: ${capMessage(msg)}`);
    }
    const resolved = matching ? resolveMatches(matching.matches, bank) : [];
    const triage = applyResemblance(analysis, resolved, station.code, sim);
    analysed.push({ station, streams: stored, analysis, matching, bank, triage });
  }

  const actor = actorOf(caller);
  const format = streams[0]?.format ?? 'csv';
  const primary = analysed[0] as AnalysedWindow;
  const result = await deps.db.transaction(async (tx) => {
    const now = new Date();
    const [up] = await insertBinary(tx, tx
      .insert(uploads)
      .values({
        sha256: sha,
        filename: filename.slice(0, 255),
        contentType: file.contentType ? file.contentType.slice(0, 100) : null,
        sizeBytes: file.bytes.byteLength,
        format,
        original: Buffer.from(file.bytes.buffer, file.bytes.byteOffset, file.bytes.byteLength),
        stationId: primary.station.id,
        uploadedByUserId: caller.kind === 'user' ? caller.user.id : null,
        ingestTokenId: caller.kind === 'ingest' ? caller.ingest.tokenId : null,
        createdAt: now,
      }));
    if (!up) throw new Error('upload insert returned no id');
    const created: Array<{ itemId: number; w: AnalysedWindow; windowStart: Date; windowEnd: Date; hasArrival: boolean }> = [];
    for (const w of analysed) {
      const startUs = Math.min(...w.streams.map((s) => s.startTimeUs));
      const stopUs = Math.max(...w.streams.map((s) => s.endUs));
      const windowStart = new Date(Math.floor(startUs / 1000));
      const windowEnd = new Date(Math.ceil(stopUs / 1000));
      const [win] = await insertBinary(tx, tx
        .insert(windows)
        .values({
          uploadId: up.id,
          stationId: w.station.id,
          startTime: windowStart,
          endTime: windowEnd,
          analysis: w.analysis,
          engineVersion: ENGINE_VERSION,
          createdAt: now,
        }));
      if (!win) throw new Error('window insert returned no id');
      // One multi-row insert for the window's channels; samples as int32 when they are counts.
      await insertBinary(tx, tx.insert(windowChannels).values(
        w.streams.map((s) => ({
          windowId: win.id,
          streamId: s.id,
          sampleRateHz: s.sampleRateHz,
          startTimeUs: s.startTimeUs,
          sampleCount: s.sampleCount,
          samples: s.samples,
          qc: w.analysis.channels.find((c) => c.id === s.id)?.qc ?? null,
        })),
      ));
      if (w.matching) {
        await storeTemplateAndMatches(tx, { windowId: win.id, stationId: w.station.id, windowStart, now }, w.matching.template, resolveMatches(w.matching.matches, w.bank), w.matching, sim);
      }
      const lead = w.analysis.channels.find((c) => c.id === w.analysis.leadChannel) ?? w.analysis.channels[0];
      if (!lead) throw new Error('analysis has no channel');
      const level = noiseLevel(lead);
      await tx.insert(windowFeatures).values({
        windowId: win.id,
        stationId: w.station.id,
        windowStart,
        leadChannel: lead.id,
        leadLog10Ratio: lead.log10Ratio,
        leadStaLtaPeak: lead.staLta.peak,
        noiseLevelDb: level?.db ?? null,
        noiseLevelUnits: level?.units ?? null,
        flag: w.analysis.flag,
        createdAt: now,
      });
      const [item] = await tx
        .insert(queueItems)
        .values({
          windowId: win.id,
          stationId: w.station.id,
          state: 'new',
          score: w.triage.score,
          flag: w.triage.flag,
          reasons: w.triage.reasons,
          windowStart,
          version: 1,
          createdAt: now,
          updatedAt: now,
        })
        .$returningId();
      if (!item) throw new Error('queue item insert returned no id');
      // The item's first trigger, for candidate-event grouping, from the analysis in hand (the
      // same rule `recordArrivals` applies to a stored analysis).
      const arrivalMs = firstTriggerMs(w.analysis);
      if (arrivalMs !== null) await tx.insert(itemArrivals).values({ itemId: item.id, stationId: w.station.id, arrivalAt: new Date(arrivalMs) });
      created.push({ itemId: item.id, w, windowStart, windowEnd, hasArrival: arrivalMs !== null });
    }
    await writeAudit(tx, actor, 'upload.create', { type: 'upload', id: up.id }, {
      filename,
      sha256: sha,
      format,
      sizeBytes: file.bytes.byteLength,
      streams: streams.map((s) => s.id),
      itemIds: created.map((c) => c.itemId),
    });
    // Last writes of the transaction: the change-log rows (they lock the counter until commit).
    // The summary is the full queue row (server/features/queue/presenters.ts), built from what was
    // just written (a new item has no claimer, writer, label or candidate event yet), so open
    // queues insert it in place without refetching their lists.
    for (const c of created) {
      await recordChange(tx, {
        resource: 'item',
        resourceId: c.itemId,
        kind: 'created',
        version: 1,
        summary: presentQueueRow({
          id: c.itemId,
          state: 'new',
          score: c.w.triage.score,
          flag: c.w.triage.flag,
          reasons: c.w.triage.reasons,
          network: c.w.station.network,
          stationCode: c.w.station.code,
          stationId: c.w.station.id,
          windowStart: c.windowStart,
          createdAt: now,
          updatedAt: now,
          version: 1,
          claimedById: null,
          claimedByName: null,
          claimedAt: null,
          updatedById: null,
          updatedByName: null,
          labelType: null,
          candidateEventId: null,
          candidateStationCount: null,
        }),
        audience: itemAudience(c.w.station.id),
      });
    }
    if (deps.beforeCommit) await deps.beforeCommit(tx, { filename, uploadId: up.id, itemIds: created.map((c) => c.itemId) });
    return { uploadId: up.id, created };
  });
  deps.notify();
  // Group the items with a trigger into candidate events, after the commit. A failure here is
  // logged and never undoes the upload: the arrival row is stored, and the next arrival nearby
  // regroups its whole neighbourhood, this item included.
  const withArrival = result.created.filter((c) => c.hasArrival).map((c) => c.itemId);
  const grouped =
    withArrival.length > 0
      ? await regroupArrivals({ db: deps.db, notify: deps.notify }, withArrival).catch((err: unknown) => {
          deps.logger.error({ err, filename }, 'upload: candidate-event grouping failed');
          return [];
        })
      : [];
  // A new window may be the quiet neighbour of an earlier lone trigger: re-check those it covers.
  await recheckLoneTriggers(
    { db: deps.db, notify: deps.notify },
    result.created.map((c) => ({ stationId: c.w.station.id, start: c.windowStart, end: c.windowEnd })),
  ).catch((err: unknown) => deps.logger.error({ err, filename }, 'upload: lone-trigger re-check failed'));
  // A group that formed or grew becomes (part of) an event now, not at the next catch-up round of
  // the scheduler (server/jobs/app-jobs.ts), which remains the safety net if this fails.
  if (grouped.length > 0) {
    await syncEventsFromGroups({ db: deps.db, notify: deps.notify }).catch((err: unknown) => deps.logger.error({ err, filename }, 'upload: building events from candidate groups failed'));
  }
  // Keep each station's bank under its cap (after the commit: a failure here never undoes the upload).
  for (const w of analysed) {
    if (!w.matching?.template) continue;
    await pruneStationTemplates(deps.db, w.station.id, sim.templatesPerStation).catch((err: unknown) => deps.logger.error({ err, filename }, 'upload: template pruning failed'));
  }
  return {
    filename,
    status: 'created',
    httpStatus: 201,
    uploadId: result.uploadId,
    itemIds: result.created.map((c) => c.itemId),
    items: result.created.map((c) => ({
      id: c.itemId,
      station: stationKey(c.w.station.network, c.w.station.code),
      flag: c.w.triage.flag,
      score: c.w.triage.score,
      windowStart: c.windowStart.toISOString(),
      channels: c.w.streams.map((s) => s.id),
    })),
  };
}

/** Order in which a rejected file's status represents the whole request when nothing was created. */
const STATUS_PRIORITY = [403, 413, 422, 400, 500];

/**
 * The status of a whole request from its files' outcomes: 201 when any file was created; else 200
 * when any was a duplicate (nothing new, nothing lost); else the most telling refusal, in the
 * order 403 (scope) > 413 (limit) > 422 (content) > 400 > 500 (others: the first file's).
 */
export function overallStatus(outcomes: readonly UploadOutcome[]): number {
  if (outcomes.some((o) => o.status === 'created')) return 201;
  if (outcomes.some((o) => o.status === 'duplicate')) return 200;
  for (const s of STATUS_PRIORITY) if (outcomes.some((o) => o.httpStatus === s)) return s;
  return outcomes[0]?.httpStatus ?? 400;
}

/** Ingests several files one after the other (each with its own transaction and outcome). */
export async function ingestFiles(deps: IngestDeps, files: readonly IngestFile[], caller: IngestCaller, opts: IngestOptions = {}): Promise<{ status: number; files: UploadOutcome[] }> {
  const outcomes: UploadOutcome[] = [];
  for (const f of files) outcomes.push(await ingestFile(deps, f, caller, opts));
  return { status: overallStatus(outcomes), files: outcomes };
}
