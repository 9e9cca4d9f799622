import { z } from 'zod';
import { lazySchema } from './lazy-schema';
import { flagSchema } from './flags';
import { itemStateSchema } from './item-states';
import { eventLabelSchema, quakemlEventTypes } from './label';

/**
 * Wire formats of the network supervisor's side (issue 7): candidate events, thresholds, review,
 * inbox, dashboard and the catalogue export. Shared by server/features/supervision and
 * client/src/features/supervisor so both validate the same way.
 */

/** Settings of the candidate-event grouping (see server/features/events/candidate-events.ts). */
export const groupingSettingsSchema = lazySchema(() =>
  z.object({
    /** Distinct stations needed for a candidate event. */
    minStations: z.number().int().min(2, 'minStations must be at least 2').default(3),
    /** Apparent velocity of the earliest arrivals, km/s (3 km/s: a slow crustal value, common practice). */
    velocityKmS: z.number().positive('velocityKmS must be > 0 km/s').default(3),
    /** Slack added to the travel-time difference allowed between two stations, s. */
    slackS: z.number().min(0, 'slackS must be ≥ 0 s').default(2),
  }),
);

/** Parsed grouping settings. */
export type GroupingSettings = z.infer<typeof groupingSettingsSchema>;

/** The default grouping settings (3 stations, 3 km/s, 2 s). */
export const defaultGroupingSettings: GroupingSettings = groupingSettingsSchema.parse({});

/** QuakeML 1.2 EvaluationStatus values a supervisor may set (`preliminary` is the unreviewed state). */
export const reviewStatuses = ['confirmed', 'reviewed', 'final', 'rejected'] as const;

/** QuakeML 1.2 EvaluationStatus (all five values). */
export const evaluationStatuses = ['preliminary', ...reviewStatuses] as const;

/** One evaluation status. */
export type EvaluationStatus = (typeof evaluationStatuses)[number];

const csv = <T extends z.ZodType>(item: T) =>
  z.preprocess((v) => (typeof v === 'string' ? (v === '' ? [] : v.split(',')) : v), z.array(item));

const isoTime = lazySchema(() =>
  z
    .string()
    .refine((s) => /^\d{4}-\d{2}-\d{2}(T\d{2}:\d{2}(:\d{2}(\.\d{1,6})?)?Z?)?$/.test(s) && !Number.isNaN(Date.parse(s)), 'must be an ISO 8601 UTC time, e.g. 2026-03-14T09:26:53.589Z'),
);

const stationCode = lazySchema(() => z.string().regex(/^([A-Z0-9]{1,2}\.)?[A-Z0-9]{1,5}$/, 'must be a station code like KV01 or XX.KV01'));

/** A period, `from` inclusive and `to` exclusive. */
export const periodSchema = lazySchema(() =>
  z
    .object({ from: isoTime, to: isoTime })
    .refine((p) => Date.parse(p.from) < Date.parse(p.to), { message: 'from must be before to', path: ['from'] }),
);

/** Query of GET /api/supervisor/review. Times filter on the window start. */
export const reviewQuerySchema = lazySchema(() =>
  z
    .object({
      station: csv(stationCode).optional(),
      type: csv(z.enum(quakemlEventTypes)).optional(),
      analyst: z.string().max(255).optional(),
      status: csv(z.enum(evaluationStatuses)).optional(),
      from: isoTime.optional(),
      to: isoTime.optional(),
      limit: z.preprocess((v) => (typeof v === 'string' ? Number(v) : v), z.number().int().min(1).max(500)).default(200),
    })
    .refine((q) => q.from === undefined || q.to === undefined || Date.parse(q.from) < Date.parse(q.to), { message: 'from must be before to', path: ['from'] }),
);

/** A parsed review query. */
export type ReviewQuery = z.infer<typeof reviewQuerySchema>;

/** How the time shown for an event was found. */
export const eventTimeBases = ['earliest P pick', 'earliest trigger', 'window start'] as const;

