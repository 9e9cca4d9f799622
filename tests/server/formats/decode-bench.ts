/**
 * Decoder benchmark (not a test): prints median times for decoding typical uploads.
 * Run: npm run bench:decode   (or: node node_modules/.bin/tsx tests/server/formats/decode-bench.ts)
 *
 * Inputs are generated here (a deterministic pseudo-random walk, benchmark data only):
 * - a 1-hour 3-component window at 200 sps (2.16 M samples) as MiniSEED 2 Steim-2, 4096-byte records;
 * - the same as miniSEED 3 Steim-2 (CRC-32C checked on every record);
 * - a 120 s 3-component window at 100 sps (36,000 samples) as MiniSEED 2 Steim-2 and as CSV;
 * - defects, each beside its clean twin above: the 1-hour window with every 10th record sent twice
 *   (the repeats are dropped), and a crafted 25 MB file of 512-byte records with a gap after every
 *   record (refused once a stream falls into more than MAX_RUNS_PER_STREAM pieces).
 * Every decode is the upload's: decodeWaveform with exactPlacement.
 */
import { decodeWaveform } from '@server/formats/decode';
import { MAX_RUNS_PER_STREAM } from '@server/formats/merge-records';
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
    const streams = decodeWaveform(bytes, { exactPlacement: true });
    times.push(performance.now() - t);
    samples = streams.reduce((a, s) => a + s.samples.length, 0);
  }
  times.sort((a, b) => a - b);
  const median = times[Math.floor(times.length / 2)] ?? 0;
  console.log(
    `${label.padEnd(44)} ${String(samples).padStart(8)} samples  ${(bytes.length / 1e6).toFixed(2).padStart(6)} MB  median ${median.toFixed(2).padStart(8)} ms  (${((samples / median) * 1e3 / 1e6).toFixed(1)} M samples/s, ${runs} runs)`,
  );
}

/** `file` (records of `recordLength` bytes) with every `every`-th record sent twice in a row. */
function repeatEvery(file: Uint8Array, recordLength: number, every: number): Uint8Array {
  const parts: Uint8Array[] = [];
  for (let k = 0; k * recordLength < file.length; k++) {
    const rec = file.subarray(k * recordLength, (k + 1) * recordLength);
    parts.push(rec);
    if (k % every === every - 1) parts.push(rec);
  }
  return concat(parts);
}

/**
 * `count` copies of one 512-byte int32 record (112 samples, 1.12 s at 100 Hz), the k-th starting
 * k × 2 s after 2026-03-14T00:00:00Z: a 0.88 s gap after every record. BTIME fields per SEED 2.4.
 */
function gapAfterEveryRecord(count: number): Uint8Array {
  const one = encodeMiniSeed2(
    { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14) * 1000, samples: walk(112, 9) },
    { encoding: 'int32', recordLength: 512 },
  );
  const out = new Uint8Array(512 * count);
  const view = new DataView(out.buffer);
  for (let k = 0; k < count; k++) {
    out.set(one.subarray(0, 512), k * 512);
    const t = k * 2;
    view.setUint16(k * 512 + 22, 73 + Math.floor(t / 86400), false); // day of year (14 March = 73)
    out[k * 512 + 24] = Math.floor((t % 86400) / 3600);
    out[k * 512 + 25] = Math.floor((t % 3600) / 60);
    out[k * 512 + 26] = t % 60;
  }
  return out;
}

/** Like bench, for a clean file and its defective twin, their runs alternating (same machine state). */
function benchTwins(label: string, clean: Uint8Array, twinLabel: string, twin: Uint8Array, runs: number): void {
  const a: number[] = [];
  const b: number[] = [];
  let n = [0, 0];
  const once = (bytes: Uint8Array, into: number[]): number => {
    const t = performance.now();
    const streams = decodeWaveform(bytes, { exactPlacement: true });
    into.push(performance.now() - t);
    return streams.reduce((k, s) => k + s.samples.length, 0);
  };
  for (let r = 0; r < runs; r++) {
    // Which goes first alternates too, so neither always meets the heap the other left.
    if (r % 2 === 0) {
      const x = once(clean, a);
      n = [x, once(twin, b)];
    } else {
      const y = once(twin, b);
      n = [once(clean, a), y];
    }
  }
  for (const [lab, times, bytes, samples] of [[label, a, clean, n[0]], [twinLabel, b, twin, n[1]]] as const) {
    const sorted = [...times].sort((p, q) => p - q);
    const median = sorted[Math.floor(sorted.length / 2)] ?? 0;
    console.log(`${lab.padEnd(44)} ${String(samples).padStart(8)} samples  ${(bytes.length / 1e6).toFixed(2).padStart(6)} MB  median ${median.toFixed(2).padStart(8)} ms  (${(((samples ?? 0) / median) * 1e3 / 1e6).toFixed(1)} M samples/s, ${runs} runs, alternating)`);
  }
}

function benchRefusal(label: string, bytes: Uint8Array, runs: number): void {
  const times: number[] = [];
  let message = '';
  for (let r = 0; r < runs; r++) {
    const t = performance.now();
    try {
      decodeWaveform(bytes, { exactPlacement: true });
      message = 'ACCEPTED (should be refused)';
    } catch (err) {
      message = err instanceof Error ? err.message : String(err);
    }
    times.push(performance.now() - t);
  }
  times.sort((a, b) => a - b);
  const median = times[Math.floor(times.length / 2)] ?? 0;
  console.log(`${label.padEnd(44)} refused   ${(bytes.length / 1e6).toFixed(2).padStart(6)} MB  median ${median.toFixed(2).padStart(8)} ms  (${runs} runs): ${message.slice(0, 110)}…`);
}

const hour = ms2(200, 3600);
// Warm-up (not printed): the first decodes of a process include compilation, which would make the
// first line slower than its twin for reasons unrelated to the input.
for (let i = 0; i < 3; i++) decodeWaveform(hour, { exactPlacement: true });
benchTwins('MiniSEED 2 Steim-2, 1 h x 3 ch @ 200 sps', hour, '  same, every 10th record sent twice', repeatEvery(hour, 4096, 10), 11);
bench('miniSEED 3 Steim-2 + CRC, 1 h x 3 ch @ 200 sps', ms3(200, 3600), 7);
bench('MiniSEED 2 Steim-2, 120 s x 3 ch @ 100 sps', ms2(100, 120), 31);
bench('CSV, 120 s x 1 ch @ 100 sps', csv(100, 120), 31);
benchRefusal(`crafted: 51 200 records, a gap after each`, gapAfterEveryRecord(51_200), 5);
console.log(`(a stream may fall into at most ${MAX_RUNS_PER_STREAM} pieces)`);
console.log(`peak RSS ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB (whole process, includes the generated inputs)`);
