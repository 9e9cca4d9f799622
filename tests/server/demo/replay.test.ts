import { createHash } from 'node:crypto';
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { and, eq, gte } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ingestTokens, stations } from '@server/db/schema/stations';
import { uploads, windows } from '@server/db/schema/uploads';
import { seedDemo } from '@server/db/seed-demo';
import { DEMO_WAVEFORMS_DIR } from '@server/demo/generate-waveforms';
import { encodeDemoMiniSeed } from '@server/demo/encode';
import { readDemoManifest } from '@server/demo/ingest-demo';
import { REPLAY_TOKEN_LABEL, ReplayError, parseReplayArgs, replayDemo, shiftWindowFile } from '@server/demo/replay';
import { synthesizeWindow } from '@server/demo/synth';
import { decodeWaveform } from '@server/formats/decode';
import { startServer, type RunningServer } from '@server/index';
import { createToken } from '@server/features/stations/station-registry';
import { createTestContext, type TestContext } from '@tests/setup/test-app';

const sha = (b: Uint8Array): string => createHash('sha256').update(b).digest('hex');

describe('shiftWindowFile', () => {
  it('moves every stream of a MiniSEED window (gap kept) to the new start with the same samples and a new hash', () => {
    // A KV06 window with its 6 s telemetry gap in one file (the demo sends such a window as two files).
    const name = 'XX.KV06.2026-03-14T18-25-00.mseed';
    const t0 = Date.UTC(2026, 2, 14, 18, 25) * 1000;
    const syn = synthesizeWindow('KV06', t0, 'gap');
    const gap = syn.gap ?? { from: 4800, to: 5400 };
    const bytes = encodeDemoMiniSeed(
      (['HHZ', 'HHN', 'HHE'] as const).flatMap((channel) => [
        { network: 'XX', station: 'KV06', location: '00', channel, sampleRateHz: 100, startTimeUs: t0, samples: syn.counts[channel].slice(0, gap.from) },
        { network: 'XX', station: 'KV06', location: '00', channel, sampleRateHz: 100, startTimeUs: t0 + gap.to * 10_000, samples: syn.counts[channel].slice(gap.to) },
      ]),
    );
    const start = Date.UTC(2026, 11, 1, 22, 0, 0) * 1000;
    const out = shiftWindowFile(bytes, name, start);
    expect(out.filename).toBe('XX.KV06.2026-12-01T22-00-00.mseed');
    expect(sha(out.bytes)).not.toBe(sha(bytes));
    const before = decodeWaveform(bytes);
    const after = decodeWaveform(out.bytes);
    expect(after.map((s) => s.id)).toEqual(before.map((s) => s.id));
    const delta = start - (before[0]?.startTimeUs ?? 0);
    after.forEach((s, i) => {
      const b = before[i];
      expect(s.startTimeUs).toBe((b?.startTimeUs ?? 0) + delta);
      expect(Array.from(s.samples)).toEqual(Array.from(b?.samples ?? []));
      expect(s.discontinuities.map((d) => [d.sampleIndex, d.durationS])).toEqual(b?.discontinuities.map((d) => [d.sampleIndex, d.durationS]));
      expect(s.discontinuities).toHaveLength(1);
    });
  });

  it('moves a CSV window and keeps it CSV', () => {
    const name = 'XX.KV05.00.HHZ.2026-03-14T15-22-00.csv';
    const bytes = readFileSync(join(DEMO_WAVEFORMS_DIR, 'csv', name));
    const out = shiftWindowFile(bytes, name, Date.UTC(2026, 11, 1, 22, 0, 5) * 1000);
    expect(out.filename).toBe('XX.KV05.00.HHZ.2026-12-01T22-00-05.csv');
    const [s] = decodeWaveform(out.bytes, { filename: out.filename });
    expect(s?.format).toBe('csv');
    expect(s?.startTimeUs).toBe(Date.UTC(2026, 11, 1, 22, 0, 5) * 1000);
    expect(Array.from(s?.samples ?? [])).toEqual(Array.from(decodeWaveform(bytes, { filename: name })[0]?.samples ?? []));
  });

  it('refuses a start that is not whole µs', () => {
    expect(() => shiftWindowFile(new Uint8Array(4), 'x.mseed', 1.5)).toThrow(/not an integer/);
  });
});

