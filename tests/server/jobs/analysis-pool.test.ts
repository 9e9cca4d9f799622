import { afterAll, describe, expect, it } from 'vitest';
import { createAnalysisPool } from '@server/jobs/analysis-pool';
import { analyzeWindow } from '@server/dsp/pipeline';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { makeSignal, stream } from '@tests/server/dsp/fixture-signal';

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
});
