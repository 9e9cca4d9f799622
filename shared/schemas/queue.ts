import { z } from 'zod';
import { lazySchema } from './lazy-schema';
import { flagSchema } from './flags';
import { finiteNumberArraySchema } from './number-array';
import { itemStateSchema, type ItemState } from './item-states';
import { dismissalSchema, escalationSchema, eventLabelSchema, quakemlEventTypes, storedLabelSchema } from './label';

/**
 * The review queue's wire formats, shared by the API (server/features/queue) and the client
 * (client/src/features/queue, client/src/features/review).
 */

/** Sort orders of the queue list: highest score first, or oldest first (by arrival). */
export const queueSorts = ['score', 'age'] as const;

/** One sort order. */
export type QueueSort = (typeof queueSorts)[number];

/** Largest page of the queue list. */
export const MAX_QUEUE_PAGE = 500;

/** `label` filter values: an event type, `noise` (dismissed as noise) or `none` (no label yet). */
export const labelFilterValues = [...quakemlEventTypes, 'noise', 'none'] as const;

/** A comma-separated list; a repeated parameter (`?state=new&state=returned`) adds to it. */
const csv = <T extends z.ZodType>(item: T) =>
  z.preprocess((v) => {
    const parts = typeof v === 'string' ? [v] : Array.isArray(v) && v.every((x) => typeof x === 'string') ? v : null;
    return parts === null ? v : parts.flatMap((p: string) => p.split(',')).filter((p: string) => p !== '');
  }, z.array(item));

const isoTime = lazySchema(() =>
  z
    .string()
    .refine((s) => /^\d{4}-\d{2}-\d{2}(T\d{2}:\d{2}(:\d{2}(\.\d{1,6})?)?Z?)?$/.test(s) && !Number.isNaN(Date.parse(s)), 'must be an ISO 8601 UTC time, e.g. 2026-03-14T09:26:53.589Z'),
);

const finiteNumber = lazySchema(() => z.preprocess((v) => (typeof v === 'string' && v.trim() !== '' ? Number(v) : v), z.number().finite('must be a number')));

/** Ways the display band may filter. */
export const displayPhases = ['causal', 'zero-phase'] as const;
/** What the display trace measures. */
export const displayUnits = ['counts', 'velocity', 'displacement', 'wood-anderson'] as const;
/** One display unit choice. */
export type DisplayUnits = (typeof displayUnits)[number];


/**
 * Query of GET /api/queue. Lists are comma-separated (`state=new,in review`). Station codes are
 * `KV01` or `XX.KV01`. Times filter on the window start, `from` inclusive and `to` exclusive.
 */
export const queueQuerySchema = lazySchema(() =>
  z
    .object({
      state: csv(itemStateSchema).optional(),
      station: csv(z.string().regex(/^([A-Z0-9]{1,2}\.)?[A-Z0-9]{1,5}$/, 'must be a station code like KV01 or XX.KV01')).optional(),
      flag: csv(flagSchema).optional(),
      label: csv(z.enum(labelFilterValues)).optional(),
      scoreMin: finiteNumber.optional(),
      scoreMax: finiteNumber.optional(),
      from: isoTime.optional(),
      to: isoTime.optional(),
      sort: z.enum(queueSorts).default('score'),
      cursor: z.string().max(200).optional(),
      limit: z.preprocess((v) => (typeof v === 'string' ? Number(v) : v), z.number().int().min(1).max(MAX_QUEUE_PAGE)).default(100),
    })
    .refine((q) => q.scoreMin === undefined || q.scoreMax === undefined || q.scoreMin <= q.scoreMax, { message: 'scoreMin must not exceed scoreMax', path: ['scoreMin'] })
    .refine((q) => q.from === undefined || q.to === undefined || Date.parse(q.from) < Date.parse(q.to), { message: 'from must be before to', path: ['from'] }),
);

/** A parsed queue query. */
export type QueueQuery = z.infer<typeof queueQuerySchema>;

/** Who claimed or last changed an item. */
export const personRefSchema = lazySchema(() => z.object({ id: z.string(), displayName: z.string() }));