/** One row of the review list: a labelled item. */
export const reviewRowSchema = lazySchema(() =>
  z.object({
    itemId: z.number().int(),
    state: itemStateSchema,
    station: z.string(),
    stationId: z.number().int(),
    flag: flagSchema,
    score: z.number(),
    eventType: z.string(),
    certainty: z.string(),
    picks: z.number().int(),
    analyst: z.object({ id: z.string(), displayName: z.string() }).nullable(),
    eventTime: z.string(),
    eventTimeBasis: z.enum(eventTimeBases),
    evaluationStatus: z.enum(evaluationStatuses),
    reviewedBy: z.object({ id: z.string(), displayName: z.string() }).nullable(),
    reviewComment: z.string().nullable(),
    candidateEventId: z.number().int().nullable(),
    version: z.number().int(),
  }),
);

/** One review row. */
export type ReviewRow = z.infer<typeof reviewRowSchema>;

/** Body of POST /api/supervisor/review/items/:id/status. */
export const setStatusBodySchema = lazySchema(() =>
  z.object({
    version: z.number().int().positive('must be the item version you saw'),
    status: z.enum(reviewStatuses),
    comment: z.string().trim().max(2000).default(''),
  }),
);

/** Body of POST .../return (the comment is what the analyst sees). */
export const returnBodySchema = lazySchema(() =>
  z.object({
    version: z.number().int().positive('must be the item version you saw'),
    comment: z.string().trim().min(3, 'say why you return it (at least 3 characters)').max(2000),
  }),
);

/** The flagging thresholds a supervisor tunes (the rest of the profile is the operator's). */
export const thresholdValuesSchema = lazySchema(() =>
  z
    .object({
      eventZ: z.number().min(0, 'eventZ must be ≥ 0').max(50, 'eventZ must be ≤ 50'),
      noiseZ: z.number().min(0, 'noiseZ must be ≥ 0').max(50, 'noiseZ must be ≤ 50'),
      centroidMaxFactor: z.number().min(1, 'centroidMaxFactor must be ≥ 1').max(20),
    })
    .refine((t) => t.noiseZ <= t.eventZ, { message: 'noiseZ must not exceed eventZ', path: ['noiseZ'] }),
);

/** Threshold values. */
export type ThresholdValues = z.infer<typeof thresholdValuesSchema>;

/** Confusion counts and the derived rates (null where the denominator is 0). */
export const evaluationSchema = lazySchema(() =>
  z.object({
    tp: z.number().int(),
    fp: z.number().int(),
    fn: z.number().int(),
    tn: z.number().int(),
    precision: z.number().nullable(),
    recall: z.number().nullable(),
  }),
);

/** Confusion counts with precision and recall. */
export type Evaluation = z.infer<typeof evaluationSchema>;

/** Body of POST /api/supervisor/thresholds/:stationId/apply. */
export const applyThresholdsBodySchema = lazySchema(() => z.object({ thresholds: thresholdValuesSchema }));

/** Body of POST /api/supervisor/thresholds/:stationId/rescore. */
export const rescoreBodySchema = periodSchema;

/** Query of GET /api/supervisor/export. */
export const exportQuerySchema = lazySchema(() =>
  z
    .object({
      from: isoTime,
      to: isoTime,
      format: z.enum(['quakeml', 'csv']).default('quakeml'),
      status: csv(z.enum(evaluationStatuses)).default(['confirmed', 'reviewed', 'final']),
    })
    .refine((p) => Date.parse(p.from) < Date.parse(p.to), { message: 'from must be before to', path: ['from'] }),
);

/** A parsed export query. */
export type ExportQuery = z.infer<typeof exportQuerySchema>;

/**
 * Body of POST /api/supervisor/candidate-events/:id/label: labels every member with `eventType`
 * only (certainty "suspected", no picks, no note of the analyst's: the other members have not been
 * looked at). `current`, the member the analyst is on, gets its whole label (picks, note,
 * certainty) instead.
 */
