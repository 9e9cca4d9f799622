import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * GET /api/events/:id/geometry (the event screen's map and record section): the stations of the
 * event's network with their positions, which ones hold a member window, and from the event's
 * preferred origin each station's epicentral distance, azimuth and predicted first P and S
 * arrival times in the network's velocity model (the same travel times the location uses).
 * Distances km, angles degrees clockwise from north, times ISO 8601 UTC.
 */
export const eventGeometrySchema = lazySchema(() =>
  z.object({
    caution: z.string(),
    network: z.string(),
    origin: z.object({ time: z.string(), latitude: z.number(), longitude: z.number(), depthKm: z.number() }).nullable(),
    velocityModel: z.object({ name: z.string(), isDefault: z.boolean() }),
    stations: z.array(
      z.object({
        /** NET.STA */
        station: z.string(),
        stationId: z.number(),
        name: z.string(),
        latitude: z.number(),
        longitude: z.number(),
        elevationM: z.number(),
        /** Whether one of the event's (not removed) member windows is from this station. */
        member: z.boolean(),
        distanceKm: z.number().nullable(),
        azimuthDeg: z.number().nullable(),
        /** Predicted first arrivals from the preferred origin (null without an origin). */
        predicted: z.object({ P: z.string().nullable(), S: z.string().nullable() }),
      }),
    ),
  }),
);

/** What the event screen's map and record section read about the stations. */
export type EventGeometry = z.infer<typeof eventGeometrySchema>;
