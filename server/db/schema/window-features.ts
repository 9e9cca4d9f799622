import { double, index, mysqlTable, varchar } from 'drizzle-orm/mysql-core';
import { refColumn, timeColumn } from './columns';
import { stations } from './stations';
import { windows } from './uploads';

/**
 * The few numbers of each analysed window that the station baseline and the station health page
 * read, copied out of `windows.analysis` at ingest so neither has to parse the whole analysis JSON
 * of hundreds of windows. One row per window, written in the ingest transaction.
 */
export const windowFeatures = mysqlTable(
  'window_features',
  {
    windowId: refColumn('window_id')
      .primaryKey()
      .references(() => windows.id, { onDelete: 'cascade' }),
    stationId: refColumn('station_id')
      .notNull()
      .references(() => stations.id, { onDelete: 'cascade' }),
    windowStart: timeColumn('window_start').notNull(),
    /** Id of the channel that led the score (NET.STA.LOC.CHA). */
    leadChannel: varchar('lead_channel', { length: 40 }).notNull(),
    /** log10(E_high / E_low) of the lead channel (null when the low band had no energy). */
    leadLog10Ratio: double('lead_log10_ratio'),
    /** STA/LTA peak of the lead channel. */
    leadStaLtaPeak: double('lead_sta_lta_peak').notNull(),
    /**
     * Noise level of the lead channel: the median PSD over 1–5 Hz, dB — rel 1 (m/s²)²/Hz when the
     * channel has a sensitivity (acceleration, comparable with Peterson's models), else rel 1
     * counts²/Hz. `noiseLevelUnits` says which. Null when the window has no bin in 1–5 Hz.
     */
    noiseLevelDb: double('noise_level_db'),
    noiseLevelUnits: varchar('noise_level_units', { length: 20 }),
    /** The automatic flag at ingest. */
    flag: varchar('flag', { length: 20 }).notNull(),
    createdAt: timeColumn('created_at').notNull(),
  },
  (t) => [
    index('window_features_station_start_idx').on(t.stationId, t.windowStart),
    // The station baseline's engine-flagged noise set, newest first (server/features/stations/station-baseline.ts).
    index('window_features_station_flag_start_idx').on(t.stationId, t.flag, t.windowStart),
  ],
);
