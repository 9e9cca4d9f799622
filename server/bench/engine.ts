import { spawnSync } from 'node:child_process';
import { availableParallelism, loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import Fili from 'fili';
import { z } from 'zod';
import { butterworthSos } from '@server/dsp/butterworth';
import { analyzeWindow } from '@server/dsp/pipeline';
import { sosfilt } from '@server/dsp/sosfilt';
import type { DecodedStream } from '@server/formats/types';
import { createAnalysisPool } from '@server/jobs/analysis-pool';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { median } from '@shared/math/median';
import { timeRuns } from './timing';

/**
 * `npm run bench:engine`: speed of the triage engine, printed.
 * 1. 3-component 120 s window at 100 sps (36 000 samples): median of 50 `analyzeWindow` runs, and
 *    the same steps in scipy (server/bench/scipy-engine.py, one python process, same input, same run).
 * 2. Our sosfilt loop against fili's IirFilter on the same sections.
 * 3. 1-hour 3-component window at 200 sps (2.16 M samples) in a child process: time and peak RSS.
 * 4. Pool throughput (windows/s) on 1 and on 2 worker threads.
 * Input: a deterministic synthetic signal (sines, a burst, LCG noise) — benchmark data only.
 */

const here = fileURLToPath(import.meta.url);

function lcgNoise(seed: number, n: number): Float64Array {
  const out = new Float64Array(n);
  let x = seed;
  for (let i = 0; i < n; i++) {
    x = (1664525 * x + 1013904223) % 4294967296;
    out[i] = x / 4294967296 - 0.5;
  }
  return out;
}

function makeWindow(fs: number, seconds: number, seed: number): DecodedStream[] {
  const n = Math.round(fs * seconds);
  return ['HHZ', 'HHN', 'HHE'].map((cha, c) => {
    const x = lcgNoise(seed + c, n);
    for (let i = 0; i < n; i++) {
      const t = i / fs;
      let v = 400 * (x[i] as number) + 300 * Math.sin(2 * Math.PI * 0.2 * t) + 1000;
      const tb = t - seconds / 2;
      if (tb >= 0 && tb < 6) v += 5000 * Math.sin((Math.PI * tb) / 6) ** 2 * Math.sin(2 * Math.PI * 6 * tb);
      x[i] = Math.round(v);
    }
    return {
      id: `XX.KV01.00.${cha}`,
      network: 'XX',
      station: 'KV01',
      location: '00',
      channel: cha,
      sampleRateHz: fs,
      startTimeUs: Date.UTC(2026, 2, 14, 12) * 1000,
      samples: x,
      discontinuities: [],
      encoding: 'int32',
      format: 'mseed2' as const,
    };
  });
}

const f2 = (v: number): string => v.toFixed(2);

async function main(): Promise<void> {
  if (process.argv.includes('--long-child')) {
    const w = makeWindow(200, 3600, 7);
    analyzeWindow(makeWindow(200, 60, 1), defaultProcessingProfile); // warm the JIT on a small one
    const times = timeRuns(3, () => analyzeWindow(w, defaultProcessingProfile));
    const maxRssMb = process.resourceUsage().maxRSS / 1024;
    process.stdout.write(`${JSON.stringify({ medianMs: median(times), times, maxRssMb, samples: w.length * (w[0]?.samples.length ?? 0) })}\n`);
    return;
  }

  const RUNS = 50;
  const win = makeWindow(100, 120, 1);
  const total = win.reduce((n, s) => n + s.samples.length, 0);
  console.log(`engine benchmark — Node ${process.version}, ${total} samples (3 × 120 s at 100 sps); load average ${loadavg().map((v) => v.toFixed(2)).join(' ')} on ${availableParallelism()} cores`);
  for (let i = 0; i < 15; i++) analyzeWindow(win, defaultProcessingProfile);
  const ours = timeRuns(RUNS, () => analyzeWindow(win, defaultProcessingProfile));
  const oursMed = median(ours);
  console.log(`analyzeWindow: median ${f2(oursMed)} ms, min ${f2(Math.min(...ours))} ms over ${RUNS} runs (target ≤ 5 ms)`);

  const raw = new Float64Array(total);
  win.forEach((s, c) => raw.set(s.samples, c * s.samples.length));
  const py = spawnSync('/usr/bin/python3', [here.replace(/engine\.ts$/, 'scipy-engine.py'), '3', String(win[0]?.samples.length), '100', String(RUNS)], {
    input: Buffer.from(raw.buffer),
    encoding: 'utf8',
  });
  if (py.status === 0) {
    const r = z.object({ medianMs: z.number(), minMs: z.number() }).parse(JSON.parse(py.stdout));
    console.log(`scipy same steps: median ${f2(r.medianMs)} ms, min ${f2(r.minMs)} ms over ${RUNS} runs`);
    console.log(`ratio scipy/ours: ${f2(r.medianMs / oursMed)}× (target > 1: faster than scipy)`);
  } else {
    console.log(`scipy run failed (${py.status}): ${py.stderr.trim()}`);
  }

  // sosfilt: our loop against fili's IirFilter (same sections, both from zero state).
  const sos = butterworthSos(4, [2, 10], 'bandpass', 100);
  const cf = sos.coefficients;
  const sections = Array.from({ length: sos.sections }, (_, s) => ({
    k: 1,
    a: [cf[s * 6 + 4] as number, cf[s * 6 + 5] as number] as [number, number],
    b: [cf[s * 6] as number, cf[s * 6 + 1] as number, cf[s * 6 + 2] as number] as [number, number, number],
  }));
  const x = win[0]?.samples ?? new Float64Array(0);
  for (let i = 0; i < 20; i++) {
    sosfilt(sos, x);
    new Fili.IirFilter(sections).multiStep(x);
  }
  const tOurs = median(timeRuns(RUNS, () => sosfilt(sos, x)));
  const tFili = median(timeRuns(RUNS, () => new Fili.IirFilter(sections).multiStep(x)));
  console.log(`sosfilt 12 000 samples, 4 sections: ours ${(tOurs * 1000).toFixed(0)} µs, fili IirFilter ${(tFili * 1000).toFixed(0)} µs (${f2(tFili / tOurs)}× slower)`);

  const child = spawnSync(process.execPath, ['--import', 'tsx', here, '--long-child'], { encoding: 'utf8', maxBuffer: 1 << 24 });
  if (child.status === 0) {
    const r = z.object({ medianMs: z.number(), maxRssMb: z.number(), samples: z.number() }).parse(JSON.parse(child.stdout));
    console.log(`1-hour window, 3 × 3600 s at 200 sps (${r.samples} samples): median ${f2(r.medianMs)} ms of 3 (target < 1500 ms), peak RSS ${r.maxRssMb.toFixed(0)} MB (target < 400 MB)`);
  } else {
    console.log(`long-window child failed (${child.status}): ${child.stderr.trim()}`);
  }

  // Pool throughput: 1 and 2 threads, three rounds each, interleaved (the machine is shared, so
  // the best round is the fairest figure; all rounds are printed).
  const TASKS = 60;
  const rounds: Record<number, number[]> = { 1: [], 2: [] };
  const pools = { 1: createAnalysisPool({ threads: 1 }), 2: createAnalysisPool({ threads: 2 }) };
  const copy = (): DecodedStream[] => win.map((s) => ({ ...s, samples: Float64Array.from(s.samples) }));
  for (const threads of [1, 2] as const) {
    await Promise.all(Array.from({ length: 4 * threads }, () => pools[threads].run(copy(), defaultProcessingProfile))); // start + warm
  }
  for (let round = 0; round < 3; round++) {
    for (const threads of [1, 2] as const) {
      const t0 = process.hrtime.bigint();
      await Promise.all(Array.from({ length: TASKS }, () => pools[threads].run(copy(), defaultProcessingProfile)));
      rounds[threads]?.push(TASKS / (Number(process.hrtime.bigint() - t0) / 1e9));
    }
  }
  for (const threads of [1, 2] as const) {
    const r = rounds[threads] ?? [];
    console.log(`pool, ${threads} thread(s): best ${Math.max(...r).toFixed(0)} windows/s (rounds: ${r.map((v) => v.toFixed(0)).join(', ')}; ${TASKS} windows of 3 × 120 s each)`);
    await pools[threads].close();
  }
  const best1 = Math.max(...(rounds[1] ?? [0]));
  const best2 = Math.max(...(rounds[2] ?? [0]));
  console.log(`pool speed-up 2 vs 1 thread: ${f2(best2 / best1)}×; load average now ${loadavg().map((v) => v.toFixed(2)).join(' ')} on ${availableParallelism()} cores`);
}

await main();
