import { rmSync } from 'node:fs';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeMiniSeed2 } from '@server/formats/mseed2';
import { encodeMiniSeed2, rateFactors, type MiniSeed2WriteOptions } from '@server/formats/mseed2-writer';
import { nominalRate } from '@server/formats/mseed2';
import type { LibmseedDump } from './libmseed-json';
import { buildLibmseedDump } from './libmseed-tool';

let tool: ReturnType<typeof buildLibmseedDump>;
beforeAll(() => {
  tool = buildLibmseedDump();
});
afterAll(() => {
  rmSync(tool.dir, { recursive: true, force: true });
});

/** Deterministic test signal with differences of every width (no randomness). */
function signal(n: number, maxBits: number): Int32Array {
  const x = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    const amp = 2 ** ((Math.floor(i / 29) % maxBits));
    x[i] = Math.round(amp * Math.sin(0.9 * i)) + ((i * 31) % 11) - 5;
  }
  return x;
}

const START_US = Date.UTC(2026, 2, 14, 9, 26, 53) * 1000 + 589_123; // needs blockette 1001 µs

function libmseedSamples(d: LibmseedDump): number[] {
  return d.segments.flatMap((s) => (s.sampletype === 'f' ? s.samples.map((v) => Math.fround(v)) : s.samples));
}

describe('encodeMiniSeed2 read back by libmseed 2.19 (Debian libmseed-dev)', () => {
  const cases: { opts: MiniSeed2WriteOptions; n: number; bits: number }[] = [
    { opts: { encoding: 'steim2', recordLength: 512 }, n: 4000, bits: 29 },
    { opts: { encoding: 'steim2', recordLength: 4096, byteOrder: 'little' }, n: 9000, bits: 29 },
    { opts: { encoding: 'steim1', recordLength: 256 }, n: 1500, bits: 31 },
    { opts: { encoding: 'steim1', recordLength: 8192, byteOrder: 'little' }, n: 5000, bits: 31 },
    { opts: { encoding: 'int32', recordLength: 512 }, n: 700, bits: 31 },
    { opts: { encoding: 'int32', recordLength: 1024, byteOrder: 'little' }, n: 700, bits: 31 },
    { opts: { encoding: 'int16', recordLength: 256 }, n: 300, bits: 15 },
    { opts: { encoding: 'float32', recordLength: 512 }, n: 600, bits: 20 },
    { opts: { encoding: 'float64', recordLength: 2048, byteOrder: 'little' }, n: 600, bits: 20 },
  ];
  for (const { opts, n, bits } of cases) {
    it(`${opts.encoding}, ${opts.recordLength} bytes, ${opts.byteOrder ?? 'big'}-endian: libmseed reads every sample and the µs start`, () => {
      const ints = signal(n, bits);
      const samples =
        opts.encoding === 'float32' || opts.encoding === 'float64'
          ? Float32Array.from(ints, (v, i) => v / 7 + i * 0.001)
          : ints;
      const bytes = encodeMiniSeed2(
        { network: 'XX', station: 'KV05', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: START_US, samples },
        opts,
      );
      const d = tool.dump(bytes);
      expect(d.records.length).toBeGreaterThan(1);
      for (const r of d.records) {
        expect(r.encoding).toBe(opts.encoding);
        expect(r.byteorder).toBe(opts.byteOrder ?? 'big');
        expect(r.reclen).toBe(opts.recordLength);
      }
      // libmseed merges the records into one segment: continuous, same start, same samples.
      expect(d.segments).toHaveLength(1);
      expect(d.segments[0]?.id).toBe('XX.KV05.00.HHZ');
      expect(d.segments[0]?.start_us).toBe(START_US);
      expect(d.segments[0]?.samprate).toBe(100);
      const got = libmseedSamples(d);
      const want = Array.from(samples, (v) => (opts.encoding === 'float64' ? v : opts.encoding === 'float32' ? Math.fround(v) : v));
      expect(got).toEqual(want);
      // and our own decoder agrees
      const [ours] = decodeMiniSeed2(bytes);
      expect(Array.from(ours?.samples ?? [])).toEqual(want);
      expect(ours?.startTimeUs).toBe(START_US);
      expect(ours?.discontinuities).toEqual([]);
    });
  }

  it('writes fractional sample rates libmseed reads back (0.1 Hz, 2.5 Hz, 40/3 Hz)', () => {
    for (const rate of [0.1, 2.5, 40 / 3]) {
      const bytes = encodeMiniSeed2(
        { network: 'XX', station: 'KV06', location: '', channel: 'LHZ', sampleRateHz: rate, startTimeUs: START_US, samples: signal(200, 12) },
        { encoding: 'steim2', recordLength: 256 },
      );
      const d = tool.dump(bytes);
      expect(Math.abs((d.records[0]?.samprate ?? 0) - rate) / rate).toBeLessThan(1e-9);
      expect(d.segments).toHaveLength(1);
    }
  });
});

describe('encodeMiniSeed2 input checks', () => {
  const base = { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: START_US };
  it('refuses what SEED 2 cannot hold, with a clear message', () => {
    expect(() => encodeMiniSeed2({ ...base, station: 'KESTREL', samples: new Int32Array(3) }, { encoding: 'int32' })).toThrow(/station code 'KESTREL'/u);
    expect(() => encodeMiniSeed2({ ...base, samples: new Int32Array(3) }, { encoding: 'int32', recordLength: 300 })).toThrow(/record length 300/u);
    expect(() => encodeMiniSeed2({ ...base, samples: Int32Array.of(0, 2 ** 30) }, { encoding: 'steim2' })).toThrow(/too large for Steim-2/u);
    expect(() => encodeMiniSeed2({ ...base, samples: Float32Array.of(0.5) }, { encoding: 'int32' })).toThrow(/not a 32-bit integer/u);
    expect(() => encodeMiniSeed2({ ...base, samples: Int32Array.of(40000) }, { encoding: 'int16' })).toThrow(/does not fit int16/u);
    expect(() => rateFactors(Math.PI)).toThrow(/cannot be written exactly/u);
  });

  it('round-trips any int32 series through Steim-1 and 30-bit series through Steim-2 (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -(2 ** 28), max: 2 ** 28 }), { minLength: 1, maxLength: 600 }),
        fc.constantFrom<'steim1' | 'steim2'>('steim1', 'steim2'),
        fc.constantFrom(256, 512),
        fc.boolean(),
        (values, encoding, recordLength, little) => {
          const samples = Int32Array.from(values);
          const bytes = encodeMiniSeed2({ ...base, samples }, { encoding, recordLength, byteOrder: little ? 'little' : 'big' });
          const [s] = decodeMiniSeed2(bytes);
          expect(Array.from(s?.samples ?? [])).toEqual(values);
        },
      ),
      { numRuns: 200, seed: 20260314 },
    );
  });

  it('rate factors reproduce the rate (SEED 2.4 fields 10-11)', () => {
    for (const rate of [1, 100, 200, 0.1, 0.05, 2.5, 40 / 3]) {
      const [f, m] = rateFactors(rate);
      expect(Math.abs(nominalRate(f, m) - rate) / rate).toBeLessThan(1e-9);
    }
  });
});