describe('parseReplayArgs', () => {
  it('reads rate, url, loops and per-station tokens; defaults to the demo admin without tokens', () => {
    const o = parseReplayArgs(['--rate', '2.5', '--url', 'http://127.0.0.1:4000/', '--loop', '3', '--token', 'KV03=ssi_a', '--token', 'XX.KV04=ssi_b'], {});
    expect(o).not.toBe('help');
    if (o === 'help') return;
    expect([o.rate, o.url, o.loops]).toEqual([2.5, 'http://127.0.0.1:4000', 3]);
    expect(Object.fromEntries(o.tokens ?? [])).toEqual({ KV03: 'ssi_a', KV04: 'ssi_b' });
    const d = parseReplayArgs([], { SEISIFT_DEMO_PASSWORD: 'another-demo-pass' });
    expect(d !== 'help' && d.credentials).toEqual({ email: 'admin@kestrel.example', password: 'another-demo-pass' });
    const e = parseReplayArgs(['--station', 'KV02'], { SEISIFT_INGEST_TOKEN: 'ssi_c' });
    expect(e !== 'help' && Object.fromEntries(e.tokens ?? [])).toEqual({ KV02: 'ssi_c' });
  });

  it('names the bad argument', () => {
    expect(() => parseReplayArgs(['--rate', 'fast'], {})).toThrow("--rate needs a number, got 'fast'");
    expect(() => parseReplayArgs(['--speed', '2'], {})).toThrow("unknown argument '--speed'");
    expect(() => parseReplayArgs(['--token', 'ssi_zzz'], {})).toThrow(/needs its station/);
    expect(() => parseReplayArgs(['--url', 'ftp://x'], {})).toThrow(/not an http\(s\) URL/);
  });
});

