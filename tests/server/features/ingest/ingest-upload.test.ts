import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { queueItems } from '@server/db/schema/queue-items';
import { uploads } from '@server/db/schema/uploads';
import type { ChannelResult } from '@server/dsp/pipeline';
import { pazMagnitude } from '@server/dsp/response';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { createAnalysisPool, type AnalysisPool } from '@server/jobs/analysis-pool';
import { createLogger } from '@server/logger';
import { analysisOptionsFor, bytesToSamples, ingestFile, noiseLevel, overallStatus, samplesToBytes, type IngestDeps } from '@server/features/ingest/ingest-upload';
import { stationHealth } from '@server/features/stations/station-health';
import { createStation, stationsByKeys, upsertChannel, type Actor } from '@server/features/stations/station-registry';
import { responseFromStationXml } from '@server/features/stations/stationxml-import';
import { createPerson } from '@tests/setup/queue-fixtures';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const system: Actor = { userId: null, label: 'test', ipAddress: null };

describe('ingest helpers (pure)', () => {
  it('samples round-trip through little-endian float64 bytes; byte 0 is the low byte (IEEE 754 binary64, LE)', () => {
    const x = Float64Array.from([0, 1, -2.5, 1e-300, Number.MAX_VALUE, -0]);
    const b = samplesToBytes(x);
    expect(b.length).toBe(48);
    // 1.0 = 0x3FF0000000000000: little-endian puts 0xF0 0x3F in the last two bytes of the value.
    expect([...b.subarray(8, 16)]).toEqual([0, 0, 0, 0, 0, 0, 0xf0, 0x3f]);
    expect(Array.from(bytesToSamples(b))).toEqual(Array.from(x));
    expect(() => bytesToSamples(new Uint8Array(7))).toThrow(/not a whole number of float64/);
  });

  it('overall status: 201 when any file was created, 200 for only duplicates, else the most telling refusal', () => {
    const o = (status: 'created' | 'duplicate' | 'rejected', httpStatus: number) => ({ filename: 'f', status, httpStatus });
    expect(overallStatus([o('rejected', 422), o('created', 201)])).toBe(201);
    expect(overallStatus([o('duplicate', 200), o('rejected', 422)])).toBe(200);
    expect(overallStatus([o('rejected', 422), o('rejected', 403)])).toBe(403);
    expect(overallStatus([o('rejected', 500), o('rejected', 422)])).toBe(422);
    expect(overallStatus([o('rejected', 500)])).toBe(500);
  });

  it('noise level: the median over 1–5 Hz, of acceleration dB with a sensitivity, else of 10·log10(counts PSD)', () => {
    const ch = (noiseModels: ChannelResult['noiseModels']) =>
      ({ psd: { freqs: [0.5, 1, 2, 3, 5, 6], values: [1, 10, 100, 1000, 1e4, 1e5], units: 'counts^2/Hz', nperseg: 1024, segments: 1 }, noiseModels }) as unknown as ChannelResult;
    // Hand-worked: bins 1, 2, 3, 5 Hz → 10, 20, 30, 40 dB → median (20 + 30)/2 = 25.
    expect(noiseLevel(ch(null))).toEqual({ db: 25, units: 'dB counts²/Hz' });
    const acc = { accelerationDb: [-100, -150, -140, null, -130, -90], nlnmDb: [], nhnmDb: [], medianPosition: null, belowLow: 0, aboveHigh: 0 };
    // Bins 1, 2, 5 Hz with a value: −150, −140, −130 → median −140 (the null bin is skipped).
    expect(noiseLevel(ch(acc))).toEqual({ db: -140, units: 'dB (m/s²)²/Hz' });
  });

  it('LAPLACE (HERTZ) responses become rad/s: roots × 2π, A0 × (2π)^(poles − zeros), so |A0·H| is unchanged', () => {
    // Hand-worked: one pole at −1 Hz, no zero, A0 = 1 in Hz: H(f) = 1/(j f + 1); |H(1 Hz)| = 1/√2.
    const r = responseFromStationXml(
      { stage: 1, transferFunctionType: 'LAPLACE (HERTZ)', normalizationFactor: 1, normalizationFrequencyHz: 1, zeros: [], poles: [{ re: -1, im: 0 }], inputUnits: 'm/s', outputUnits: 'V' },
      { value: 1000, frequencyHz: 1 },
    );
    expect(r?.poles).toEqual([{ re: -2 * Math.PI, im: 0 }]);
    expect(r?.normalizationFactor).toBeCloseTo(2 * Math.PI, 12);
    expect(pazMagnitude(r ?? { zeros: [], poles: [], normalizationFactor: 0 }, 1)).toBeCloseTo(1 / Math.SQRT2, 12);
    expect(responseFromStationXml({ stage: 1, transferFunctionType: 'DIGITAL (Z-TRANSFORM)', normalizationFactor: 1, normalizationFrequencyHz: 1, zeros: [], poles: [], inputUnits: 'V', outputUnits: 'count' }, { value: 1, frequencyHz: 1 })).toBeNull();
  });
});