/** One queue row as the list and the live channel show it. */
export const queueRowSchema = lazySchema(() =>
  z.object({
    id: z.number().int(),
    state: itemStateSchema,
    score: z.number(),
    flag: flagSchema,
    reasons: z.array(z.string()),
    station: z.string(),
    stationId: z.number().int(),
    windowStart: z.string(),
    createdAt: z.string(),
    updatedAt: z.string(),
    version: z.number().int(),
    claimedBy: personRefSchema.nullable(),
    claimedAt: z.string().nullable(),
    updatedBy: personRefSchema.nullable(),
    labelType: z.string().nullable(),
    /**
     * The candidate event (issue 7) the item belongs to: its id and how many stations it spans; null
     * when it belongs to none. Defaults to null for summaries written before the field existed.
     */
    candidateEvent: z.object({ id: z.number().int(), stationCount: z.number().int() }).nullable().default(null),
  }),
);

/** One queue row. */
export type QueueRow = z.infer<typeof queueRowSchema>;

/** Items per state under the list's non-state filters. */
export const stateCountsSchema = lazySchema(() => z.record(itemStateSchema, z.number().int()));

/** Counts per state. */
export type StateCounts = Record<ItemState, number>;

/** Response of GET /api/queue. */
export const queuePageSchema = lazySchema(() =>
  z.object({
    items: z.array(queueRowSchema),
    /** Pass as `cursor` for the next page; null on the last page. */
    nextCursor: z.string().nullable(),
    counts: stateCountsSchema,
    /** Matching items in every state the `state` filter selects. */
    total: z.number().int(),
  }),
);

/** A queue page. */
export type QueuePage = z.infer<typeof queuePageSchema>;

/** Item detail: the row, its label, the window and its analysis (the engine's output contract). */
export const queueItemDetailSchema = lazySchema(() =>
  queueRowSchema.extend({
    label: storedLabelSchema.nullable(),
    windowId: z.number().int(),
    windowEnd: z.string(),
    analysis: z.unknown(),
    /** Per stream id: whether a sensitivity is known (the spectrum then shows NLNM/NHNM). */
    channels: z.array(z.object({ streamId: z.string(), sampleRateHz: z.number(), startTime: z.string(), sampleCount: z.number().int(), hasSensitivity: z.boolean() })),
    /** Idle minutes after which a claim lapses. */
    claimIdleMinutes: z.number(),
  }),
);

/** Item detail. */
export type QueueItemDetail = z.infer<typeof queueItemDetailSchema>;

/** Every write names the version the client saw (optimistic locking). */
const versioned = lazySchema(() => z.object({ version: z.number().int().positive('must be the item version you saw') }));

/** Body of POST .../claim and .../release. */
export const versionBodySchema = versioned;
/** Body of POST .../label. */
export const labelBodySchema = lazySchema(() => versioned.extend({ label: eventLabelSchema }));
/** Body of POST .../dismiss. */
export const dismissBodySchema = lazySchema(() => versioned.extend(dismissalSchema.shape));
/** Body of POST .../escalate. */
export const escalateBodySchema = lazySchema(() => versioned.extend(escalationSchema.shape));

/** Query of GET /api/queue/items/:id/traces: a time range (s from the window start) and the plot width. */
export const tracesQuerySchema = lazySchema(() =>
  z
    .object({
      from: finiteNumber.optional(),
      to: finiteNumber.optional(),
      points: z.preprocess((v) => (typeof v === 'string' ? Number(v) : v), z.number().int().min(100).max(20_000)).default(2000),
      /** Display band, Hz (both or neither): a Butterworth band-pass of the profile's order on the display trace. */
      fmin: finiteNumber.optional(),
      fmax: finiteNumber.optional(),
      /** How the display band filters: causal from zero state (as the engine) or forward-backward (zero-phase, display only). */
      phase: z.enum(displayPhases).optional(),
      /** The display trace's ground motion (from the station's response; refused per channel with the reason where it cannot be used). */
      units: z.enum(displayUnits).optional(),
    })
    .refine((q) => q.from === undefined || q.to === undefined || q.from < q.to, { message: 'from must be before to', path: ['from'] })
    .refine((q) => (q.fmin === undefined) === (q.fmax === undefined), { message: 'give both fmin and fmax, or neither', path: ['fmin'] })
    .refine((q) => q.fmin === undefined || q.fmax === undefined || (q.fmin > 0 && q.fmin < q.fmax), { message: 'the band needs 0 < fmin < fmax (Hz)', path: ['fmin'] }),
);