describe('replayDemo against a running server (POST /api/uploads with ingest tokens)', () => {
  let ctx: TestContext;
  let running: RunningServer;
  const fast = { sleep: (ms: number) => new Promise<void>((r) => setTimeout(r, Math.min(ms, 5))) };

  beforeAll(async () => {
    ctx = await createTestContext();
    await seedDemo(ctx.database.db, { demoPassword: 'kestrel-demo-pass' });
    running = await startServer(ctx, { host: '127.0.0.1', port: 0, serveClient: false });
  }, 120_000);
  afterAll(async () => {
    await running?.close();
    await ctx?.close();
  });

  it('signs in as the demo admin, makes one token per station, and stores windows that end about now', async () => {
    const t0 = Date.now();
    const report = await replayDemo({ url: running.url, rate: 50, loops: 1, limit: 4, credentials: { email: 'admin@kestrel.example', password: 'kestrel-demo-pass' }, ...fast });
    expect(report.refused).toEqual([]);
    expect([report.sent, report.created, report.itemIds.length]).toEqual([4, 4, 4]);
    const db = ctx.database.db;
    const tokens = await db.select().from(ingestTokens).where(eq(ingestTokens.label, REPLAY_TOKEN_LABEL));
    expect(tokens).toHaveLength(6);
    const recent = await db.select({ start: windows.startTime }).from(windows).where(gte(windows.startTime, new Date(t0 - 125_000)));
    expect(recent).toHaveLength(4);
    for (const r of recent) expect(Math.abs(r.start.getTime() + 120_000 - t0)).toBeLessThan(10_000);
    expect((await db.select().from(uploads)).every((u) => u.ingestTokenId !== null)).toBe(true);
  }, 60_000);

  it('with one station token sends only that station, at the pace asked for, and a second pass is not a duplicate', async () => {
    const db = ctx.database.db;
    const [kv03] = await db.select({ id: stations.id }).from(stations).where(and(eq(stations.network, 'XX'), eq(stations.code, 'KV03')));
    const { secret } = await createToken(db, kv03?.id ?? 0, 'test replay', { userId: null, label: 'test', ipAddress: null });
    // A small demo folder of two KV03 windows, so that two passes stay quick.
    const dir = mkdtempSync(join(tmpdir(), 'seisift-replay-'));
    const manifest = readDemoManifest();
    const two = manifest.files.filter((f) => f.station === 'KV03' && f.reason !== 'history').slice(0, 2);
    // And one of the station's history windows, which a replay does not send (the seed dismisses them).
    const history = manifest.files.filter((f) => f.station === 'KV03' && f.reason === 'history').slice(0, 1);
    expect(history).toHaveLength(1);
    for (const sub of ['mseed', 'csv', 'history']) mkdirSync(join(dir, sub));
    for (const f of [...history, ...two]) copyFileSync(join(DEMO_WAVEFORMS_DIR, f.file), join(dir, f.file));
    writeFileSync(join(dir, 'manifest.json'), JSON.stringify({ files: [...history, ...two] }));
    const waits: number[] = [];
    const started = Date.now();
    const report = await replayDemo({
      url: running.url,
      rate: 4,
      loops: 2,
      dir,
      tokens: new Map([['KV03', secret]]),
      sleep: async (ms) => {
        waits.push(ms);
        await new Promise<void>((r) => setTimeout(r, ms));
      },
    });
    const elapsedMs = Date.now() - started;
    rmSync(dir, { recursive: true, force: true });
    expect(report.refused).toEqual([]);
    expect([report.sent, report.created]).toEqual([4, 4]);
    // A steady pace: 4 windows per second never go out faster than one every 250 ms (slower when
    // the server takes longer than that to answer), so 4 sends take at least 750 ms.
    expect(elapsedMs).toBeGreaterThanOrEqual(750);
    for (const w of waits) expect(w).toBeLessThanOrEqual(250);
    const names = (await db.select({ f: uploads.filename }).from(uploads)).map((u) => u.f).filter((f) => f.startsWith('XX.KV03.'));
    expect(names.length).toBeGreaterThanOrEqual(4);
  }, 60_000);

  it('as an operator, makes tokens only for the stations assigned to them (KV01–KV03)', async () => {
    const report = await replayDemo({ url: running.url, rate: 50, loops: 1, limit: 30, credentials: { email: 'operator@kestrel.example', password: 'kestrel-demo-pass' }, ...fast });
    expect(report.refused).toEqual([]);
    const db = ctx.database.db;
    const rows = await db.select({ code: stations.code }).from(ingestTokens).innerJoin(stations, eq(stations.id, ingestTokens.stationId)).where(eq(ingestTokens.label, REPLAY_TOKEN_LABEL));
    // 6 from the admin's replay above, 3 from this one.
    expect(rows.map((r) => r.code).sort()).toEqual(['KV01', 'KV01', 'KV02', 'KV02', 'KV03', 'KV03', 'KV04', 'KV05', 'KV06']);
    expect(report.created).toBe(30);
  }, 60_000);

  it('stops with an error naming the station when its token is refused', async () => {
    await expect(replayDemo({ url: running.url, rate: 50, loops: 1, limit: 1, tokens: new Map([['KV01', 'ssi_not-a-token']]), ...fast })).rejects.toThrow(ReplayError);
    await expect(replayDemo({ url: running.url, rate: 50, loops: 1, limit: 1, tokens: new Map([['KV01', 'ssi_not-a-token']]), ...fast })).rejects.toThrow(/XX\.KV01 token: HTTP 401/);
  });

  it('says when the server cannot be reached', async () => {
    await expect(replayDemo({ url: 'http://127.0.0.1:9', rate: 50, loops: 1, limit: 1, tokens: new Map([['KV01', 'ssi_x']]), ...fast })).rejects.toThrow(/cannot reach http:\/\/127\.0\.0\.1:9/);
  });
});
