import { inArray } from 'drizzle-orm';
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

/** Bytes of decoded samples kept at most (about twenty 10-station events of 3 × 120 s at 100 sps). */
const MAX_BYTES = 64 * 1024 * 1024;
const windows = new Map<number, DecodedChannel[]>();
let heldBytes = 0;
const sizeOf = (chans: readonly DecodedChannel[]): number => chans.reduce((n, c) => n + c.samples.byteLength, 0);

/**
 * The decoded channels of the windows `windowIds` (any order), from memory when kept, else read
 * and decoded once (least recently used windows leave first).
 */
export async function decodedWindows(db: DbOrTx, windowIds: readonly number[]): Promise<DecodedChannel[]> {
  const missing = [...new Set(windowIds)].filter((id) => !windows.has(id));
  if (missing.length > 0) {
    const rows = await db.select().from(windowChannels).where(inArray(windowChannels.windowId, missing));
    const byWindow = new Map<number, DecodedChannel[]>(missing.map((id) => [id, []]));
    for (const r of rows) byWindow.get(r.windowId)?.push({ windowId: r.windowId, streamId: r.streamId, sampleRateHz: r.sampleRateHz, startTimeUs: r.startTimeUs, samples: decodeStoredSamples(r.samples, r.sampleCount) });
    for (const [id, chans] of byWindow) {
      windows.set(id, chans);
      heldBytes += sizeOf(chans);
    }
  }
  const out: DecodedChannel[] = [];
  for (const id of new Set(windowIds)) {
    const chans = windows.get(id) ?? [];
    // Most recently used: to the end of the map's order.
    windows.delete(id);
    windows.set(id, chans);
    out.push(...chans);
  }
  const wanted = new Set(windowIds);
  for (const [id, chans] of windows) {
    if (heldBytes <= MAX_BYTES) break;
    if (wanted.has(id)) continue;
    windows.delete(id);
    heldBytes -= sizeOf(chans);
  }
  return out;
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
