import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { asc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { queueItems } from '@server/db/schema/queue-items';
import { waveformTemplates, windowMatches } from '@server/db/schema/templates';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { createAnalysisPool, type AnalysisPool } from '@server/jobs/analysis-pool';
import { createLogger } from '@server/logger';
import { ingestFile, type IngestDeps } from '@server/features/ingest/ingest-upload';
import { labelItem } from '@server/features/queue/queue-transitions';
import { groupFamilies, loadFamilies } from '@server/features/similarity/families';
import { itemMatches } from '@server/features/similarity/item-matches';
import { applyResemblance, labelWords } from '@server/features/similarity/resemblance';
import { decodeTemplateSamples, encodeTemplateSamples } from '@server/features/similarity/template-store';
import { createStation, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { createPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const system: Actor = { userId: null, label: 'test', ipAddress: null };

describe('resemblance rule (pure)', () => {
  const t = { resemblesAt: 0.7, nearIdenticalAt: 0.9 };
  const at = (iso: string) => new Date(iso);
  const engine = { score: 8, flag: 'likely event' as const, reasons: ['STA/LTA peak 9.1 at 40.2 s'] };

  it('names the best match’s label, its count, value and time first; other labels follow', () => {
    const out = applyResemblance(engine, [
      { value: 0.93, labelType: 'quarry blast', windowStart: at('2026-03-11T11:58:10Z') },
      ...Array.from({ length: 13 }, () => ({ value: 0.8, labelType: 'quarry blast', windowStart: at('2026-03-10T12:00:00Z') })),
      { value: 0.74, labelType: 'earthquake', windowStart: at('2026-03-09T03:00:00Z') },
      { value: 0.69, labelType: 'earthquake', windowStart: at('2026-03-09T03:00:00Z') },
    ], 'KV02', t);
    expect(out.reasons[0]).toMatch(/^resembles 14 quarry blasts at KV02, best match 0\.93 \(2026-03-11 11:58\); also 1 earthquake, best 0\.74: a near-identical repeat of a known source/);
    expect(out.flag).toBe('needs eyes');
    expect(out.score).toBe(2);
    expect(out.reasons[1]).toBe(engine.reasons[0]);
  });

  it('a repeating earthquake is still an event: the reason only', () => {
    const out = applyResemblance(engine, [{ value: 0.97, labelType: 'earthquake', windowStart: at('2026-03-12T01:02:03Z') }], 'KV03', t);
    expect(out.flag).toBe('likely event');
    expect(out.score).toBe(8);
    expect(out.reasons[0]).toBe('resembles 1 earthquake at KV03, best match 0.97 (2026-03-12 01:02)');
  });

  it('a near-identical repeat of dismissed noise becomes likely noise; below the threshold nothing changes', () => {
    expect(applyResemblance(engine, [{ value: 0.95, labelType: 'noise', windowStart: at('2026-03-12T01:02:03Z') }], 'KV04', t).flag).toBe('likely noise');
    const none = applyResemblance(engine, [{ value: 0.69, labelType: 'noise', windowStart: at('2026-03-12T01:02:03Z') }], 'KV04', t);
    expect(none).toEqual({ ...engine, reasons: engine.reasons, resembles: null });
  });

  it('words: plurals and the unlabelled group', () => {
    expect(labelWords('quarry blast', 2)).toBe('quarry blasts');
    expect(labelWords('mining explosion', 3)).toBe('mining explosions');
    expect(labelWords(null, 2)).toBe('earlier windows not yet labelled');
    expect(labelWords('noise', 1)).toBe('window dismissed as noise');
  });

  it('template blob: float32 little-endian round trip, and a wrong size is refused', () => {
    const s = [Float32Array.from([1, -2.5, 0.125]), Float32Array.from([3, 4, 5])];
    const blob = encodeTemplateSamples(s);
    expect(blob.length).toBe(24);
    expect([...blob.subarray(0, 4)]).toEqual([0, 0, 0x80, 0x3f]); // 1.0f = 0x3F800000 (IEEE 754 binary32)
    expect(decodeTemplateSamples(blob, 2, 3)).toEqual(s);
    expect(() => decodeTemplateSamples(blob, 2, 4)).toThrow(/24 bytes for 2 × 4/);
  });
});

/**
 * A real local earthquake recorded at BG.ACR (tests/fixtures/real-windows, see manifest.csv), sent
 * three times with different start times (the same waveform repeating): each later copy must match
 * the earlier ones at C = 1, at the same offset, and the labels must reach the reasons.
 */
describe('templates and matches on ingest (real MariaDB, real window)', () => {
  let ctx: TestContext;
  let pool: AnalysisPool;
  let deps: IngestDeps;
  let stationId = 0;
  const file = join(import.meta.dirname, '../../../fixtures/real-windows/windows/XX.ACR.BG_ACR_2012082505145960.mseed');
  const original = decodeWaveform(new Uint8Array(readFileSync(file)), { filename: 'acr.mseed' });
  const copyAt = (startUs: number): Uint8Array => {
    const parts = original.map((s) => encodeMiniSeed3({ network: 'XX', station: 'ACR', location: s.location, channel: s.channel, sampleRateHz: s.sampleRateHz, startTimeUs: startUs + (s.startTimeUs - (original[0]?.startTimeUs ?? 0)), samples: Int32Array.from(s.samples, (v) => Math.round(v)) }, { encoding: 'steim2' }));
    const out = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
    let o = 0;
    for (const p of parts) {
      out.set(p, o);
      o += p.length;
    }
    return out;
  };

  beforeAll(async () => {
    ctx = await createTestContext();
    pool = createAnalysisPool({ threads: 1 });
    deps = { db: ctx.database.db, pool, notify: () => ctx.hub.notify(), logger: createLogger('silent'), similarity: { templatesPerStation: 2, resemblesAt: 0.7, nearIdenticalAt: 0.9, topK: 20, storedK: 10, storeMin: 0.5 } };
    stationId = await createStation(ctx.database.db, { network: 'XX', code: 'ACR', name: 'real window station', latitude: 46.3, longitude: 11.0, elevationM: 500 }, system);
    for (const s of original) await upsertChannel(ctx.database.db, stationId, { location: s.location, code: s.channel, sampleRateHz: s.sampleRateHz }, system);
  });
  afterAll(async () => {
    await pool.close();
    await ctx.close();
  });

  it('copies match at C = 1 and the same offset; a labelled blast holds the repeat back; the cap prunes the oldest unlabelled', async () => {
    const person = await createPerson(ctx.database.db, { roles: ['analyst', 'operator'], stationIds: [stationId] });
    const user = { id: person.id, email: person.email, displayName: person.displayName, roles: ['analyst' as const, 'operator' as const], stationIds: [stationId] };
    const caller = { kind: 'user' as const, user, ipAddress: '127.0.0.1' };
    const t0 = Date.UTC(2026, 2, 11, 11, 0) * 1000;
    const a = await ingestFile(deps, { filename: 'a.mseed', bytes: copyAt(t0) }, caller);
    expect(a.status).toBe('created');
    const itemA = a.itemIds?.[0] ?? -1;
    const templates = await ctx.database.db.select().from(waveformTemplates);
    expect(templates).toHaveLength(1);
    expect(templates[0]?.channels).toHaveLength(3);
    expect(templates[0]?.sampleCount).toBe(1000);
    expect(templates[0]?.samples.length).toBe(3 * 1000 * 4);

    // The first window is labelled a quarry blast (the label the later copies are told about).
    const [rowA] = await ctx.database.db.select({ version: queueItems.version }).from(queueItems).where(eq(queueItems.id, itemA));
    const { claimItem } = await import('@server/features/queue/queue-transitions');
    const claimed = await claimItem({ db: ctx.database.db }, person, itemA, rowA?.version ?? 1);
    await labelItem({ db: ctx.database.db }, person, itemA, claimed.version, { eventType: 'quarry blast', certainty: 'known', distanceClass: 'local', picks: [], note: '' });

    const b = await ingestFile(deps, { filename: 'b.mseed', bytes: copyAt(t0 + 3600e6) }, caller);
    const itemB = b.itemIds?.[0] ?? -1;
    const [mb] = await ctx.database.db.select().from(windowMatches).where(eq(windowMatches.stationId, stationId));
    expect(mb?.value).toBeCloseTo(1, 6);
    expect(mb?.perChannel.every((v) => v !== null && v > 0.999999)).toBe(true);
    // Same offset within the window: the match starts 3600 s after the template's own start.
    expect(mb?.matchStartUs).toBe((templates[0]?.startTimeUs ?? 0) + 3600e6);
    const [qb] = await ctx.database.db.select().from(queueItems).where(eq(queueItems.id, itemB));
    expect(qb?.reasons[0]).toMatch(/^resembles 1 quarry blast at ACR, best match 1\.00 \(2026-03-11 11:0\d\): a near-identical repeat of a known source, not raised as a new event/);
    expect(qb?.flag).not.toBe('likely event');

    const c = await ingestFile(deps, { filename: 'c.mseed', bytes: copyAt(t0 + 7200e6) }, caller);
    const [qc] = await ctx.database.db.select().from(queueItems).where(eq(queueItems.id, c.itemIds?.[0] ?? -1));
    expect(qc?.reasons[0]).toMatch(/^resembles 1 quarry blast at ACR, best match 1\.00 .*; also 1 earlier window not yet labelled, best 1\.00/);
    // Cap 2: three templates → the oldest unlabelled (b's) is pruned; the labelled one (a's) stays.
    const left = await ctx.database.db.select({ windowStart: waveformTemplates.windowStart }).from(waveformTemplates).orderBy(asc(waveformTemplates.windowStart));
    expect(left).toHaveLength(2);
    expect(left[0]?.windowStart.getTime()).toBe(Math.floor(t0 / 1000));
    expect(left[1]?.windowStart.getTime()).toBe(Math.floor((t0 + 7200e6) / 1000));
    // c's match to b's window survives the pruning of b's template.
    const cm = await ctx.database.db.select().from(windowMatches).where(eq(windowMatches.windowStart, new Date(Math.floor((t0 + 7200e6) / 1000))));
    expect(cm).toHaveLength(2);
    expect(cm.filter((m) => m.templateId === null)).toHaveLength(1);

    // The review screen's matches: the suggested label comes from the labelled blast; the overlay
    // of the window and the template (peak-scaled, same waveform) coincide.
    const itemC = c.itemIds?.[0] ?? -1;
    const seen = await itemMatches(ctx.database.db, itemC, 'all', 0.7);
    expect(seen.matches).toHaveLength(2);
    expect(seen.suggestion).toEqual({ kind: 'event', eventType: 'quarry blast', fromItemId: itemA, value: expect.closeTo(1, 6) });
    const withOverlay = seen.matches.find((m) => m.overlay !== null);
    // The same offset into the window as the template has into its own (1 s before the detection onset).
    expect(withOverlay?.offsetS).toBeCloseTo(((templates[0]?.startTimeUs ?? 0) - t0) / 1e6, 5);
    withOverlay?.overlay?.window.forEach((v, i) => expect(Math.abs(v - (withOverlay.overlay?.template[i] ?? NaN))).toBeLessThan(1e-5));
    await expect(itemMatches(ctx.database.db, itemC, [stationId + 1000], 0.7)).rejects.toThrow(/not found/i);

    // The supervisor's families: the three copies are one family, one labelled and two not yet.
    const fams = await loadFamilies(ctx.database.db, { minValue: 0.7, minSize: 2 }, 'all');
    expect(fams).toHaveLength(1);
    expect(fams[0]?.size).toBe(3);
    expect(fams[0]?.labelMix).toEqual({ 'quarry blast': 1, unlabelled: 2 });
    expect(fams[0]?.hours[11]).toBe(1);
    expect(fams[0]?.hours[12]).toBe(1);
    expect(fams[0]?.hours[13]).toBe(1);
    expect(fams[0]?.id).toBe(itemA);
  });
});

describe('families (pure)', () => {
  const node = (windowId: number, hour: number, labelType: string | null) => ({ windowId, itemId: windowId + 100, stationId: 1, station: 'XX.KV02', windowStart: new Date(Date.UTC(2026, 2, 10 + windowId, hour)), labelType, flag: 'needs eyes' });
  it('links chains into one family (single linkage), keeps separate groups apart and drops singletons', () => {
    const fams = groupFamilies(
      [node(1, 11, 'quarry blast'), node(2, 12, 'quarry blast'), node(3, 13, null), node(4, 3, 'earthquake'), node(5, 4, 'earthquake'), node(6, 9, null)],
      [
        { a: 2, b: 1, value: 0.91 },
        { a: 3, b: 2, value: 0.75 },
        { a: 5, b: 4, value: 0.8 },
      ],
    );
    expect(fams.map((f) => f.size)).toEqual([3, 2]);
    expect(fams[0]?.labelMix).toEqual({ 'quarry blast': 2, unlabelled: 1 });
    expect(fams[0]?.bestLink).toBe(0.91);
    expect(fams[0]?.weakestLink).toBe(0.75);
    expect(fams[0]?.hours.slice(11, 14)).toEqual([1, 1, 1]);
    expect(fams[1]?.labelMix).toEqual({ earthquake: 2 });
  });
});
