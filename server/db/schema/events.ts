import { bigint, boolean, double, index, int, mysqlTable, primaryKey, text, uniqueIndex, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, jsonColumn, refColumn, timeColumn } from './columns';
import { queueItems } from './queue-items';
import { candidateEvents } from './supervisor';
import { users } from './users';

/**
 * A network's event settings, edited by a supervisor: its 1-D velocity model (layers with top depth,
 * Vp, Vs; the last a half-space), the −log A0 law and the station corrections of ML. No row: Seisift's
 * default model and law (labelled as defaults to be replaced).
 */
export const networkEventSettings = mysqlTable('network_event_settings', {
  network: varchar('network', { length: 8 }).primaryKey(),
  modelName: varchar('model_name', { length: 200 }).notNull(),
  /** `[{topKm, vpKmS, vsKmS}, …]`. */
  layers: jsonColumn<unknown>('layers').notNull(),
  /** The −log A0 law by name (`hutton-boore-1987`). */
  minusLogA0: varchar('minus_log_a0', { length: 40 }).notNull().default('hutton-boore-1987'),
  /** `{ "NET.STA": correction }`, magnitude units. */
  stationCorrections: jsonColumn<unknown>('station_corrections').notNull(),
  version: int('version', { unsigned: true }).notNull().default(1),
  updatedByUserId: varchar('updated_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
  updatedAt: timeColumn('updated_at').notNull(),
});

/**
 * An event: one earthquake, blast or other source seen by several stations, built from a candidate
 * event group (or by an analyst). Its preferred origin and magnitude are the latest location's.
 */
export const seismicEvents = mysqlTable(
  'seismic_events',
  {
    id: idColumn(),
    network: varchar('network', { length: 8 }).notNull(),
    candidateEventId: refColumn('candidate_event_id').references(() => candidateEvents.id, { onDelete: 'set null' }),
    preferredOriginId: refColumn('preferred_origin_id'),
    preferredMagnitudeId: refColumn('preferred_magnitude_id'),
    /** QuakeML 1.2 event type, null until labelled. */
    eventType: varchar('event_type', { length: 40 }),
    typeCertainty: varchar('type_certainty', { length: 12 }),
    /** QuakeML 1.2 evaluation status (preliminary until a supervisor reviews it). */
    evaluationStatus: varchar('evaluation_status', { length: 12 }).notNull().default('preliminary'),
    /** Why the latest attempt could not locate, in words; null when it located. */
    locationRefusal: text('location_refusal'),
    /** Time of the first arrival, for sorting before there is an origin. */
    firstArrivalAt: timeColumn('first_arrival_at').notNull(),
    version: int('version', { unsigned: true }).notNull().default(1),
    createdAt: timeColumn('created_at').notNull(),
    updatedAt: timeColumn('updated_at').notNull(),
  },
  (t) => [uniqueIndex('seismic_events_candidate_uq').on(t.candidateEventId), index('seismic_events_first_idx').on(t.firstArrivalAt)],
);

/** The windows (queue items) an event collects; `removedAt` set when an analyst took one out. */
export const eventMembers = mysqlTable(
  'event_members',
  {
    eventId: refColumn('event_id')
      .notNull()
      .references(() => seismicEvents.id, { onDelete: 'cascade' }),
    itemId: refColumn('item_id')
      .notNull()
      .references(() => queueItems.id, { onDelete: 'cascade' }),
    /** `group` (from the candidate event) or `analyst`. */
    source: varchar('source', { length: 10 }).notNull(),
    removedAt: timeColumn('removed_at'),
    changedByUserId: varchar('changed_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
  },
  (t) => [primaryKey({ columns: [t.eventId, t.itemId] }), index('event_members_item_idx').on(t.itemId)],
);

/**
 * A pick on one channel: time (µs since the epoch), uncertainty, onset, polarity, and who made it:
 * an analyst (evaluation mode `manual`, author set) or the automatic picker (`automatic`, no author).
 */
export const eventPicks = mysqlTable(
  'event_picks',
  {
    id: idColumn(),
    eventId: refColumn('event_id')
      .notNull()
      .references(() => seismicEvents.id, { onDelete: 'cascade' }),
    itemId: refColumn('item_id').references(() => queueItems.id, { onDelete: 'set null' }),
    streamId: varchar('stream_id', { length: 40 }).notNull(),
    phase: varchar('phase', { length: 8 }).notNull(),
    timeUs: bigint('time_us', { mode: 'number' }).notNull(),
    uncertaintyS: double('uncertainty_s').notNull(),
    onset: varchar('onset', { length: 12 }),
    polarity: varchar('polarity', { length: 12 }),
    evaluationMode: varchar('evaluation_mode', { length: 10 }).notNull(),
    authorUserId: varchar('author_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    /** How an automatic pick was made, in words. */
    method: text('method'),
    version: int('version', { unsigned: true }).notNull().default(1),
    createdAt: timeColumn('created_at').notNull(),
    updatedAt: timeColumn('updated_at').notNull(),
  },
  (t) => [index('event_picks_event_idx').on(t.eventId, t.evaluationMode)],
);

/** A location of an event (several per event; the event names its preferred one). */
export const eventOrigins = mysqlTable(
  'event_origins',
  {
    id: idColumn(),
    eventId: refColumn('event_id')
      .notNull()
      .references(() => seismicEvents.id, { onDelete: 'cascade' }),
    timeUs: bigint('time_us', { mode: 'number' }).notNull(),
    latitude: double('latitude').notNull(),
    longitude: double('longitude').notNull(),
    depthKm: double('depth_km').notNull(),
    depthFixed: boolean('depth_fixed').notNull(),
    depthFixedReason: text('depth_fixed_reason'),
    horizontalKm68: double('horizontal_km68').notNull(),
    ellipseMajorKm: double('ellipse_major_km').notNull(),
    ellipseMinorKm: double('ellipse_minor_km').notNull(),
    ellipseAzimuthDeg: double('ellipse_azimuth_deg').notNull(),
    depthKm68: double('depth_km68'),
    timeS68: double('time_s68').notNull(),
    rmsS: double('rms_s').notNull(),
    azimuthalGapDeg: double('azimuthal_gap_deg').notNull(),
    minimumDistanceKm: double('minimum_distance_km').notNull(),
    usedPhases: int('used_phases', { unsigned: true }).notNull(),
    usedStations: int('used_stations', { unsigned: true }).notNull(),
    /** The model located with: `{name, layers, isDefault}`. */
    velocityModel: jsonColumn<unknown>('velocity_model').notNull(),
    /** `manual` when analysts' picks were used, else `automatic`. */
    evaluationMode: varchar('evaluation_mode', { length: 10 }).notNull(),
    authorUserId: varchar('author_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    notes: jsonColumn<string[]>('notes').notNull(),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [index('event_origins_event_idx').on(t.eventId)],
);

/** A pick as used by an origin: phase, model branch, residual, distance, azimuth, weight. */
export const eventArrivals = mysqlTable(
  'event_arrivals',
  {
    id: idColumn(),
    originId: refColumn('origin_id')
      .notNull()
      .references(() => eventOrigins.id, { onDelete: 'cascade' }),
    pickId: refColumn('pick_id').references(() => eventPicks.id, { onDelete: 'set null' }),
    streamId: varchar('stream_id', { length: 40 }).notNull(),
    phase: varchar('phase', { length: 8 }).notNull(),
    modelPhase: varchar('model_phase', { length: 12 }).notNull(),
    residualS: double('residual_s').notNull(),
    distanceKm: double('distance_km').notNull(),
    azimuthDeg: double('azimuth_deg').notNull(),
    takeoffAngleDeg: double('takeoff_angle_deg').notNull(),
    weight: double('weight').notNull(),
  },
  (t) => [index('event_arrivals_origin_idx').on(t.originId)],
);

/**
 * Wood-Anderson amplitudes: read automatically for an origin (`originId` set), or re-picked by an
 * analyst for the event (`originId` null, evaluation mode `manual`), which then replaces the reading
 * of that channel in every later location.
 */
export const eventAmplitudes = mysqlTable(
  'event_amplitudes',
  {
    id: idColumn(),
    eventId: refColumn('event_id')
      .notNull()
      .references(() => seismicEvents.id, { onDelete: 'cascade' }),
    originId: refColumn('origin_id').references(() => eventOrigins.id, { onDelete: 'cascade' }),
    streamId: varchar('stream_id', { length: 40 }).notNull(),
    amplitudeMm: double('amplitude_mm').notNull(),
    periodS: double('period_s'),
    timeUs: bigint('time_us', { mode: 'number' }).notNull(),
    windowStartUs: bigint('window_start_us', { mode: 'number' }).notNull(),
    windowEndUs: bigint('window_end_us', { mode: 'number' }).notNull(),
    evaluationMode: varchar('evaluation_mode', { length: 10 }).notNull(),
    authorUserId: varchar('author_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [index('event_amplitudes_event_idx').on(t.eventId, t.originId)],
);

/** A station's ML for an origin (mean of its horizontals). */
export const eventStationMagnitudes = mysqlTable(
  'event_station_magnitudes',
  {
    id: idColumn(),
    originId: refColumn('origin_id')
      .notNull()
      .references(() => eventOrigins.id, { onDelete: 'cascade' }),
    /** NET.STA. */
    station: varchar('station', { length: 20 }).notNull(),
    streamIds: jsonColumn<string[]>('stream_ids').notNull(),
    value: double('value').notNull(),
    amplitudeMm: double('amplitude_mm').notNull(),
    periodS: double('period_s'),
    distanceKm: double('distance_km').notNull(),
    hypocentralDistanceKm: double('hypocentral_distance_km').notNull(),
  },
  (t) => [index('event_station_magnitudes_origin_idx').on(t.originId)],
);

/** The event's ML for an origin (median of the station MLs, with its spread). */
export const eventMagnitudes = mysqlTable(
  'event_magnitudes',
  {
    id: idColumn(),
    eventId: refColumn('event_id')
      .notNull()
      .references(() => seismicEvents.id, { onDelete: 'cascade' }),
    originId: refColumn('origin_id')
      .notNull()
      .references(() => eventOrigins.id, { onDelete: 'cascade' }),
    type: varchar('type', { length: 8 }).notNull(),
    value: double('value').notNull(),
    uncertainty: double('uncertainty'),
    stationCount: int('station_count', { unsigned: true }).notNull(),
    method: text('method').notNull(),
    evaluationMode: varchar('evaluation_mode', { length: 10 }).notNull(),
    authorUserId: varchar('author_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [index('event_magnitudes_event_idx').on(t.eventId)],
);