describe('ingest service (real MariaDB)', () => {
  let ctx: TestContext;
  let pool: AnalysisPool;
  let deps: IngestDeps;
  let kv01 = 0;

  beforeAll(async () => {
    ctx = await createTestContext();
    pool = createAnalysisPool({ threads: 1 });
    deps = { db: ctx.database.db, pool, notify: () => ctx.hub.notify(), logger: createLogger('silent') };
    kv01 = await createStation(ctx.database.db, { network: 'XX', code: 'KV01', name: 'Kestrel Valley north ridge', latitude: 46.3, longitude: 11.04, elevationM: 1240 }, system);
    await upsertChannel(ctx.database.db, kv01, { location: '00', code: 'HHZ', sampleRateHz: 100, sensitivity: 1.5e9, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s' }, system);
    await upsertChannel(ctx.database.db, kv01, { location: '00', code: 'HNZ', sampleRateHz: 100, sensitivity: 4e5, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'M/S**2' }, system);
  });
  afterAll(async () => {
    await pool.close();
    await ctx.close();
  });

  it('uses velocity sensitivities only (an accelerometer channel stays in counts)', async () => {
    const st = (await stationsByKeys(ctx.database.db, ['XX.KV01'])).get('XX.KV01');
    if (!st) throw new Error('no station');
    const s = (channel: string) => ({ id: `XX.KV01.00.${channel}`, network: 'XX', station: 'KV01', location: '00', channel, sampleRateHz: 100, startTimeUs: 0, samples: new Float64Array(10), discontinuities: [], encoding: 'int32', format: 'mseed3' as const });
    const opts = analysisOptionsFor(st, [s('HHZ'), s('HNZ')]);
    expect(opts.sensitivity).toEqual({ 'XX.KV01.00.HHZ': 1.5e9 });
    expect(opts.expectedSampleRateHz).toEqual({ 'XX.KV01.00.HHZ': 100, 'XX.KV01.00.HNZ': 100 });
  });

  it('the same file sent twice at once: one upload, one item; the other answer is the duplicate', async () => {
    const person = await createPerson(ctx.database.db, { roles: ['operator'], stationIds: [kv01] });
    const user = { id: person.id, email: person.email, displayName: person.displayName, roles: ['operator' as const], stationIds: [kv01] };
    const bytes = encodeMiniSeed3(
      { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 9, 0) * 1000, samples: Int32Array.from({ length: 6000 }, (_, i) => Math.round(300 * Math.sin(i / 5))) },
      { encoding: 'steim2' },
    );
    const caller = { kind: 'user' as const, user, ipAddress: '127.0.0.1' };
    const [a, b] = await Promise.all([ingestFile(deps, { filename: 'a.mseed', bytes }, caller), ingestFile(deps, { filename: 'b.mseed', bytes }, caller)]);
    expect([a.status, b.status].sort()).toEqual(['created', 'duplicate']);
    expect(a.itemIds).toEqual(b.itemIds);
    expect((await ctx.database.db.select({ n: count() }).from(uploads))[0]?.n).toBe(1);
    const [item] = await ctx.database.db.select().from(queueItems).where(eq(queueItems.id, a.itemIds?.[0] ?? -1));
    expect(item?.state).toBe('new');
  });

  it('station health: latest PSD per channel in acceleration dB with Peterson’s models at its frequencies', async () => {
    const h = await stationHealth(ctx.database.db, kv01, { minBaselineWindows: 20 });
    const z = h.psd[0];
    expect(z?.streamId).toBe('XX.KV01.00.HHZ');
    expect(z?.physical).toBe(true);
    // Bin 10 of a 1024-point Welch PSD at 100 Hz: f = 10 · 100/1024 Hz, T = 1.024 s.
    const k = z?.freqs.findIndex((f) => Math.abs(f - 1000 / 1024) < 1e-9) ?? -1;
    expect(k).toBeGreaterThanOrEqual(0);
    // Peterson (1993) tables, from memory: NLNM on 0.80–1.24 s is −166.40 + 28.90·log10 T; NHNM on
    // 0.80–3.80 s is −116.85 + 32.51·log10 T.
    expect(z?.nlnm[k]).toBeCloseTo(-166.4 + 28.9 * Math.log10(1.024), 6);
    expect(z?.nhnm[k]).toBeCloseTo(-116.85 + 32.51 * Math.log10(1.024), 6);
    expect(h.trend).toHaveLength(1);
    expect(h.trend[0]?.units).toBe('dB (m/s²)²/Hz');
    expect(h.items).toHaveLength(1);
  });
});
