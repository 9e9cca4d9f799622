import { readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { placementProblems } from '@server/formats/placement';
import { WaveformParseError, type DecodedStream } from '@server/formats/types';
import { concatBytes, fixMs3Crc, ms3Records } from '@tests/fixtures/hostile/make-corpus';
import { libmseedDumpSchema, type LibmseedDump } from './libmseed-json';
import { buildLibmseedDump } from './libmseed-tool';

/**
 * Exact placement of samples on files with defects, against libmseed 2.19 (Debian libmseed-dev,
 * the FDSN reference library). The defect-*.mseed fixtures were written by libmseed
 * (tests/fixtures/mseed/write-fixtures.c, then changed byte by byte where a defect needs it) and
 * the .json beside each is libmseed's own reading: its records (ms_readmsr_r) and its trace list
 * (ms_readtracelist, default tolerances: half a sample, rate within 1e-4), with every sample.
 *
 * The check: every sample libmseed places (segment start + i / rate) sits at the same time with the
 * same value in Seisift's stream, and Seisift holds no sample libmseed does not. Where libmseed
 * places two different values at one time (a true overlap) or leaves a gap, Seisift refuses the
 * window with the reason. MiniSEED 3 versions of each defect (written by Seisift's encoder: Debian
 * has no libmseed that writes version 3) must give the same result as MiniSEED 2.
 */

const FIXTURES = join(import.meta.dirname, '../../fixtures/mseed');

function load(name: string): { bytes: Uint8Array; ref: LibmseedDump } {
  return {
    bytes: new Uint8Array(readFileSync(join(FIXTURES, `${name}.mseed`))),
    ref: libmseedDumpSchema.parse(JSON.parse(readFileSync(join(FIXTURES, `${name}.json`), 'utf8'))),
  };
}

/** Time (µs) of sample `i` of a decoded stream, following its discontinuities (each restarts the grid). */
function timeOf(s: DecodedStream, i: number): number {
  let start = s.startTimeUs;
  let from = 0;
  for (const d of s.discontinuities) {
    if (d.sampleIndex > i) break;
    start = d.actualTimeUs;
    from = d.sampleIndex;
  }
  return start + ((i - from) * 1e6) / s.sampleRateHz;
}

/**
 * Every libmseed sample (segment start + i / rate, value) against Seisift's stream: same value at
 * the same time (within 1 µs), and every Seisift sample is one of libmseed's. Returns the number
 * of libmseed samples compared and how many times libmseed holds two different values.
 */
function compareWithLibmseed(s: DecodedStream, ref: LibmseedDump): { compared: number; conflicts: number } {
  const byTime = new Map<number, number>();
  for (let i = 0; i < s.samples.length; i++) byTime.set(Math.round(timeOf(s, i)), s.samples[i] as number);
  const seen = new Map<number, number>();
  let compared = 0;
  let conflicts = 0;
  for (const seg of ref.segments.filter((g) => g.id === s.id)) {
    seg.samples.forEach((v, i) => {
      const t = Math.round(seg.start_us + (i * 1e6) / seg.samprate);
      const before = seen.get(t);
      if (before !== undefined && before !== v) conflicts++;
      seen.set(t, v);
      compared++;
    });
  }
  if (conflicts > 0) return { compared, conflicts }; // two values for one time: nothing to place
  for (const [t, v] of seen) expect(byTime.get(t), `${s.id} at ${t} µs`).toBe(v);
  for (const t of byTime.keys()) expect(seen.has(t), `Seisift sample at ${t} µs that libmseed does not have`).toBe(true);
  return { compared, conflicts };
}

function refusal(bytes: Uint8Array, filename: string): string {
  try {
    decodeWaveform(bytes, { filename, exactPlacement: true });
  } catch (err) {
    expect(err).toBeInstanceOf(WaveformParseError);
    return (err as Error).message;
  }
  throw new Error(`${filename} was accepted`);
}

/** The same 1500 samples as MiniSEED 3 (Steim-2, ≤ 512-byte records), one record per array entry. */
function ms3Of(samples: Float64Array, startTimeUs: number): Uint8Array[] {
  const file = encodeMiniSeed3(
    { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs, samples: Int32Array.from(samples) },
    { encoding: 'steim2', maxRecordLength: 512 },
  );
  return ms3Records(file);
}

const clean = load('defect-zero-padding'); // the same 1500 samples, no placement defect
const [cleanStream] = decodeWaveform(clean.bytes);
const START = clean.ref.segments[0]?.start_us ?? 0;

describe('placement of samples on defective MiniSEED files, against libmseed 2.19', () => {
  it('the clean series: one libmseed segment of 1500 samples, equal to Seisift (zero padding after the last record ignored by both)', () => {
    expect(clean.ref.segments).toHaveLength(1);
    expect(cleanStream?.samples.length).toBe(1500);
    const { compared, conflicts } = compareWithLibmseed(cleanStream as DecodedStream, clean.ref);
    expect([compared, conflicts]).toEqual([1500, 0]);
    expect(cleanStream?.notes).toBeUndefined();
  });

  it('a repeated record: dropped with a QC note; every sample at libmseed\'s time (libmseed keeps the copy as an overlapping segment)', () => {
    const { bytes, ref } = load('defect-repeated-record');
    // libmseed reads record 3 with the same start and count as record 2, and lists two segments.
    expect(ref.records[2]?.start_us).toBe(ref.records[1]?.start_us);
    expect(ref.segments.length).toBe(2);
    const [s] = decodeWaveform(bytes, { exactPlacement: true });
    if (!s) throw new Error('no stream');
    expect(s.discontinuities).toEqual([]);
    expect(Array.from(s.samples)).toEqual(Array.from(cleanStream?.samples ?? []));
    const dup = ref.records[1]?.samplecnt ?? 0;
    expect(s.notes).toEqual([{ code: 'duplicate-record', message: expect.stringMatching(/^record 3 at byte 1024 repeats 182 samples already placed from 2026-03-14T09:26:57\.719100Z with identical values: dropped$/u) as unknown, sampleIndex: 413, count: dup }]);
    expect(compareWithLibmseed(s, ref)).toEqual({ compared: 1500 + dup, conflicts: 0 });
    // Before: the copy's samples were stored after the original, so the rest sat 1.82 s late.
  });

  it('a record re-sent from 0.5 s earlier with the same values: the 50 repeats dropped with a note, the rest placed', () => {
    const { bytes, ref } = load('defect-overlap-identical');
    expect(ref.segments.map((g) => g.samples.length)).toEqual([1000, 550]);
    const [s] = decodeWaveform(bytes, { exactPlacement: true });
    if (!s) throw new Error('no stream');
    expect(s.discontinuities).toEqual([]);
    expect(s.notes?.map((n) => [n.code, n.sampleIndex, n.count])).toEqual([['duplicate-samples', 950, 50]]);
    expect(Array.from(s.samples)).toEqual(Array.from(cleanStream?.samples ?? []));
    expect(compareWithLibmseed(s, ref)).toEqual({ compared: 1550, conflicts: 0 });
  });

  it('a true overlap (0.5 s with other values): libmseed holds two values for 50 times; Seisift refuses naming the records and a differing sample', () => {
    const { bytes, ref } = load('defect-overlap-conflict');
    const [s] = decodeWaveform(bytes);
    if (!s) throw new Error('no stream');
    expect(compareWithLibmseed(s, ref).conflicts).toBeGreaterThan(0);
    expect(s.discontinuities.map((d) => [d.sampleIndex, d.durationS])).toEqual([[1000, -0.5]]);
    const second = ref.records.findIndex((r) => r.start_us === START + 9_500_000);
    expect(second).toBe(6);
    const message = refusal(bytes, 'overlap.mseed');
    expect(message).toMatch(/^overlap\.mseed: samples cannot be placed exactly at their times .*XX\.KV01\.00\.HHZ: overlap of 0\.5 s: records 7–9 \(from byte 3072\) start at 2026-03-14T09:27:03\.089100Z, before the end of the samples already placed \(2026-03-14T09:27:03\.589100Z\), with different values; at 2026-03-14T09:27:03\.089100Z it holds -?\d+ where -?\d+ was already placed\. Send one version/u);
    expect(placementProblems([s])).toHaveLength(1);
  });

  it('a record that claims 0 samples: libmseed leaves a 1.03 s gap; Seisift refuses naming that record (before: the samples after it sat 1.03 s early)', () => {
    const { bytes, ref } = load('defect-empty-record');
    expect(ref.records[2]?.samplecnt).toBe(0);
    expect(ref.segments.map((g) => g.samples.length)).toEqual([595, 802]);
    const [s] = decodeWaveform(bytes);
    if (!s) throw new Error('no stream');
    // Without the exact-placement rule the two parts still decode at libmseed's times.
    expect(compareWithLibmseed(s, ref)).toEqual({ compared: 1397, conflicts: 0 });
    expect(s.discontinuities.map((d) => [d.sampleIndex, d.durationS])).toEqual([[595, 1.03]]);
    expect(refusal(bytes, 'empty.mseed')).toMatch(
      /^empty\.mseed: samples cannot be placed exactly .*XX\.KV01\.00\.HHZ: gap of 1\.03 s from 2026-03-14T09:26:59\.539100Z to 2026-03-14T09:27:00\.569100Z, before record 4 at byte 1536; record 3 at byte 1024 starts in it and claims 0 samples\. Upload the continuous parts as separate files/u,
    );
  });

  it('a 0-sample record whose time is covered by other records: nothing missing, reported as a note', () => {
    // Record 3 of defect-empty-record (0 samples, 09:26:59.5391) after the complete clean file.
    const rec3 = load('defect-empty-record').bytes.slice(1024, 1536);
    const [s] = decodeWaveform(concatBytes(clean.bytes.subarray(0, 4096), rec3), { exactPlacement: true });
    expect(Array.from(s?.samples ?? [])).toEqual(Array.from(cleanStream?.samples ?? []));
    expect(s?.notes?.map((n) => [n.code, n.sampleIndex, n.count])).toEqual([['empty-record', 595, 0]]);
    expect(s?.notes?.[0]?.message).toBe('record 9 at byte 4096 claims 0 samples at 2026-03-14T09:26:59.539100Z: nothing placed from it');
  });

  it('the 2.5 s gap of gap-overlap.mseed is refused the same way', () => {
    expect(refusal(load('gap-overlap').bytes, 'gap.mseed')).toMatch(/XX\.KV03\.00\.HHZ: gap of 2\.5 s from .* before record 8 at byte 3584; XX\.KV03\.00\.HHZ: overlap of 0\.5 s: records 12–15 \(from byte 5632\) start at/u);
  });
});

describe('the same defects as MiniSEED 3 (Seisift\'s writer) give the same placement as MiniSEED 2', () => {
  const samples = cleanStream?.samples ?? new Float64Array(0);
  const records = ms3Of(samples, START);

  it('has several records to break', () => {
    expect(records.length).toBeGreaterThan(3);
  });

  it('a repeated record: dropped with the same note', () => {
    const file = concatBytes(records[0] as Uint8Array, records[1] as Uint8Array, records[1] as Uint8Array, ...records.slice(2));
    const [s] = decodeWaveform(file, { exactPlacement: true });
    expect(Array.from(s?.samples ?? [])).toEqual(Array.from(samples));
    expect(s?.notes?.map((n) => n.code)).toEqual(['duplicate-record']);
    expect(s?.notes?.[0]?.message).toMatch(/^record 3 at byte \d+ repeats \d+ samples already placed .* with identical values: dropped$/u);
  });

  it('a record re-sent from 0.5 s earlier with the same values, and with other values', () => {
    const a = concatBytes(...ms3Of(samples.subarray(0, 1000), START));
    const same = concatBytes(a, ...ms3Of(samples.subarray(950), START + 9_500_000));
    const [s] = decodeWaveform(same, { exactPlacement: true });
    expect(Array.from(s?.samples ?? [])).toEqual(Array.from(samples));
    expect(s?.notes?.map((n) => [n.code, n.sampleIndex, n.count])).toEqual([['duplicate-samples', 950, 50]]);
    const other = concatBytes(a, ...ms3Of(samples.subarray(950).map((v) => v + 1), START + 9_500_000));
    expect(refusal(other, 'overlap.ms3')).toMatch(/overlap of 0\.5 s: records \d+–\d+ \(from byte \d+\) start at 2026-03-14T09:27:03\.089100Z.*with different values/u);
  });

  it('a record that claims 0 samples: the same refusal naming it', () => {
    const broken = records.map((r) => r.slice());
    const r3 = broken[2] as Uint8Array;
    new DataView(r3.buffer).setUint32(24, 0, true);
    fixMs3Crc(r3, 0, r3.length);
    const offset = (broken[0]?.length ?? 0) + (broken[1]?.length ?? 0);
    expect(refusal(concatBytes(...broken), 'empty.ms3')).toMatch(new RegExp(`gap of [\\d.]+ s from .* before record 4 at byte \\d+; record 3 at byte ${offset} starts in it and claims 0 samples`, 'u'));
  });

  it('zero padding after the last record is ignored', () => {
    const [s] = decodeWaveform(concatBytes(...records, new Uint8Array(1000)), { exactPlacement: true });
    expect(Array.from(s?.samples ?? [])).toEqual(Array.from(samples));
  });
});

describe('zero padding between records', () => {
  const tool = buildLibmseedDump();
  afterAll(() => rmSync(tool.dir, { recursive: true, force: true }));

  it('Seisift reads every record after 300 zero bytes between records 2 and 3; libmseed 2.19 stops finding records there (reads 2 of 8)', () => {
    const file = concatBytes(clean.bytes.subarray(0, 1024), new Uint8Array(300), clean.bytes.subarray(1024, 4096));
    const ref = tool.dump(file);
    expect(ref.records.length).toBe(2);
    const [s] = decodeWaveform(file, { exactPlacement: true });
    expect(Array.from(s?.samples ?? [])).toEqual(Array.from(cleanStream?.samples ?? []));
  });
});
