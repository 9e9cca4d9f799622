import { inArray } from 'drizzle-orm';
import { LRUCache } from 'lru-cache';
import type { DbOrTx } from '@server/db/client';
import { decodeStoredSamples } from '@server/db/samples-codec';
import { windowChannels } from '@server/db/schema/uploads';
import { woodAndersonFromCounts, type InstrumentResponse } from '@server/seismo/instrument-response';

/**
 * Decoded member windows and their Wood-Anderson traces, kept in memory between relocations: every
 * pick on the event screen locates the event again (event-service.ts), and without these each one
 * read every member window's samples from the database, decoded them and simulated Wood-Anderson on
 * every horizontal channel again. A stored window's samples never change after ingest (windows are
 * written once, window ids are never reused), so a window is cached by its id alone; the
 * Wood-Anderson trace by the decoded samples array and the response it was simulated with.
 */

/** One decoded channel of a stored window. */
export interface DecodedChannel {
  windowId: number;
  streamId: string;
  sampleRateHz: number;
  startTimeUs: number;
  /** Decoded samples, counts. Shared between callers: never modified. */
  samples: Float64Array;
}

/** Decoded windows by id, at most 64 MB of samples (about twenty 10-station events of 3 × 120 s at 100 sps), least recently used out. */
const windows = new LRUCache<number, DecodedChannel[]>({
  maxSize: 64 * 1024 * 1024,
  sizeCalculation: (chans) => Math.max(1, chans.reduce((n, c) => n + c.samples.byteLength, 0)),
});

/**
 * The decoded channels of the windows `windowIds` (any order), from memory when kept, else read
 * and decoded once (least recently used windows leave first).
 */
export async function decodedWindows(db: DbOrTx, windowIds: readonly number[]): Promise<DecodedChannel[]> {
  const ids = [...new Set(windowIds)];
  const found = new Map<number, DecodedChannel[]>();
  for (const id of ids) {
    const chans = windows.get(id);
    if (chans) found.set(id, chans);
  }
  const missing = ids.filter((id) => !found.has(id));
  if (missing.length > 0) {
    for (const id of missing) found.set(id, []);
    const rows = await db.select().from(windowChannels).where(inArray(windowChannels.windowId, missing));
    for (const r of rows) found.get(r.windowId)?.push({ windowId: r.windowId, streamId: r.streamId, sampleRateHz: r.sampleRateHz, startTimeUs: r.startTimeUs, samples: decodeStoredSamples(r.samples, r.sampleCount) });
    for (const id of missing) windows.set(id, found.get(id) ?? []);
  }
  return ids.flatMap((id) => found.get(id) ?? []);
}

const woodAnderson = new WeakMap<Float64Array, Map<string, Float64Array>>();

/**
 * `woodAndersonFromCounts(samples, fs, response)`, remembered per samples array (as long as that
 * array lives, e.g. in the window cache above) and per response and rate.
 */
export function memoWoodAnderson(stream: { samples: Float64Array; sampleRateHz: number }, response: InstrumentResponse): Float64Array {
  const key = `${stream.sampleRateHz}|${JSON.stringify(response)}`;
  let byResponse = woodAnderson.get(stream.samples);
  if (!byResponse) woodAnderson.set(stream.samples, (byResponse = new Map<string, Float64Array>()));
  let wa = byResponse.get(key);
  if (!wa) byResponse.set(key, (wa = woodAndersonFromCounts(stream.samples, stream.sampleRateHz, response)));
  return wa;
}
