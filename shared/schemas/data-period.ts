import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * GET /api/supervisor/latest-windows: where the data is in time, so the supervisor screens can
 * default their period to the data rather than to "the last 7 days" of the wall clock (a demo or
 * a network that stopped sending would otherwise open on empty screens).
 */

/** Query: optionally one station (its id). */
export const latestWindowsQuerySchema = lazySchema(() =>
  z.object({
    stationId: z
      .string()
      .regex(/^\d{1,15}$/, 'must be a station id (a whole number)')
      .transform(Number)
      .optional(),
  }),
);

/** Answer: window start times (ISO 8601 UTC) of the latest item and of the latest labelled event, or null when there is none. */
export const latestWindowsSchema = lazySchema(() =>
  z.object({
    latestWindowStart: z.string().nullable(),
    latestLabelledWindowStart: z.string().nullable(),
  }),
);

/** The answer's type. */
export type LatestWindows = z.infer<typeof latestWindowsSchema>;
