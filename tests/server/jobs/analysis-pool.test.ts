import { afterAll, describe, expect, it } from 'vitest';
import { createAnalysisPool } from '@server/jobs/analysis-pool';
import { analyzeWindow } from '@server/dsp/pipeline';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { makeSignal, stream } from '@tests/server/dsp/fixture-signal';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { defaultWindowLimits } from '@server/formats/window-limits';
import { computeTraces, tracesForDisplay, type TracesInput } from '@server/features/queue/queue-traces';
import { encodeSamples } from '@server/db/samples-codec';
import { matchingTraces } from '@server/dsp/templates';
import type { BankTemplate } from '@server/dsp/template-bank';
import { matchWindow } from '@server/features/similarity/window-matching';

const pool = createAnalysisPool({ threads: 2 });
afterAll(async () => {
  await pool.close();
});

const window = (seed: number) =>
  ['XX.KV01.00.HHZ', 'XX.KV01.00.HHN', 'XX.KV01.00.HHE'].map((id, i) =>
    stream(id, makeSignal({ n: 12000, fs: 100, sines: [[0.5, 0.3, 0]], bursts: [[60, 5, 20, 5]], noise: 1, seed: seed + i }), 100),
  );

describe('analysis pool (piscina worker threads)', () => {
  it('gives exactly the result of analyzeWindow in this thread', async () => {
    const direct = analyzeWindow(window(1), defaultProcessingProfile);
    const viaPool = await pool.run(window(1), defaultProcessingProfile);
    expect(viaPool).toEqual(direct);
    expect(pool.threads).toBe(2);
  });

  it('transfers the sample buffers (the caller’s arrays are detached)', async () => {
    const streams = window(2);
    const p = pool.run(streams, defaultProcessingProfile);
    expect(streams[0]?.samples.length).toBe(0);
    expect((await p).channels).toHaveLength(3);
  });

  it('runs several windows concurrently', async () => {
    const results = await Promise.all([3, 4, 5, 6].map((s) => pool.run(window(s), defaultProcessingProfile)));
    expect(results.map((r) => r.channels.length)).toEqual([3, 3, 3, 3]);
  });

  it('rejects with the analysis error message', async () => {
    // A 1 sps channel is a long-period channel: refused with the reason (20 sps now gets a fitted default band).
    const slow = [stream('XX.KV05.00.LHZ', makeSignal({ n: 600, fs: 1, noise: 1, seed: 1 }), 1)];
    await expect(pool.run(slow, defaultProcessingProfile)).rejects.toThrow(/long-period channel \(1 sps or slower\)/);
  });

  it('decodes an upload in a worker exactly as decodeWaveform does here, and refuses an over-limit window with 413 naming the setting', async () => {
    const samples = Int32Array.from({ length: 6000 }, (_, i) => Math.round(300 * Math.sin(i / 9)));
    const bytes = encodeMiniSeed3({ network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14, 9) * 1000, samples }, { encoding: 'int32' });
    const here = decodeWaveform(bytes, { filename: 'kv01.mseed' });
    const there = await pool.decode(bytes, { filename: 'kv01.mseed' }, defaultWindowLimits);
    expect(there).toEqual({ ok: true, streams: here });
    // The caller's bytes were copied, not taken.
    expect(bytes.byteLength).toBeGreaterThan(0);
    const csv = new TextEncoder().encode(['# stream=XX.KV01.00.HHZ', 'time,counts', '2026-03-14T09:00:00Z,1', '2026-03-14T09:00:00.01Z,2', '2026-03-14T09:00:00.02Z,3'].join('\n'));
    expect(await pool.decode(csv, { filename: 'w.csv' }, defaultWindowLimits)).toEqual({ ok: true, streams: decodeWaveform(csv, { filename: 'w.csv' }) });
    const small = await pool.decode(bytes, { filename: 'kv01.mseed' }, { maxSamples: 5000, maxDurationS: 3600 });
    expect(small).toMatchObject({ ok: false, status: 413, code: 'too_large' });
    if (!small.ok) expect(small.message).toBe('kv01.mseed: stream XX.KV01.00.HHZ holds 6 000 samples over 60.0 s; a window may hold at most 5 000 samples and 3 600 s per channel (SEISIFT_MAX_WINDOW_SAMPLES, SEISIFT_MAX_WINDOW_S)');
    const bad = await pool.decode(new TextEncoder().encode('t_seconds,counts\n0,x\n'), { filename: 'b.csv' }, defaultWindowLimits);
    expect(bad).toMatchObject({ ok: false, status: 422, code: 'unprocessable' });
  });

  it('computes display traces in a worker exactly as computeTraces does here, rounded for drawing by tracesForDisplay', async () => {
    const x = window(7)[0]!;
    const input: TracesInput = {
      channels: [{ streamId: x.id, sampleRateHz: 100, startTimeUs: x.startTimeUs, sampleCount: x.samples.length, samples: encodeSamples(x.samples) }],
      profile: null,
      sensitivities: {},
      query: { points: 2000 },
    };
    const here = computeTraces(input);
    const json = await pool.traces(input);
    expect(JSON.parse(new TextDecoder().decode(json))).toEqual(JSON.parse(JSON.stringify(tracesForDisplay(here))));
    // The caller's blob is untouched (the pool sends its own copy).
    expect(input.channels[0]!.samples.byteLength).toBeGreaterThan(0);
  });

  it('matched windows: the same analysis and matches as matchWindow in this thread; the station bank is kept in the worker (sent once, then only new templates)', async () => {
    // A bank cut from other windows' band-passed traces, with one copy of the window's own burst.
    const slices = (seed: number, from: number) => matchingTraces(window(seed), defaultProcessingProfile).traces.map((x) => Float32Array.from(x.subarray(from, from + 1000)));
    const ids = window(0).map((s) => s.id);
    const bank: BankTemplate[] = [5800, 2000, 7000, 9000].map((from, k) => ({ id: 10 + k, sampleRateHz: 100, ids, samples: slices(k === 0 ? 11 : 20 + k, from) }));
    const match = { topK: 5, minValue: 0.2 };
    const one = createAnalysisPool({ threads: 1 });
    try {
      const check = async (templates: BankTemplate[]) => {
        const direct = analyzeWindow(window(11), defaultProcessingProfile);
        const expected = { analysis: direct, matching: matchWindow(window(11), defaultProcessingProfile, direct, templates, match) };
        expect(await one.runMatched(window(11), defaultProcessingProfile, {}, { stationId: 1, templates }, match)).toEqual(expected);
        return expected;
      };
      const first = await check(bank);
      expect(first.matching?.matches[0]).toMatchObject({ templateId: 10, lag: 5800 });
      expect(one.templatesSent).toBe(4);
      await check(bank);
      expect(one.templatesSent).toBe(4);
      // A template added: only it travels. One pruned: nothing travels.
      const grown = [{ id: 20, sampleRateHz: 100, ids, samples: slices(30, 4000) }, ...bank];
      await check(grown);
      expect(one.templatesSent).toBe(5);
      await check(grown.slice(0, 4));
      expect(one.templatesSent).toBe(5);
      // Another station's bank is its own.
      expect(await one.runMatched(window(11), defaultProcessingProfile, {}, { stationId: 2, templates: [] }, match)).toMatchObject({ matching: { matches: [] } });
    } finally {
      await one.close();
    }
    // Two workers, windows at once: each answer as here, whichever worker had the bank.
    const results = await Promise.all([11, 11, 11, 11].map(() => pool.runMatched(window(11), defaultProcessingProfile, {}, { stationId: 1, templates: bank }, match)));
    const direct = analyzeWindow(window(11), defaultProcessingProfile);
    const expected = matchWindow(window(11), defaultProcessingProfile, direct, bank, match);
    for (const r of results) expect(r.matching).toEqual(expected);
    expect(pool.templatesSent).toBeLessThanOrEqual(4 * 4);
  });
});
