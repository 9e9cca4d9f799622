import { double, index, mysqlTable, primaryKey, text, uniqueIndex, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, refColumn, timeColumn, jsonColumn } from './columns';
import { users } from './users';

/** Seismic stations, identified by FDSN network and station codes. */
export const stations = mysqlTable(
  'stations',
  {
    id: idColumn(),
    network: varchar('network', { length: 8 }).notNull(),
    code: varchar('code', { length: 8 }).notNull(),
    name: varchar('name', { length: 200 }).notNull(),
    latitude: double('latitude').notNull(),
    longitude: double('longitude').notNull(),
    elevationM: double('elevation_m').notNull().default(0),
    siteDescription: text('site_description'),
    /** The station's processing profile (bands, band-reject filters, STA/LTA, thresholds) as JSON. */
    profile: jsonColumn<unknown>('profile'),
    createdAt: timeColumn('created_at').notNull(),
    updatedAt: timeColumn('updated_at').notNull(),
  },
  (t) => [uniqueIndex('stations_net_sta_uq').on(t.network, t.code)],
);

/** Channels of a station (location + channel code), with sensitivity and response. */
export const channels = mysqlTable(
  'channels',
  {
    id: idColumn(),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id, { onDelete: 'cascade' }),
    location: varchar('location', { length: 8 }).notNull().default(''),
    code: varchar('code', { length: 8 }).notNull(),
    sampleRateHz: double('sample_rate_hz').notNull(),
    /** Overall sensitivity, output units per input unit (e.g. counts per m/s). */
    sensitivity: double('sensitivity'),
    sensitivityFrequencyHz: double('sensitivity_frequency_hz'),
    sensitivityInputUnits: varchar('sensitivity_input_units', { length: 40 }),
    /** Poles-and-zeros stage as JSON, when known. */
    response: jsonColumn<unknown>('response'),
    createdAt: timeColumn('created_at').notNull(),
    updatedAt: timeColumn('updated_at').notNull(),
  },
  (t) => [uniqueIndex('channels_station_loc_cha_uq').on(t.stationId, t.location, t.code)],
);

/** Which operators look after which stations. */
export const stationAssignments = mysqlTable(
  'station_assignments',
  {
    userId: varchar('user_id', { length: 255 })
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id, { onDelete: 'cascade' }),
  },
  (t) => [primaryKey({ columns: [t.userId, t.stationId] }), index('station_assignments_station_idx').on(t.stationId)],
);

/** Per-station ingest tokens for scripts; only a SHA-256 hash of each token is stored. */
export const ingestTokens = mysqlTable(
  'ingest_tokens',
  {
    id: idColumn(),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id, { onDelete: 'cascade' }),
    label: varchar('label', { length: 120 }).notNull(),
    tokenHash: varchar('token_hash', { length: 64 }).notNull().unique(),
    createdByUserId: varchar('created_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    createdAt: timeColumn('created_at').notNull(),
    lastUsedAt: timeColumn('last_used_at'),
    revokedAt: timeColumn('revoked_at'),
  },
  (t) => [index('ingest_tokens_station_idx').on(t.stationId)],
);
