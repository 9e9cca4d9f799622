import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { and, eq, inArray } from 'drizzle-orm';
import { z } from 'zod';
import type { Database } from '@server/db/client';
import { networkEventSettings } from '@server/db/schema/events';
import { queueItems } from '@server/db/schema/queue-items';
import { channels, stations } from '@server/db/schema/stations';
import { uploads, windows } from '@server/db/schema/uploads';
import { createEventFromItems, eventMembershipOf, syncEventsFromGroups } from '@server/features/events/event-service';
import { responseFromStationXml } from '@server/features/stations/stationxml-import';
import { parseStationXml } from '@server/formats/stationxml';
import { DEMO_WAVEFORMS_DIR } from './generate-waveforms';
import { DEMO_NETWORK, VP_KM_S, VS_KM_S } from './scenario';

/** Name of the demo network's velocity model: the scenario's own crust (invented). */
export const DEMO_MODEL_NAME = 'Kestrel Valley demo crust (invented: one layer, as the demo waveforms were made)';

const manifestEventsSchema = z.object({ events: z.array(z.object({ id: z.string(), recordedBy: z.array(z.object({ file: z.string() })) })) });

/** What `prepareDemoEvents` did. */
export interface DemoEventsReport {
  /** Channels whose poles and zeros came from the demo StationXML. */
  responses: number;
  /** Whether the demo network's velocity model was set (false when a supervisor's model is there). */
  modelSet: boolean;
  /** Events built or updated from the candidate groups. */
  events: number;
}

/**
 * Makes sure the demo day's events stand (the npm start demo step after the windows are ingested):
 * the demo network is set up (`prepareDemoNetwork`, a no-op when ingestDemo did it), every candidate
 * group the ingest has not yet turned into an event becomes one (automatic picks, location,
 * Wood-Anderson amplitudes, ML), and the demo analyst assembles each scenario source that no group
 * joined from the windows that recorded it. Invented data, for the demo only. Safe to run again.
 */
export async function prepareDemoEvents(db: Database, notify: () => void, dir: string = DEMO_WAVEFORMS_DIR): Promise<DemoEventsReport> {
  const { responses, modelSet } = await prepareDemoNetwork(db, dir);
  let events = 0;
  for (let round = 0; round < 50; round++) {
    const touched = await syncEventsFromGroups({ db, notify });
    events += touched.length;
    if (touched.length === 0) break;
  }
  // Sources whose windows no candidate group joined (a traffic or wind trigger ahead of the P keeps a
  // station out of the grouping): the demo analyst assembles them from the windows that recorded them,
  // as an analyst would from the queue.
  const manifest = manifestEventsSchema.parse(JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8')));
  for (const src of manifest.events) {
    const names = src.recordedBy.map((r) => r.file.slice(r.file.lastIndexOf('/') + 1));
    const items = await db
      .select({ id: queueItems.id })
      .from(uploads)
      .innerJoin(windows, eq(windows.uploadId, uploads.id))
      .innerJoin(queueItems, eq(queueItems.windowId, windows.id))
      .where(inArray(uploads.filename, names));
    if (items.length < 3) continue;
    const held = await eventMembershipOf(db, items.map((i) => i.id));
    if (held.size > 0) continue;
    await createEventFromItems({ db, notify }, null, items.map((i) => i.id));
    events += 1;
  }
  return { responses, modelSet, events };
}

/**
 * The demo network as its operators would have it before any data comes in: the demo channels get
 * the poles and zeros of the demo StationXML (demo-waveforms/stationxml, the sensor the demo
 * waveforms were made with), and the network gets the scenario's crust as its velocity model unless
 * a supervisor set one. Ingest builds events as soon as a candidate group forms, so this runs before
 * the demo windows are ingested (`ingestDemo`), and again, harmlessly, in `prepareDemoEvents`.
 * Invented data, for the demo only.
 * @returns the channels whose response the StationXML gave, and whether the model was set now
 */
export async function prepareDemoNetwork(db: Database, dir: string = DEMO_WAVEFORMS_DIR): Promise<{ responses: number; modelSet: boolean }> {
  const doc = parseStationXml(readFileSync(join(dir, 'stationxml', `${DEMO_NETWORK}.xml`), 'utf8'));
  let responses = 0;
  for (const net of doc.networks) {
    for (const st of net.stations) {
      const [row] = await db.select({ id: stations.id }).from(stations).where(and(eq(stations.network, net.code), eq(stations.code, st.code)));
      if (!row) continue;
      for (const ch of st.channels) {
        const response = responseFromStationXml(ch.paz, ch.sensitivity);
        if (!response) continue;
        const [r] = await db
          .update(channels)
          .set({ response, sensitivityInputUnits: ch.sensitivity?.inputUnits ?? 'm/s', updatedAt: new Date() })
          .where(and(eq(channels.stationId, row.id), eq(channels.location, ch.locationCode), eq(channels.code, ch.code)));
        responses += r.affectedRows;
      }
    }
  }
  const [model] = await db.select({ network: networkEventSettings.network }).from(networkEventSettings).where(eq(networkEventSettings.network, DEMO_NETWORK));
  if (!model) {
    await db.insert(networkEventSettings).values({ network: DEMO_NETWORK, modelName: DEMO_MODEL_NAME, layers: [{ topKm: 0, vpKmS: VP_KM_S, vsKmS: VS_KM_S }], stationCorrections: {}, version: 1, updatedAt: new Date() });
  }
  return { responses, modelSet: !model };
}
