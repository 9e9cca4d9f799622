/**
 * Decoder benchmark (not a test): prints median times for decoding typical uploads.
 * Run: npm run bench:decode   (or: node node_modules/.bin/tsx tests/server/formats/decode-bench.ts)
 *
 * Inputs are generated here (a deterministic pseudo-random walk, benchmark data only):
 * - a 1-hour 3-component window at 200 sps (2.16 M samples) as MiniSEED 2 Steim-2, 4096-byte records;
 * - the same as miniSEED 3 Steim-2 (CRC-32C checked on every record);
 * - a 120 s 3-component window at 100 sps (36,000 samples) as MiniSEED 2 Steim-2 and as CSV.
 */
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';

function walk(n: number, seed: number): Int32Array {
  const x = new Int32Array(n);
  let s = seed >>> 0;
  let v = 0;
  for (let i = 0; i < n; i++) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    v = Math.round(v * 0.98 + ((s / 2 ** 32) - 0.5) * 2000);
    x[i] = v;
  }
  return x;
}

function concat(parts: Uint8Array[]): Uint8Array {
  const out = new Uint8Array(parts.reduce((a, p) => a + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

function ms2(rate: number, seconds: number): Uint8Array {
  return concat(
    ['HHZ', 'HHN', 'HHE'].map((channel, k) =>
      encodeMiniSeed2(
        { network: 'XX', station: 'KV01', location: '00', channel, sampleRateHz: rate, startTimeUs: 1_773_480_413_000_000, samples: walk(rate * seconds, k + 1) },
        { encoding: 'steim2', recordLength: 4096 },
      ),
    ),
  );
}

function ms3(rate: number, seconds: number): Uint8Array {
  return concat(
    ['HHZ', 'HHN', 'HHE'].map((channel, k) =>
      encodeMiniSeed3(
        { network: 'XX', station: 'KV01', location: '00', channel, sampleRateHz: rate, startTimeUs: 1_773_480_413_000_000, samples: walk(rate * seconds, k + 1) },
        { encoding: 'steim2', maxRecordLength: 4096 },
      ),
    ),
  );
}

function csv(rate: number, seconds: number): Uint8Array {
  const x = walk(rate * seconds, 7);
  const lines = ['# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53Z', 't_seconds,counts'];
  for (let i = 0; i < x.length; i++) lines.push(`${(i / rate).toFixed(3)},${x[i] ?? 0}`);
  return new TextEncoder().encode(lines.join('\n'));
}

function bench(label: string, bytes: Uint8Array, runs: number): void {
  const times: number[] = [];
  let samples = 0;
  for (let r = 0; r < runs; r++) {
    const t = performance.now();
    const streams = decodeWaveform(bytes);
    times.push(performance.now() - t);
    samples = streams.reduce((a, s) => a + s.samples.length, 0);
  }
  times.sort((a, b) => a - b);
  const median = times[Math.floor(times.length / 2)] ?? 0;
  console.log(
    `${label.padEnd(44)} ${String(samples).padStart(8)} samples  ${(bytes.length / 1e6).toFixed(2).padStart(6)} MB  median ${median.toFixed(2).padStart(8)} ms  (${((samples / median) * 1e3 / 1e6).toFixed(1)} M samples/s, ${runs} runs)`,
  );
}

bench('MiniSEED 2 Steim-2, 1 h x 3 ch @ 200 sps', ms2(200, 3600), 7);
bench('miniSEED 3 Steim-2 + CRC, 1 h x 3 ch @ 200 sps', ms3(200, 3600), 7);
bench('MiniSEED 2 Steim-2, 120 s x 3 ch @ 100 sps', ms2(100, 120), 31);
bench('CSV, 120 s x 1 ch @ 100 sps', csv(100, 120), 31);
console.log(`peak RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB (whole process, includes the generated inputs)`);
