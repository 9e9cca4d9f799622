import { z } from 'zod';
import { lazySchema } from './lazy-schema';
import { finiteNumberArraySchema } from './number-array';

/** `GET /api/events/:id/traces?points=`: how many points per trace (min/max buckets). */
export const eventTracesQuerySchema = lazySchema(() =>
  z.object({
    points: z.coerce.number().int().min(100, 'points: at least 100').max(20_000, 'points: at most 20 000').default(2400),
  }),
);

/**
 * GET /api/events/:id/traces (the event screen's record section, issue 18): every channel of the
 * event's (not removed) member windows in one answer, pre-processed as the engine pre-processes
 * (linear detrend, Tukey taper of the station's profile, divided by the flat sensitivity when the
 * registry has one: m/s, else counts) and min/max-decimated to about `points` points. Only the
 * pre-processed trace: the band traces, STA/LTA and spectrogram of a window are the review screen's
 * (GET /api/queue/items/:id/traces).
 */
export const eventTracesSchema = lazySchema(() =>
  z.object({
    points: z.number(),
    members: z.array(
      z.object({
        itemId: z.number(),
        channels: z.array(
          z.object({
            streamId: z.string(),
            sampleRateHz: z.number(),
            /** The channel's first sample, ISO 8601 UTC with microseconds. */
            startTime: z.string(),
            units: z.enum(['m/s', 'counts']),
            /** Samples per bucket (1: every sample). */
            bucket: z.number(),
            /** Each point's time after `startTime`, s. */
            times: finiteNumberArraySchema,
            /** Rounded for display: 4 significant digits at the trace's peak (each within 0.05 % of the peak). */
            values: finiteNumberArraySchema,
          }),
        ),
      }),
    ),
  }),
);

/** The body of GET /api/events/:id/traces. */
export type EventTraces = z.infer<typeof eventTracesSchema>;
