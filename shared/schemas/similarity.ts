import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * The "seen before" contract (issue 19): a queue item's best matches against its station's
 * templates, and the families of windows that match each other.
 */

/** The label the best labelled match suggests (the analyst still confirms it). */
export const matchSuggestionSchema = lazySchema(() =>
  z.discriminatedUnion('kind', [
    z.object({ kind: z.literal('event'), eventType: z.string(), fromItemId: z.number().int(), value: z.number() }),
    z.object({ kind: z.literal('noise'), noiseReason: z.string(), fromItemId: z.number().int(), value: z.number() }),
  ]),
);

/** One match of an item's window. */
export const itemMatchSchema = lazySchema(() =>
  z.object({
    rank: z.number().int(),
    /** Normalised multichannel cross-correlation, −1 … 1. */
    value: z.number(),
    /** Each component's own C at the lag, in `channels` order (null: component absent). */
    perChannel: z.array(z.number().nullable()),
    channels: z.array(z.string()),
    /** The matched window's item (null when it is gone) and its window start, ISO 8601. */
    matchedItemId: z.number().int().nullable(),
    matchedWindowStart: z.string(),
    /** The matched item's label type (a QuakeML event type, `noise`, or null when not labelled yet). */
    labelType: z.string().nullable(),
    /** Where the matched template begins in this item's window, s from the window's first sample. */
    offsetS: z.number(),
    /** The band both were filtered to, words (e.g. `2–10 Hz`). */
    band: z.string(),
    /**
     * The overlay: this window's band-passed lead component over the matched span and the template's
     * same component, each scaled to a peak of 1, on one time axis (s from `offsetS`). Null when the
     * template has been pruned.
     */
    overlay: z
      .object({
        channel: z.string(),
        times: z.array(z.number()),
        window: z.array(z.number()),
        template: z.array(z.number()),
      })
      .nullable(),
  }),
);

/** GET /api/similarity/items/:id/matches. */
export const itemMatchesResponseSchema = lazySchema(() =>
  z.object({
    itemId: z.number().int(),
    matches: z.array(itemMatchSchema),
    suggestion: matchSuggestionSchema.nullable(),
    caution: z.string(),
  }),
);

/** A family: windows of one station linked by matches at or above the threshold. */
export const familySchema = lazySchema(() =>
  z.object({
    /** The family's oldest window's item id (stable while the family only grows). */
    id: z.number().int(),
    stationId: z.number().int(),
    station: z.string(),
    size: z.number().int(),
    /** Label type → count (`unlabelled` for items not labelled yet). */
    labelMix: z.record(z.string(), z.number().int()),
    /** Windows per hour of day (UTC), 24 counts. */
    hours: z.array(z.number().int()).length(24),
    firstAt: z.string(),
    lastAt: z.string(),
    /** The strongest and weakest link kept in the family. */
    bestLink: z.number(),
    weakestLink: z.number(),
    /** Up to 50 members, oldest first. */
    members: z.array(z.object({ itemId: z.number().int(), windowStart: z.string(), labelType: z.string().nullable(), flag: z.string() })),
  }),
);

/** GET /api/similarity/families query. */
export const familiesQuerySchema = lazySchema(() =>
  z.object({
    station: z.coerce.number().int().positive().optional(),
    minValue: z.coerce.number().min(0.3, 'minValue: at least 0.3').max(1, 'minValue: at most 1').default(0.7),
    minSize: z.coerce.number().int().min(2).max(1000).default(2),
  }),
);

/** GET /api/similarity/families. */
export const familiesResponseSchema = lazySchema(() =>
  z.object({
    minValue: z.number(),
    families: z.array(familySchema),
    caution: z.string(),
  }),
);

export type ItemMatch = z.infer<typeof itemMatchSchema>;
export type ItemMatchesResponse = z.infer<typeof itemMatchesResponseSchema>;
export type MatchSuggestion = z.infer<typeof matchSuggestionSchema>;
export type Family = z.infer<typeof familySchema>;
export type FamiliesResponse = z.infer<typeof familiesResponseSchema>;
export type FamiliesQuery = z.infer<typeof familiesQuerySchema>;

/** The caution shown wherever matches or families appear. */
export const similarityCaution =
  'Waveform similarity is an automatic aid: a match says two windows look alike at this station, not what caused them. An analyst confirms every label; public information follows the network’s own procedures and local authorities.';
