import { and, eq, inArray, isNull } from 'drizzle-orm';
import type { EventTraces } from '@shared/schemas/event-traces';
import type { DbOrTx } from '@server/db/client';
import { eventMembers, seismicEvents } from '@server/db/schema/events';
import { queueItems } from '@server/db/schema/queue-items';
import { channels, stations } from '@server/db/schema/stations';
import { preprocessTrace } from '@server/dsp/preprocess';
import { bucketFor, minMaxDecimate, stationProfile } from '@server/features/queue/queue-traces';
import { channelSensitivity } from '@server/features/stations/station-registry';
import { formatIsoTimeUs } from '@server/formats/iso-time';
import { roundForDisplay } from '@server/dsp/display-precision';
import { decodedWindows } from './window-cache';

/** Lets the event loop run between channels: a long member window never holds it for long. */
const yieldToLoop = (): Promise<void> => new Promise((resolve) => setImmediate(resolve));

/**
 * The record section's traces of an event: every channel of its active member windows,
 * pre-processed exactly as the engine's chain makes its `pre` trace (server/dsp/channel-chain.ts:
 * linear detrend, Tukey taper with the station's α, then ÷ the flat sensitivity the ingest uses,
 * m/s; counts when the registry has none) and min/max-decimated to about `points` points
 * (`minMaxDecimate`, common practice for drawing long waveforms), the values rounded for display
 * (`roundForDisplay`: within 0.05 % of each trace's peak, 4 significant digits). Only that trace: no band-passes,
 * STA/LTA or spectrogram, so ten stations cost a few milliseconds here instead of ten full
 * window computations in the analysis pool.
 * Null when the event is missing or none of its member stations is in `scope`.
 */
export async function eventTraces(db: DbOrTx, eventId: number, points: number, scope: 'all' | readonly number[]): Promise<EventTraces | null> {
  const plan = await planEventTraces(db, eventId, points, scope);
  return plan ? plan.compute() : null;
}

/**
 * What the record section's traces of an event depend on, read without the samples: `key` names
 * them all (the members and their windows, the stations' profiles, the registered sensitivities,
 * `points`), so an answer kept under it is never stale; `compute` then takes the decoded windows
 * (window-cache.ts, shared with the relocations) and builds the traces (`eventTraces`).
 * Null when the event is missing or none of its member stations is in `scope`.
 */
export async function planEventTraces(db: DbOrTx, eventId: number, points: number, scope: 'all' | readonly number[]): Promise<{ key: string; compute: () => Promise<EventTraces> } | null> {
  const [ev] = await db.select({ id: seismicEvents.id }).from(seismicEvents).where(eq(seismicEvents.id, eventId));
  if (!ev) return null;
  const members = await db
    .select({ itemId: eventMembers.itemId, windowId: queueItems.windowId, stationId: queueItems.stationId, profile: stations.profile })
    .from(eventMembers)
    .innerJoin(queueItems, eq(queueItems.id, eventMembers.itemId))
    .innerJoin(stations, eq(stations.id, queueItems.stationId))
    .where(and(eq(eventMembers.eventId, eventId), isNull(eventMembers.removedAt)));
  if (scope !== 'all' && !members.some((m) => scope.includes(m.stationId))) return null;
  if (members.length === 0) return { key: JSON.stringify([eventId, points, []]), compute: async () => ({ points, members: [] }) };
  const registered = await db
    .select({ stationId: channels.stationId, location: channels.location, code: channels.code, sensitivity: channels.sensitivity, sensitivityInputUnits: channels.sensitivityInputUnits, response: channels.response })
    .from(channels)
    .where(inArray(channels.stationId, [...new Set(members.map((m) => m.stationId))]));
  const key = JSON.stringify([eventId, points, members, registered]);
  const compute = async (): Promise<EventTraces> => {
    const rows = await decodedWindows(db, members.map((m) => m.windowId));
    const out: EventTraces['members'] = [];
    for (const m of members) {
      const profile = stationProfile(m.profile);
      const own = rows.filter((r) => r.windowId === m.windowId).sort((a, b) => a.streamId.localeCompare(b.streamId));
      const chans: EventTraces['members'][number]['channels'] = [];
      for (const r of own) {
        if (r.samples.length === 0) continue;
        const [, , loc = '', cha = ''] = r.streamId.split('.');
        const reg = registered.find((c) => c.stationId === m.stationId && c.location === loc && c.code === cha);
        const s = reg ? channelSensitivity(reg) : null;
        const flat = s === null ? null : typeof s === 'number' ? s : s.sensitivity;
        const pre = preprocessTrace(r.samples, profile.preprocess.taperAlpha);
        if (flat !== null) for (let i = 0; i < pre.length; i++) pre[i] = (pre[i] as number) / flat;
        const bucket = bucketFor(pre.length, points);
        const d = minMaxDecimate(pre, 0, pre.length, bucket);
        chans.push({
          streamId: r.streamId,
          sampleRateHz: r.sampleRateHz,
          startTime: formatIsoTimeUs(r.startTimeUs),
          units: flat === null ? 'counts' : 'm/s',
          bucket,
          times: d.index.map((i) => i / r.sampleRateHz),
          values: roundForDisplay(d.values),
        });
        await yieldToLoop();
      }
      out.push({ itemId: m.itemId, channels: chans });
    }
    return { points, members: out };
  };
  return { key, compute };
}
