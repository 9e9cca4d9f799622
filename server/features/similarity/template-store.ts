import { and, asc, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import type { Database, DbOrTx } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { waveformTemplates, windowMatches } from '@server/db/schema/templates';
import type { BankMatch, BankTemplate } from '@server/dsp/template-bank';
import type { ResolvedMatch } from './resemblance';

/**
 * Templates in MariaDB: the compact samples blob, a station's bank for matching (with a bounded
 * cache of decoded samples: a template's samples never change), the rows written at ingest and the
 * per-station cap.
 */

/** Float32 little-endian, component after component (4 bytes a sample: half the float64 layout). */
export function encodeTemplateSamples(samples: readonly ArrayLike<number>[]): Buffer {
  const m = samples[0]?.length ?? 0;
  const buf = Buffer.allocUnsafe(samples.length * m * 4);
  samples.forEach((s, c) => {
    for (let i = 0; i < m; i++) buf.writeFloatLE(s[i] as number, (c * m + i) * 4);
  });
  return buf;
}

/** The blob back to one Float32Array per component. @throws RangeError when the size does not fit. */
export function decodeTemplateSamples(blob: Uint8Array, components: number, sampleCount: number): Float32Array[] {
  if (blob.byteLength !== components * sampleCount * 4) throw new RangeError(`template blob of ${blob.byteLength} bytes for ${components} × ${sampleCount} float32 samples`);
  const view = new DataView(blob.buffer, blob.byteOffset, blob.byteLength);
  return Array.from({ length: components }, (_, c) => {
    const out = new Float32Array(sampleCount);
    for (let i = 0; i < sampleCount; i++) out[i] = view.getFloat32((c * sampleCount + i) * 4, true);
    return out;
  });
}

/** A template of the bank with what the flag rule and the screens need. */
export interface StationTemplate extends BankTemplate {
  windowId: number;
  windowStart: Date;
  labelType: string | null;
}

/** Decoded samples by template id, bounded (oldest dropped first). */
const sampleCache = new Map<number, Float32Array[]>();
let cachedBytes = 0;
const CACHE_BYTES = 128 * 1024 * 1024;

function remember(id: number, samples: Float32Array[]): void {
  sampleCache.set(id, samples);
  cachedBytes += samples.reduce((s, c) => s + c.byteLength, 0);
  for (const [k, v] of sampleCache) {
    if (cachedBytes <= CACHE_BYTES) break;
    sampleCache.delete(k);
    cachedBytes -= v.reduce((s, c) => s + c.byteLength, 0);
  }
}

function forget(id: number): void {
  const v = sampleCache.get(id);
  if (!v) return;
  sampleCache.delete(id);
  cachedBytes -= v.reduce((s, c) => s + c.byteLength, 0);
}

/**
 * The station's templates, newest first, with their items' labels. Samples are read only for
 * templates not already decoded in this process.
 */
export async function loadStationBank(db: Database, stationId: number): Promise<StationTemplate[]> {
  const rows = await db
    .select({
      id: waveformTemplates.id,
      windowId: waveformTemplates.windowId,
      windowStart: waveformTemplates.windowStart,
      sampleRateHz: waveformTemplates.sampleRateHz,
      channels: waveformTemplates.channels,
      sampleCount: waveformTemplates.sampleCount,
      labelType: queueItems.labelType,
    })
    .from(waveformTemplates)
    .leftJoin(queueItems, eq(queueItems.windowId, waveformTemplates.windowId))
    .where(eq(waveformTemplates.stationId, stationId))
    .orderBy(desc(waveformTemplates.windowStart));
  const missing = rows.filter((r) => !sampleCache.has(r.id)).map((r) => r.id);
  for (let i = 0; i < missing.length; i += 200) {
    const part = missing.slice(i, i + 200);
    const blobs = await db.select({ id: waveformTemplates.id, samples: waveformTemplates.samples }).from(waveformTemplates).where(inArray(waveformTemplates.id, part));
    for (const b of blobs) {
      const r = rows.find((x) => x.id === b.id);
      if (r) remember(b.id, decodeTemplateSamples(b.samples, r.channels.length, r.sampleCount));
    }
  }
  const out: StationTemplate[] = [];
  for (const r of rows) {
    const samples = sampleCache.get(r.id);
    if (!samples) continue;
    out.push({ id: r.id, sampleRateHz: r.sampleRateHz, ids: r.channels, samples, windowId: r.windowId, windowStart: r.windowStart, labelType: r.labelType });
  }
  return out;
}

/** A template cut at ingest, as the worker returns it. */
export interface NewTemplate {
  ids: string[];
  sampleRateHz: number;
  startTimeUs: number;
  onsetUs: number;
  samples: Float32Array[];
  band: { fmin: number; fmax: number };
}

/** The bank's matches resolved to the templates' windows and labels (unknown template ids dropped). */
export function resolveMatches(matches: readonly BankMatch[], bank: readonly StationTemplate[]): Array<BankMatch & ResolvedMatch & { windowId: number }> {
  const byId = new Map(bank.map((t) => [t.id, t]));
  return matches.flatMap((m) => {
    const t = byId.get(m.templateId);
    return t ? [{ ...m, labelType: t.labelType, windowStart: t.windowStart, windowId: t.windowId }] : [];
  });
}

/**
 * Writes, in the ingest transaction, the window's template (when one was cut) and its best `storedK`
 * matches (C ≥ `storeMin`). `matchStartUs` of a match = the matching traces' start + lag / fs.
 */
export async function storeTemplateAndMatches(
  tx: DbOrTx,
  w: { windowId: number; stationId: number; windowStart: Date; now: Date },
  template: NewTemplate | null,
  matches: ReadonlyArray<BankMatch & { windowId: number }>,
  matching: { startTimeUs: number; sampleRateHz: number; band: { fmin: number; fmax: number } },
  keep: { storedK: number; storeMin: number },
): Promise<void> {
  if (template) {
    await tx.insert(waveformTemplates).values({
      stationId: w.stationId,
      windowId: w.windowId,
      windowStart: w.windowStart,
      sampleRateHz: template.sampleRateHz,
      channels: template.ids,
      sampleCount: template.samples[0]?.length ?? 0,
      startTimeUs: template.startTimeUs,
      onsetUs: template.onsetUs,
      bandFminHz: template.band.fmin,
      bandFmaxHz: template.band.fmax,
      samples: encodeTemplateSamples(template.samples),
      createdAt: w.now,
    });
  }
  const kept = matches.filter((m) => m.value >= keep.storeMin && m.windowId !== w.windowId).slice(0, keep.storedK);
  if (kept.length === 0) return;
  await tx.insert(windowMatches).values(
    kept.map((m, i) => ({
      windowId: w.windowId,
      matchedWindowId: m.windowId,
      templateId: m.templateId,
      stationId: w.stationId,
      rank: i + 1,
      value: m.value,
      matchStartUs: matching.startTimeUs + Math.round((m.lag / matching.sampleRateHz) * 1e6),
      perChannel: m.perChannel,
      windowStart: w.windowStart,
      band: `${matching.band.fmin}–${matching.band.fmax} Hz`,
    })),
  );
}

/**
 * Keeps at most `cap` templates at the station: over it, deletes the oldest templates whose item is
 * not labelled or dismissed, then (if still over) the oldest labelled ones. Returns how many went.
 * Their windows' matches keep pointing at the windows (template_id becomes null).
 */
export async function pruneStationTemplates(db: Database, stationId: number, cap: number): Promise<number> {
  const [count] = await db.select({ n: sql<number>`count(*)` }).from(waveformTemplates).where(eq(waveformTemplates.stationId, stationId));
  const excess = Number(count?.n ?? 0) - cap;
  if (excess <= 0) return 0;
  const unlabelled = await db
    .select({ id: waveformTemplates.id })
    .from(waveformTemplates)
    .leftJoin(queueItems, eq(queueItems.windowId, waveformTemplates.windowId))
    .where(and(eq(waveformTemplates.stationId, stationId), isNull(queueItems.labelType)))
    .orderBy(asc(waveformTemplates.windowStart), asc(waveformTemplates.id))
    .limit(excess);
  let ids = unlabelled.map((r) => r.id);
  if (ids.length < excess) {
    const labelled = await db
      .select({ id: waveformTemplates.id })
      .from(waveformTemplates)
      .where(eq(waveformTemplates.stationId, stationId))
      .orderBy(asc(waveformTemplates.windowStart), asc(waveformTemplates.id))
      .limit(excess + ids.length);
    const chosen = new Set(ids);
    for (const r of labelled) {
      if (ids.length >= excess) break;
      if (!chosen.has(r.id)) ids = [...ids, r.id];
    }
  }
  if (ids.length === 0) return 0;
  await db.delete(waveformTemplates).where(inArray(waveformTemplates.id, ids));
  for (const id of ids) forget(id);
  return ids.length;
}
