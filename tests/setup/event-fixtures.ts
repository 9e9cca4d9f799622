import { createHash } from 'node:crypto';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { channels, stations } from '@server/db/schema/stations';
import { uploads, windowChannels, windows } from '@server/db/schema/uploads';
import { analyzeWindow } from '@server/dsp/pipeline';
import { onItemsCreated } from '@server/features/events/candidate-events';
import { syncEventsFromGroups } from '@server/features/events/event-service';
import { saveVelocityModel } from '@server/features/events/event-settings';
import { decodeWaveform } from '@server/formats/decode';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { ringStations, type TrueHypocentre } from '@tests/server/seismo/synthetic';
import { SYNTH_SENSITIVITY, stationMiniSeed, syntheticEvent, type SyntheticStation } from '@tests/server/seismo/synthetic-waveforms';

/** A test half-space model (Vp 6.0, Vs 3.46 km/s; Vp/Vs √3, common practice for a Poisson solid). */
export const fixtureModel = { name: 'Kestrel test half-space', layers: [{ topKm: 0, vpKmS: 6.0, vsKmS: 3.46 }] };

/** What `seedSyntheticWindows` stored. */
export type SeededWindows = { itemIds: number[]; stationIds: number[]; synth: SyntheticStation[] };
/** What `seedSyntheticEvent` made. */
export type SeededEvent = SeededWindows & { eventId: number; truth: TrueHypocentre };

type RingOptions = {
  codes: readonly string[];
  placements: ReadonlyArray<readonly [number, number]>;
  truth: TrueHypocentre;
  network?: string;
  stationName?: string;
  centre?: { latitudeDeg: number; longitudeDeg: number };
  /** Window length, s (default 60). */
  durationS?: number;
};

/**
 * Stations on a ring (around `centre`, by default the epicentre of a known hypocentre) with a
 * broadband response in the registry, and each station's three-component synthetic record of the
 * hypocentre (tests/server/seismo/synthetic-waveforms.ts: travel times from the engine, seeded noise;
 * `stationMiniSeed` encodes one). Synthetic windows are test input, not check values.
 */
export async function seedSyntheticStations(db: Database, opts: RingOptions): Promise<{ stationIds: number[]; synth: SyntheticStation[] }> {
  const network = opts.network ?? 'XX';
  const centre = opts.centre ?? { latitudeDeg: opts.truth.latitudeDeg, longitudeDeg: opts.truth.longitudeDeg };
  const ring = ringStations(centre, opts.placements).map((s, i) => ({ ...s, code: opts.codes[i] as string }));
  const synth = syntheticEvent(ring, opts.truth, fixtureModel, 21, opts.durationS ?? 60);
  const now = new Date();
  const w = 2 * Math.PI;
  const p = 0.0444;
  const a0 = (Math.hypot(p, w - p) * Math.hypot(p, w + p)) / (w * w);
  const stationIds: number[] = [];
  for (const s of ring) {
    const [st] = await db.insert(stations).values({ network, code: s.code, name: `${opts.stationName ?? 'Kestrel Valley test site'} ${s.code}`, latitude: s.latitudeDeg, longitude: s.longitudeDeg, elevationM: 500, profile: defaultProcessingProfile, createdAt: now, updatedAt: now });
    stationIds.push(st.insertId);
    for (const code of ['HHZ', 'HHN', 'HHE']) {
      await db.insert(channels).values({
        stationId: st.insertId,
        location: '00',
        code,
        sampleRateHz: 100,
        sensitivity: SYNTH_SENSITIVITY,
        sensitivityFrequencyHz: 1,
        sensitivityInputUnits: 'm/s',
        response: { zeros: [{ re: 0, im: 0 }, { re: 0, im: 0 }], poles: [{ re: -p, im: p }, { re: -p, im: -p }], normalizationFactor: a0, sensitivity: SYNTH_SENSITIVITY, sensitivityFrequencyHz: 1 },
        createdAt: now,
        updatedAt: now,
      });
    }
  }
  return { stationIds, synth };
}

/**
 * `seedSyntheticStations`, then one window per station stored as ingest stores it, without arrival
 * rows, candidate groups or events (`seedSyntheticEvent` makes those).
 */
export async function seedSyntheticWindows(db: Database, opts: RingOptions): Promise<SeededWindows> {
  const { stationIds, synth } = await seedSyntheticStations(db, opts);
  const now = new Date();
  const itemIds: number[] = [];
  for (const [k, s] of synth.entries()) {
    const bytes = stationMiniSeed(s);
    const streams = decodeWaveform(bytes);
    const analysis = analyzeWindow(streams, defaultProcessingProfile);
    const stationId = stationIds[k] as number;
    const start = new Date((streams[0]?.startTimeUs ?? 0) / 1000);
    const id = await db.transaction(async (tx) => {
      const [up] = await tx.insert(uploads).values({ sha256: createHash('sha256').update(bytes).digest('hex'), filename: `${s.code}.mseed`, sizeBytes: bytes.length, format: 'mseed2', original: Buffer.from(bytes), stationId, createdAt: now });
      const [win] = await tx.insert(windows).values({ uploadId: up.insertId, stationId, startTime: start, endTime: new Date(start.getTime() + (opts.durationS ?? 60) * 1000), analysis, engineVersion: 'test', createdAt: now });
      for (const c of streams) {
        const buf = Buffer.alloc(c.samples.length * 8);
        c.samples.forEach((v, i) => buf.writeDoubleLE(v, i * 8));
        await tx.insert(windowChannels).values({ windowId: win.insertId, streamId: c.id, sampleRateHz: c.sampleRateHz, startTimeUs: c.startTimeUs, sampleCount: c.samples.length, samples: buf, qc: [] });
      }
      const [item] = await tx.insert(queueItems).values({ windowId: win.insertId, stationId, state: 'new', score: analysis.score, flag: analysis.flag, reasons: analysis.reasons, windowStart: start, version: 1, createdAt: now, updatedAt: now });
      return item.insertId;
    });
    itemIds.push(id);
  }
  return { itemIds, stationIds, synth };
}

/**
 * `seedSyntheticWindows`, then the network's velocity model (`fixtureModel`), the windows grouped
 * into a candidate event and built into an event with its automatic picks, location and ML, as the
 * scheduler's catch-up job builds it (server/jobs/app-jobs.ts).
 */
export async function seedSyntheticEvent(
  db: Database,
  opts: RingOptions & {
    supervisor: { id: string; email: string };
    /** Store the test half-space as the network's velocity model (default true; false keeps the network's own). */
    saveModel?: boolean;
  },
): Promise<SeededEvent> {
  const network = opts.network ?? 'XX';
  const seeded = await seedSyntheticWindows(db, opts);
  if (opts.saveModel !== false) await db.transaction((tx) => saveVelocityModel(tx, opts.supervisor, network, { name: fixtureModel.name, layers: fixtureModel.layers, stationCorrections: {} }, null));
  await onItemsCreated({ db }, seeded.itemIds);
  const [eventId] = await syncEventsFromGroups({ db });
  if (eventId === undefined) throw new Error('the synthetic windows did not form an event');
  return { ...seeded, eventId, truth: opts.truth };
}
