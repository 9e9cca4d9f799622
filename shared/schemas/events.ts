import { z } from 'zod';
import { lazySchema } from './lazy-schema';
import { isoMicrosSchema, pickOnsets, pickPolarities, quakemlEventTypes, streamIdSchema, typeCertainties } from './label';

/**
 * The event contract (issue 17): events built from candidate-event groups, their picks, origins,
 * amplitudes and magnitudes, and a network's velocity model. Times are ISO 8601 UTC (microseconds
 * accepted in, milliseconds out), distances km, angles degrees, uncertainties 68 % (1 σ for picks).
 */

/** The caution that goes with every location and magnitude (API, exports, screens). */
export const EVENT_CAUTION =
  "Locations and magnitudes are triage aids with the uncertainties shown: they need an analyst's review, and public information and warnings follow the network's own procedures and local authorities.";

/** Evaluation status of an event (QuakeML 1.2 EvaluationStatus). */
export const eventEvaluationStatuses = ['preliminary', 'confirmed', 'reviewed', 'final', 'rejected'] as const;

/** One layer of a velocity model. */
export const velocityLayerSchema = lazySchema(() =>
  z
    .object({
      topKm: z.number().min(0).max(1000),
      vpKmS: z.number().positive().max(20),
      vsKmS: z.number().positive().max(20),
    })
    .strict(),
);

/** PUT /api/events/velocity-models/:network body: the model and the ML settings. */
export const velocityModelBodySchema = lazySchema(() =>
  z
    .object({
      name: z.string().trim().min(1).max(200),
      layers: z.array(velocityLayerSchema).min(1).max(50),
      /** Magnitude units added to each station's ML, by NET.STA. */
      stationCorrections: z
        .record(z.string().regex(/^[A-Z0-9]{1,2}\.[A-Z0-9]{1,5}$/, 'keys must be NET.STA'), z.number().min(-3).max(3))
        .default({}),
      /** The version read (optimistic locking); omit when the network has none yet. */
      version: z.number().int().positive().optional(),
    })
    .strict(),
);

/** A network's velocity model and ML settings. */
export const velocityModelViewSchema = lazySchema(() =>
  z.object({
    network: z.string(),
    name: z.string(),
    layers: z.array(velocityLayerSchema),
    /** True while the network uses Seisift's placeholder model. */
    isDefault: z.boolean(),
    minusLogA0: z.string(),
    stationCorrections: z.record(z.string(), z.number()),
    version: z.number().int().nullable(),
    updatedAt: z.string().nullable(),
    note: z.string(),
  }),
);

/** Params of /api/events/velocity-models/:network. */
export const networkParamsSchema = lazySchema(() => z.object({ network: z.string().regex(/^[A-Z0-9]{1,2}$/, 'must be a network code, e.g. XX') }));

/** POST /api/events/:id/picks body: an analyst's pick. */
export const pickBodySchema = lazySchema(() =>
  z
    .object({
      streamId: streamIdSchema,
      phase: z.enum(['P', 'S']),
      time: isoMicrosSchema,
      uncertaintyS: z.number().positive().max(10),
      onset: z.enum(pickOnsets).default('questionable'),
      polarity: z.enum(pickPolarities).default('undecidable'),
      /** The event's version read (optimistic locking). */
      eventVersion: z.number().int().positive(),
    })
    .strict(),
);

/** PUT /api/events/:id/picks/:pickId body. */
export const pickUpdateBodySchema = lazySchema(() => pickBodySchema.omit({ streamId: true }).extend({ streamId: streamIdSchema.optional() }));

/** DELETE /api/events/:id/picks/:pickId and other version-only bodies. */
export const eventVersionBodySchema = lazySchema(() => z.object({ eventVersion: z.number().int().positive() }).strict());

/** POST /api/events/:id/picks/accept: automatic suggestions to take over as the analyst's own (all when `pickIds` is absent). */
export const acceptPicksBodySchema = lazySchema(() => z.object({ pickIds: z.array(z.number().int().positive()).max(500).optional(), eventVersion: z.number().int().positive() }).strict());

/** PUT /api/events/:id/amplitudes body: an analyst's re-picked Wood-Anderson amplitude. */
export const amplitudeBodySchema = lazySchema(() =>
  z
    .object({
      streamId: streamIdSchema,
      amplitudeMm: z.number().positive().max(1e6),
      periodS: z.number().positive().max(100).nullable().default(null),
      time: isoMicrosSchema,
      eventVersion: z.number().int().positive(),
    })
    .strict(),
);

/** POST /api/events/:id/members body. */
export const memberBodySchema = lazySchema(() => z.object({ itemId: z.number().int().positive(), eventVersion: z.number().int().positive() }).strict());

/** POST /api/events body: an event assembled from windows no candidate group joined. */
export const eventCreateBodySchema = lazySchema(() => z.object({ itemIds: z.array(z.number().int().positive()).min(1).max(100) }).strict());

/** POST /api/events/:id/relocate body. */
export const relocateBodySchema = lazySchema(() =>
  z
    .object({
      /** Fix the depth here, km (the origin says so); omit to solve for it. */
      fixedDepthKm: z.number().min(0).max(100).optional(),
      eventVersion: z.number().int().positive(),
    })
    .strict(),
);

/** PUT /api/events/:id/label body: the event's type, certainty and evaluation status. */
export const eventLabelBodySchema = lazySchema(() =>
  z
    .object({
      eventType: z.enum(quakemlEventTypes).nullable(),
      typeCertainty: z.enum(typeCertainties).nullable(),
      evaluationStatus: z.enum(eventEvaluationStatuses).optional(),
      eventVersion: z.number().int().positive(),
    })
    .strict(),
);

