import { and, desc, eq, gte, inArray } from 'drizzle-orm';
import { z } from 'zod';
import type { BaselineView } from '@shared/schemas/station';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { windowChannels, windows } from '@server/db/schema/uploads';
import { windowFeatures } from '@server/db/schema/window-features';
import { nhnmDb, nlnmDb } from '@server/dsp/noise-models';
import { stationBaseline } from './station-baseline';
import { channelResultSchema } from '@shared/schemas/analysis';

/**
 * What the station page's health panel shows: the latest PSD per channel against Peterson's
 * NLNM/NHNM (as the engine computed them), the noise level per window over the last days, the QC
 * findings of recent windows, the baseline the score uses, and the recent queue items.
 */

/** The fields of the stored analysis (shared/schemas/analysis.ts) the page reads. */
const healthAnalysisSchema = z.object({
  channels: z.array(channelResultSchema.pick({ id: true, sampleRate: true, units: true, psd: true, noiseModels: true })),
});

/** The latest PSD of one channel. */
export interface ChannelPsd {
  streamId: string;
  windowId: number;
  windowStart: string;
  /** Hz (the 0 Hz bin is left out: it has no place on a log axis). */
  freqs: number[];
  /** dB: rel 1 (m/s²)²/Hz (acceleration) when `physical`, else rel 1 counts²/Hz. */
  db: Array<number | null>;
  /** Whether the channel had a sensitivity (only then do the noise models apply). */
  physical: boolean;
  units: string;
  /** Peterson (1993) NLNM and NHNM at `freqs`, dB rel 1 (m/s²)²/Hz (null outside 0.1–100 000 s). */
  nlnm: Array<number | null>;
  nhnm: Array<number | null>;
}

/** The station's health. */
export interface StationHealth {
  psd: ChannelPsd[];
  /** Peterson (1993) NLNM/NHNM on a log frequency grid, dB rel 1 (m/s²)²/Hz (null outside 0.1–100 000 s). */
  noiseModels: { freqs: number[]; nlnm: Array<number | null>; nhnm: Array<number | null> };
  /** Median PSD over 1–5 Hz of each window's lead channel, oldest first. */
  trend: Array<{ windowStart: string; db: number | null; units: string | null; flag: string; channel: string }>;
  /** QC findings of recent windows (warnings and errors only), newest first. */
  qc: Array<{ windowId: number; windowStart: string; streamId: string; code: string; severity: string; message: string }>;
  baseline: BaselineView;
  items: Array<{ id: number; state: string; flag: string; score: number; windowStart: string }>;
  /** Days covered by `trend` and `qc`, ending at the latest window. */
  days: number;
}

const qcListSchema = z.array(z.object({ code: z.string(), severity: z.string(), message: z.string() }));

/** The noise models on `points` log-spaced frequencies from `fmin` to `fmax` Hz. */
export function noiseModelCurves(fmin = 0.01, fmax = 10, points = 120): StationHealth['noiseModels'] {
  const freqs: number[] = [];
  for (let i = 0; i < points; i++) freqs.push(fmin * Math.pow(fmax / fmin, i / (points - 1)));
  return { freqs, nlnm: freqs.map((f) => nlnmDb(1 / f)), nhnm: freqs.map((f) => nhnmDb(1 / f)) };
}

/**
 * The health of station `stationId` over the `days` days up to its latest window (at most `limit`
 * windows), so a station that stopped sending still shows its last stretch.
 */
