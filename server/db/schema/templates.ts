import { bigint, double, index, int, mysqlTable, primaryKey, smallint, varchar } from 'drizzle-orm/mysql-core';
import { idColumn, jsonColumn, longblob, refColumn, timeColumn } from './columns';
import { stations } from './stations';
import { windows } from './uploads';

/**
 * Waveform templates (issue 19): per analysed window with a detection, the band-passed stretch
 * around its onset (server/dsp/templates.ts `cutTemplate`) that later windows of the station are
 * matched against. The label and the event are the window's queue item's (label_type, candidate
 * event), read by joining on window_id, so a relabel never leaves a stale copy here. Capped per
 * station (SEISIFT_TEMPLATES_PER_STATION); pruning drops the oldest unlabelled first.
 */
export const waveformTemplates = mysqlTable(
  'waveform_templates',
  {
    id: idColumn(),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id, { onDelete: 'cascade' }),
    windowId: refColumn('window_id')
      .notNull()
      .unique()
      .references(() => windows.id, { onDelete: 'cascade' }),
    /** Copied from the window for pruning and display order. */
    windowStart: timeColumn('window_start').notNull(),
    sampleRateHz: double('sample_rate_hz').notNull(),
    /** Stream ids of the components, in the order of `samples`. */
    channels: jsonColumn<string[]>('channels').notNull(),
    /** Samples per component. */
    sampleCount: int('sample_count', { unsigned: true }).notNull(),
    /** First sample, µs since the epoch (UTC). */
    startTimeUs: bigint('start_time_us', { mode: 'number' }).notNull(),
    /** The detection onset the template was cut around, µs since the epoch. */
    onsetUs: bigint('onset_us', { mode: 'number' }).notNull(),
    /** The band the samples were filtered to, Hz. */
    bandFminHz: double('band_fmin_hz').notNull(),
    bandFmaxHz: double('band_fmax_hz').notNull(),
    /** Float32 little-endian, component after component, unit joint energy (server/db/template-codec.ts). */
    samples: longblob('samples').notNull(),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [index('waveform_templates_station_start_idx').on(t.stationId, t.windowStart)],
);

/**
 * The best matches of a window against its station's templates at ingest (value ≥ the stored
 * minimum, best first). `matchedWindowId` is the template's window, kept when the template itself is
 * pruned (template_id becomes null), so families stay whole.
 */
export const windowMatches = mysqlTable(
  'window_matches',
  {
    windowId: refColumn('window_id')
      .notNull()
      .references(() => windows.id, { onDelete: 'cascade' }),
    matchedWindowId: refColumn('matched_window_id')
      .notNull()
      .references(() => windows.id, { onDelete: 'cascade' }),
    templateId: refColumn('template_id').references(() => waveformTemplates.id, { onDelete: 'set null' }),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id, { onDelete: 'cascade' }),
    /** 1 = best. */
    rank: smallint('rank', { unsigned: true }).notNull(),
    /** Normalised multichannel cross-correlation, −1 … 1. */
    value: double('value').notNull(),
    /** Where the template's first sample lies in this window, µs since the epoch. */
    matchStartUs: bigint('match_start_us', { mode: 'number' }).notNull(),
    /** C of each component alone at that lag, in the template's component order. */
    perChannel: jsonColumn<Array<number | null>>('per_channel').notNull(),
    windowStart: timeColumn('window_start').notNull(),
    /** Engine's band label for the record (e.g. `2–10 Hz`). */
    band: varchar('band', { length: 40 }).notNull(),
  },
  (t) => [
    primaryKey({ columns: [t.windowId, t.matchedWindowId] }),
    index('window_matches_station_value_idx').on(t.stationId, t.value),
    index('window_matches_matched_idx').on(t.matchedWindowId),
  ],
);