/** GET /api/events query: the period (by first arrival), at most `limit` newest first. */
export const eventListQuerySchema = lazySchema(() =>
  z.object({
    from: z.iso.datetime({ offset: true }).optional(),
    to: z.iso.datetime({ offset: true }).optional(),
    limit: z.coerce.number().int().min(1).max(1000).default(200),
  }),
);

const originUncertaintySchema = lazySchema(() =>
  z.object({
    horizontalKm68: z.number(),
    ellipse: z.object({ semiMajorKm: z.number(), semiMinorKm: z.number(), azimuthDeg: z.number() }),
    depthKm: z.number().nullable(),
    timeS: z.number(),
  }),
);

/** An origin as the API shows it. */
export const originViewSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    time: z.string(),
    latitude: z.number(),
    longitude: z.number(),
    depthKm: z.number(),
    depthFixed: z.boolean(),
    depthFixedReason: z.string().nullable(),
    uncertainty: originUncertaintySchema,
    rmsS: z.number(),
    azimuthalGapDeg: z.number(),
    minimumDistanceKm: z.number(),
    usedPhases: z.number(),
    usedStations: z.number(),
    velocityModel: z.object({ name: z.string(), isDefault: z.boolean() }),
    evaluationMode: z.enum(['manual', 'automatic']),
    author: z.string().nullable(),
    notes: z.array(z.string()),
    createdAt: z.string(),
  }),
);

/** A pick as the API shows it: the analysts' and the automatic suggestions come in separate lists. */
export const pickViewSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    streamId: z.string(),
    phase: z.enum(['P', 'S']),
    time: z.string(),
    uncertaintyS: z.number(),
    onset: z.string().nullable(),
    polarity: z.string().nullable(),
    evaluationMode: z.enum(['manual', 'automatic']),
    author: z.string().nullable(),
    method: z.string().nullable(),
    version: z.number(),
  }),
);

/** An event row of the list and the catalogue. */
export const eventSummarySchema = lazySchema(() =>
  z.object({
    id: z.number(),
    network: z.string(),
    firstArrival: z.string(),
    originTime: z.string().nullable(),
    latitude: z.number().nullable(),
    longitude: z.number().nullable(),
    depthKm: z.number().nullable(),
    depthFixed: z.boolean().nullable(),
    horizontalKm68: z.number().nullable(),
    magnitude: z.number().nullable(),
    magnitudeUncertainty: z.number().nullable(),
    magnitudeType: z.string().nullable(),
    /** Stations whose ML went into the network ML (null without a magnitude). */
    magnitudeStationCount: z.number().nullable(),
    stationCount: z.number(),
    usedStations: z.number().nullable(),
    azimuthalGapDeg: z.number().nullable(),
    rmsS: z.number().nullable(),
    eventType: z.string().nullable(),
    typeCertainty: z.string().nullable(),
    evaluationStatus: z.enum(eventEvaluationStatuses),
    evaluationMode: z.enum(['manual', 'automatic']).nullable(),
    locationRefusal: z.string().nullable(),
    candidateEventId: z.number().nullable(),
    /** The queue items (windows) the event holds: each opens its member window. */
    memberItemIds: z.array(z.number()),
    /** The member windows' stations (NET.STA), sorted. */
    stations: z.array(z.string()),
    version: z.number(),
  }),
);

/** GET /api/events. */
export const eventListSchema = lazySchema(() => z.object({ caution: z.string(), events: z.array(eventSummarySchema) }));

/** GET /api/events/:id. */
export const eventDetailSchema = lazySchema(() =>
  z.object({
    caution: z.string(),
    event: eventSummarySchema,
    members: z.array(z.object({ itemId: z.number(), station: z.string(), stationId: z.number(), source: z.string(), removed: z.boolean(), windowStart: z.string() })),
    origin: originViewSchema.nullable(),
    arrivals: z.array(z.object({ pickId: z.number().nullable(), streamId: z.string(), phase: z.string(), modelPhase: z.string(), residualS: z.number(), distanceKm: z.number(), azimuthDeg: z.number(), takeoffAngleDeg: z.number(), weight: z.number() })),
    picks: z.object({ analyst: z.array(pickViewSchema), automatic: z.array(pickViewSchema), usedForLocation: z.enum(['manual', 'automatic']) }),
    amplitudes: z.array(z.object({ id: z.number(), streamId: z.string(), amplitudeMm: z.number(), periodS: z.number().nullable(), time: z.string(), evaluationMode: z.enum(['manual', 'automatic']), author: z.string().nullable() })),
    stationMagnitudes: z.array(z.object({ station: z.string(), streamIds: z.array(z.string()), value: z.number(), amplitudeMm: z.number(), periodS: z.number().nullable(), distanceKm: z.number(), hypocentralDistanceKm: z.number() })),
    magnitude: z.object({ type: z.string(), value: z.number(), uncertainty: z.number().nullable(), stationCount: z.number(), method: z.string(), evaluationMode: z.enum(['manual', 'automatic']) }).nullable(),
    origins: z.array(z.object({ id: z.number(), time: z.string(), latitude: z.number(), longitude: z.number(), depthKm: z.number(), rmsS: z.number(), evaluationMode: z.string(), createdAt: z.string(), preferred: z.boolean() })),
  }),
);

/** An event row. */
export type EventSummary = z.infer<typeof eventSummarySchema>;
/** An event with everything about it. */
export type EventDetail = z.infer<typeof eventDetailSchema>;
/** A network's velocity model and ML settings. */
export type VelocityModelView = z.infer<typeof velocityModelViewSchema>;