export async function stationHealth(db: Database, stationId: number, opts: { days?: number; limit?: number; minBaselineWindows: number }): Promise<StationHealth> {
  const days = opts.days ?? 30;
  const limit = opts.limit ?? 2000;

  // Latest PSD per channel: walk the newest windows until every stream has one.
  const recent = await db
    .select({ id: windows.id, startTime: windows.startTime, analysis: windows.analysis })
    .from(windows)
    .where(eq(windows.stationId, stationId))
    .orderBy(desc(windows.startTime), desc(windows.id))
    .limit(20);
  const psd: ChannelPsd[] = [];
  const seen = new Set<string>();
  for (const w of recent) {
    const parsed = healthAnalysisSchema.safeParse(w.analysis);
    if (!parsed.success) continue;
    for (const ch of parsed.data.channels) {
      if (seen.has(ch.id)) continue;
      seen.add(ch.id);
      const acc = ch.noiseModels?.accelerationDb ?? null;
      const freqs: number[] = [];
      const dbs: Array<number | null> = [];
      ch.psd.freqs.forEach((f, i) => {
        if (!(f > 0)) return;
        freqs.push(f);
        if (acc) dbs.push(acc[i] ?? null);
        else {
          const v = ch.psd.values[i];
          dbs.push(typeof v === 'number' && v > 0 ? 10 * Math.log10(v) : null);
        }
      });
      psd.push({
        streamId: ch.id,
        windowId: w.id,
        windowStart: w.startTime.toISOString(),
        freqs,
        db: dbs,
        physical: acc !== null,
        units: acc ? 'dB rel 1 (m/s²)²/Hz' : 'dB rel 1 counts²/Hz',
        nlnm: freqs.map((f) => nlnmDb(1 / f)),
        nhnm: freqs.map((f) => nhnmDb(1 / f)),
      });
    }
  }
  // The vertical component first (it leads the score), then the others by id.
  const vertical = (id: string) => (/Z$/i.test(id) ? 0 : 1);
  const latest = recent[0]?.startTime ?? new Date();
  const since = new Date(latest.getTime() - days * 86_400_000);
  psd.sort((a, b) => vertical(a.streamId) - vertical(b.streamId) || a.streamId.localeCompare(b.streamId));

  const trendRows = await db
    .select()
    .from(windowFeatures)
    .where(and(eq(windowFeatures.stationId, stationId), gte(windowFeatures.windowStart, since)))
    .orderBy(desc(windowFeatures.windowStart))
    .limit(limit);
  const trend = trendRows.reverse().map((r) => ({ windowStart: r.windowStart.toISOString(), db: r.noiseLevelDb, units: r.noiseLevelUnits, flag: r.flag, channel: r.leadChannel }));

  const qcWindows = await db
    .select({ id: windows.id, startTime: windows.startTime })
    .from(windows)
    .where(and(eq(windows.stationId, stationId), gte(windows.startTime, since)))
    .orderBy(desc(windows.startTime))
    .limit(200);
  const qc: StationHealth['qc'] = [];
  if (qcWindows.length > 0) {
    const rows = await db
      .select({ windowId: windowChannels.windowId, streamId: windowChannels.streamId, qc: windowChannels.qc })
      .from(windowChannels)
      .where(inArray(windowChannels.windowId, qcWindows.map((w) => w.id)));
    const startOf = new Map(qcWindows.map((w) => [w.id, w.startTime.toISOString()]));
    for (const r of rows) {
      const findings = qcListSchema.safeParse(r.qc);
      if (!findings.success) continue;
      for (const f of findings.data) {
        if (f.severity === 'info') continue;
        qc.push({ windowId: r.windowId, windowStart: startOf.get(r.windowId) ?? '', streamId: r.streamId, code: f.code, severity: f.severity, message: f.message });
      }
    }
    qc.sort((a, b) => b.windowStart.localeCompare(a.windowStart) || a.streamId.localeCompare(b.streamId));
  }

  const { view: baseline } = await stationBaseline(db, stationId, opts.minBaselineWindows);
  const itemRows = await db
    .select({ id: queueItems.id, state: queueItems.state, flag: queueItems.flag, score: queueItems.score, windowStart: queueItems.windowStart })
    .from(queueItems)
    .where(eq(queueItems.stationId, stationId))
    .orderBy(desc(queueItems.windowStart), desc(queueItems.id))
    .limit(50);
  const items = itemRows.map((r) => ({ ...r, windowStart: r.windowStart.toISOString() }));
  return { psd, noiseModels: noiseModelCurves(), trend, qc, baseline, items, days };
}