export const groupLabelBodySchema = lazySchema(() =>
  z
    .object({
      eventType: z.enum(quakemlEventTypes),
      current: z.object({ itemId: z.number().int().positive(), label: eventLabelSchema }).optional(),
    })
    .strict()
    .refine((b) => b.current === undefined || b.current.label.eventType === b.eventType, { message: 'the current item’s label must have the group’s event type', path: ['current', 'label', 'eventType'] }),
);

/** A parsed group-label body. */
export type GroupLabelBody = z.infer<typeof groupLabelBodySchema>;

/** Query of GET /api/supervisor/dashboard. */
export const dashboardQuerySchema = lazySchema(() =>
  z
    .object({ from: isoTime, to: isoTime })
    .refine((p) => Date.parse(p.from) < Date.parse(p.to), { message: 'from must be before to', path: ['from'] })
    .refine((p) => Date.parse(p.to) - Date.parse(p.from) <= 366 * 86_400_000, { message: 'at most 366 days at a time', path: ['to'] }),
);

/**
 * The event label a supervisor gives when confirming an escalated item that has none (an
 * escalation carries a reason, not a label): the QuakeML type and, optionally, certainty,
 * distance class and a note. Without it such an item would be confirmed as nothing, in neither
 * the catalogue nor the queue.
 */
export const confirmLabelSchema = lazySchema(() => eventLabelSchema.pick({ eventType: true, certainty: true, distanceClass: true, note: true }).strict());

/** A parsed confirmation label. */
export type ConfirmLabel = z.infer<typeof confirmLabelSchema>;

/** Body of POST /api/supervisor/inbox/:id/confirm: `label` is required when the item has no event label yet. */
export const inboxConfirmBodySchema = lazySchema(() => z.object({ label: confirmLabelSchema.optional() }).strict());

/** Body of POST /api/supervisor/inbox/:id/return. */
export const inboxReturnBodySchema = lazySchema(() =>
  z.object({
    comment: z.string().trim().min(3, 'say why you return it (at least 3 characters)').max(2000),
  }),
);

/** One inbox entry as GET /api/supervisor/inbox lists it (server/features/supervision/inbox.ts). */
export const inboxEntryViewSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    itemId: z.number(),
    station: z.string(),
    subject: z.string(),
    reason: z.string(),
    escalatedBy: z.string().nullable(),
    createdAt: z.string(),
    readAt: z.string().nullable(),
    acknowledgedAt: z.string().nullable(),
    resolution: z.string().nullable(),
    resolutionComment: z.string().nullable(),
    resolvedBy: z.string().nullable(),
    resolvedAt: z.string().nullable(),
    itemState: z.string(),
    itemVersion: z.number(),
    /** The item's event type, or null when it has no event label (confirming it then needs one). */
    itemLabelType: z.string().nullable(),
    mailError: z.string().nullable(),
  }),
);

/** One inbox entry. */
export type InboxEntryView = z.infer<typeof inboxEntryViewSchema>;

/** A supervisor's inbox: entries newest first and the unread count. */
export const inboxViewSchema = lazySchema(() => z.object({ entries: z.array(inboxEntryViewSchema), unread: z.number() }));

/** One member of a candidate event (server/features/events/candidate-events.ts). */
export const candidateMemberSchema = lazySchema(() =>
  z.object({
    itemId: z.number().int(),
    station: z.string(),
    stationId: z.number().int(),
    /** First trigger time, ISO 8601 UTC with ms. */
    arrival: z.string(),
    state: itemStateSchema,
    flag: flagSchema,
    score: z.number(),
    labelType: z.string().nullable(),
    version: z.number().int(),
  }),
);

/** A candidate event with the members the viewer may see. */
export const candidateEventSchema = lazySchema(() =>
  z.object({
    id: z.number().int(),
    anchorItemId: z.number().int(),
    firstArrival: z.string(),
    lastArrival: z.string(),
    stationCount: z.number().int(),
    members: z.array(candidateMemberSchema),
  }),
);

/** What labelling a group did to each member. */
export const groupLabelResultSchema = lazySchema(() =>
  z.object({
    members: z.array(z.object({ itemId: z.number().int(), result: z.enum(['labelled', 'skipped']), reason: z.string().optional() })),
  }),
);
