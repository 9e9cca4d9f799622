import { and, asc, eq, isNull } from 'drizzle-orm';
import { EVENT_CAUTION } from '@shared/schemas/events';
import type { EventGeometry } from '@shared/schemas/event-geometry';
import type { DbOrTx } from '@server/db/client';
import { eventMembers, eventOrigins, seismicEvents } from '@server/db/schema/events';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { formatIsoTimeUs } from '@server/formats/iso-time';
import { azimuthDeg, greatCircleDistanceKm } from '@server/seismo/geodesy';
import { firstArrivalTimeS, prepareVelocityModel } from '@server/seismo/travel-time';
import { networkSettings } from './event-settings';

/**
 * The stations of an event's network, its members, and the predicted first P and S arrivals from the
 * preferred origin (added for the event screen, issue 18). Predictions use the very functions the
 * location uses (great-circle distance, `firstArrivalTimeS` in the network's model, station
 * elevation ignored as there), so a residual read off the screen is the one the location reports.
 * Null when the event is missing or none of its member stations is in `scope`.
 */
export async function eventGeometry(db: DbOrTx, eventId: number, scope: 'all' | readonly number[]): Promise<EventGeometry | null> {
  const [row] = await db.select({ e: seismicEvents, o: eventOrigins }).from(seismicEvents).leftJoin(eventOrigins, eq(eventOrigins.id, seismicEvents.preferredOriginId)).where(eq(seismicEvents.id, eventId));
  if (!row) return null;
  const { e, o } = row;
  const memberRows = await db
    .select({ stationId: queueItems.stationId })
    .from(eventMembers)
    .innerJoin(queueItems, eq(queueItems.id, eventMembers.itemId))
    .where(and(eq(eventMembers.eventId, eventId), isNull(eventMembers.removedAt)));
  const memberIds = new Set(memberRows.map((m) => m.stationId));
  if (scope !== 'all' && ![...memberIds].some((s) => scope.includes(s))) return null;
  const settings = await networkSettings(db, e.network);
  const model = prepareVelocityModel(settings.model);
  const rows = await db.select().from(stations).where(eq(stations.network, e.network)).orderBy(asc(stations.code));
  const visible = rows.filter((s) => scope === 'all' || scope.includes(s.id) || memberIds.has(s.id));
  const epicentre = o ? { latitudeDeg: o.latitude, longitudeDeg: o.longitude } : null;
  return {
    caution: EVENT_CAUTION,
    network: e.network,
    origin: o ? { time: formatIsoTimeUs(o.timeUs), latitude: o.latitude, longitude: o.longitude, depthKm: o.depthKm } : null,
    velocityModel: { name: settings.model.name, isDefault: settings.model.isDefault === true },
    stations: visible.map((s) => {
      const here = { latitudeDeg: s.latitude, longitudeDeg: s.longitude };
      const distanceKm = epicentre ? greatCircleDistanceKm(epicentre, here) : null;
      const predict = (wave: 'P' | 'S'): string | null => (o && distanceKm !== null ? formatIsoTimeUs(Math.round(o.timeUs + firstArrivalTimeS(model, wave, distanceKm, o.depthKm) * 1e6)) : null);
      return {
        station: `${s.network}.${s.code}`,
        stationId: s.id,
        name: s.name,
        latitude: s.latitude,
        longitude: s.longitude,
        elevationM: s.elevationM,
        member: memberIds.has(s.id),
        distanceKm,
        azimuthDeg: epicentre ? azimuthDeg(epicentre, here) : null,
        predicted: { P: predict('P'), S: predict('S') },
      };
    }),
  };
}
