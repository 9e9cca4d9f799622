import { bigint, char, double, index, int, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, longblob, refColumn, timeColumn, jsonColumn } from './columns';
import { ingestTokens, stations } from './stations';
import { users } from './users';

/** Every accepted upload file, with the original bytes kept as they arrived. */
export const uploads = mysqlTable(
  'uploads',
  {
    id: idColumn(),
    /** SHA-256 of the original bytes, hex; the same file twice maps to one upload. */
    sha256: char('sha256', { length: 64 }).notNull().unique(),
    filename: varchar('filename', { length: 255 }).notNull(),
    contentType: varchar('content_type', { length: 100 }),
    sizeBytes: bigint('size_bytes', { mode: 'number', unsigned: true }).notNull(),
    /** `mseed2`, `mseed3` or `csv`. */
    format: varchar('format', { length: 10 }).notNull(),
    original: longblob('original').notNull(),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id),
    uploadedByUserId: varchar('uploaded_by_user_id', { length: 255 }).references(() => users.id, { onDelete: 'set null' }),
    ingestTokenId: refColumn('ingest_token_id').references(() => ingestTokens.id, { onDelete: 'set null' }),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [index('uploads_station_idx').on(t.stationId, t.createdAt)],
);

/** One station's analysed time window: every channel of one upload for that station and span. */
export const windows = mysqlTable(
  'windows',
  {
    id: idColumn(),
    uploadId: refColumn('upload_id')
      .notNull()
      .references(() => uploads.id, { onDelete: 'cascade' }),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id),
    startTime: timeColumn('start_time').notNull(),
    endTime: timeColumn('end_time').notNull(),
    /** The whole analysis result (the engine's output contract) as JSON. */
    analysis: jsonColumn<unknown>('analysis').notNull(),
    /** Version of the engine that produced `analysis`. */
    engineVersion: varchar('engine_version', { length: 20 }).notNull(),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [index('windows_station_time_idx').on(t.stationId, t.startTime), index('windows_upload_idx').on(t.uploadId)],
);

/** The decoded samples of one channel of a window, kept for review screens. */
export const windowChannels = mysqlTable(
  'window_channels',
  {
    id: idColumn(),
    windowId: refColumn('window_id')
      .notNull()
      .references(() => windows.id, { onDelete: 'cascade' }),
    streamId: varchar('stream_id', { length: 40 }).notNull(),
    sampleRateHz: double('sample_rate_hz').notNull(),
    /** First sample time, µs since epoch (UTC). */
    startTimeUs: bigint('start_time_us', { mode: 'number' }).notNull(),
    sampleCount: int('sample_count', { unsigned: true }).notNull(),
    /** Samples as little-endian float64. */
    samples: longblob('samples').notNull(),
    qc: jsonColumn<unknown>('qc'),
  },
  (t) => [index('window_channels_window_idx').on(t.windowId)],
);