/** A parsed traces query. */
export type TracesQuery = z.infer<typeof tracesQuerySchema>;

/**
 * The display trace of one channel, as the analyst asked for it (units and band), with the filter
 * it came from in words: no number of the flag comes from it.
 */
export const displayTraceSchema = lazySchema(() =>
  z.object({
    /** On the raw trace's points (`times`). */
    values: finiteNumberArraySchema,
    /** Physical unit of `values` (counts, m/s, m, mm for Wood-Anderson). */
    unit: z.string(),
    units: z.enum(displayUnits),
    /** The whole chain in words: how the units were reached and the band, e.g. "response removed to velocity (poles and zeros) · Butterworth 1–5 Hz order 4, zero-phase". */
    chain: z.string(),
    band: z.tuple([z.number(), z.number()]).nullable(),
    phase: z.enum(displayPhases),
  }),
);

/** One channel's display traces. */
export const channelTracesSchema = lazySchema(() =>
  z.object({
    streamId: z.string(),
    sampleRateHz: z.number(),
    startTime: z.string(),
    /** Samples per display bucket (1 = full resolution). */
    bucket: z.number().int(),
    /** Times, s from the window's first sample (each bucket gives its min and max in time order). */
    times: finiteNumberArraySchema,
    raw: finiteNumberArraySchema,
    low: finiteNumberArraySchema,
    high: finiteNumberArraySchema,
    staLta: finiteNumberArraySchema,
    units: z.string(),
    bands: z.object({ low: z.tuple([z.number(), z.number()]), high: z.tuple([z.number(), z.number()]) }),
    staLtaLevels: z.object({ on: z.number(), off: z.number(), method: z.string() }),
    triggers: z.array(z.object({ on: z.number(), off: z.number().nullable() })),
    spectrogram: z.object({ times: finiteNumberArraySchema, freqs: finiteNumberArraySchema, db: finiteNumberArraySchema }).nullable(),
    /** The asked-for display trace (only when units or a band were asked for). */
    display: displayTraceSchema.nullable().optional(),
    /** Why the asked-for display trace was refused on this channel (e.g. no poles and zeros for displacement). */
    displayRefused: z.string().nullable().optional(),
  }),
);

/** Response of GET /api/queue/items/:id/traces. */
export const tracesResponseSchema = lazySchema(() =>
  z.object({
    from: z.number(),
    to: z.number(),
    filtering: z.string(),
    channels: z.array(channelTracesSchema),
  }),
);

/** Display traces of an item. */
export type TracesResponse = z.infer<typeof tracesResponseSchema>;

/** The summary the live channel carries with each item change, enough to patch a queue row. */
export const itemChangeSummarySchema = queueRowSchema;


/**
 * Whether a row belongs in a list under `q`'s filters (the same rules as GET /api/queue, for
 * placing rows that arrive over the live channel). Station codes match `KV01` or `XX.KV01`.
 */
export function queueRowMatches(row: QueueRow, q: Partial<QueueQuery>): boolean {
  if (q.state && q.state.length > 0 && !q.state.includes(row.state)) return false;
  if (q.station && q.station.length > 0) {
    const [net, sta] = row.station.split('.');
    if (!q.station.some((s) => (s.includes('.') ? s === row.station : s === sta && net !== undefined))) return false;
  }
  if (q.flag && q.flag.length > 0 && !q.flag.includes(row.flag)) return false;
  if (q.label && q.label.length > 0) {
    const ok = q.label.some((l) => (l === 'none' ? row.labelType === null : row.labelType === l));
    if (!ok) return false;
  }
  if (q.scoreMin !== undefined && row.score < q.scoreMin) return false;
  if (q.scoreMax !== undefined && row.score > q.scoreMax) return false;
  const t = Date.parse(row.windowStart);
  if (q.from !== undefined && t < Date.parse(q.from)) return false;
  if (q.to !== undefined && t >= Date.parse(q.to)) return false;
  return true;
}

/**
 * The list order of GET /api/queue as a comparator: `score` = score descending then id
 * descending; `age` = created_at ascending then id ascending.
 */
export function compareQueueRows(sort: QueueSort): (a: QueueRow, b: QueueRow) => number {
  if (sort === 'score') return (a, b) => b.score - a.score || b.id - a.id;
  return (a, b) => Date.parse(a.createdAt) - Date.parse(b.createdAt) || a.id - b.id;
}
