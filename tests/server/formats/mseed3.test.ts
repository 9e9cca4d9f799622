import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { crc32c } from '@server/formats/crc32c';
import { decodeWaveform } from '@server/formats/decode';
import { decodeMiniSeed3, parseSourceId } from '@server/formats/mseed3';
import { encodeMiniSeed3, type MiniSeed3WriteOptions } from '@server/formats/mseed3-writer';
import { WaveformParseError } from '@server/formats/types';
import { libmseedDumpSchema } from './libmseed-json';

const FIXTURES = join(import.meta.dirname, '../../fixtures/mseed');

/**
 * Builds one miniSEED 3 record by hand from the field table of the FDSN miniSEED 3 specification
 * (2022, "Record definition"), independently of our writer: 40-byte little-endian fixed header,
 * source identifier, extra headers, payload; CRC-32C over the record with the CRC field zeroed.
 */
function handRecord(f: {
  ns: number;
  year: number;
  day: number;
  h: number;
  m: number;
  s: number;
  encoding: number;
  rate: number;
  count: number;
  sid: string;
  extra?: string;
  payload: Uint8Array;
  badCrc?: boolean;
}): Uint8Array {
  const sid = new TextEncoder().encode(f.sid);
  const extra = new TextEncoder().encode(f.extra ?? '');
  const rec = new Uint8Array(40 + sid.length + extra.length + f.payload.length);
  const v = new DataView(rec.buffer);
  rec.set([0x4d, 0x53, 3, 0]); // 'MS', format version 3, flags
  v.setUint32(4, f.ns, true);
  v.setUint16(8, f.year, true);
  v.setUint16(10, f.day, true);
  rec[12] = f.h;
  rec[13] = f.m;
  rec[14] = f.s;
  rec[15] = f.encoding;
  v.setFloat64(16, f.rate, true);
  v.setUint32(24, f.count, true);
  rec[32] = 1; // publication version
  rec[33] = sid.length;
  v.setUint16(34, extra.length, true);
  v.setUint32(36, f.payload.length, true);
  rec.set(sid, 40);
  rec.set(extra, 40 + sid.length);
  rec.set(f.payload, 40 + sid.length + extra.length);
  v.setUint32(28, (crc32c(rec) ^ (f.badCrc ? 1 : 0)) >>> 0, true);
  return rec;
}

/** First record of a libmseed fixture: its data section and libmseed's samples for it. */
function libmseedRecord(name: string): { payload: Uint8Array; samples: number[]; count: number } {
  const bytes = new Uint8Array(readFileSync(join(FIXTURES, `${name}.mseed`)));
  const dump = libmseedDumpSchema.parse(JSON.parse(readFileSync(join(FIXTURES, `${name}.json`), 'utf8')));
  const rec0 = dump.records[0];
  if (!rec0) throw new Error('no record');
  const v = new DataView(bytes.buffer, bytes.byteOffset);
  const le = rec0.byteorder === 'little';
  const dataOffset = v.getUint16(44, le);
  const payload = bytes.slice(dataOffset, rec0.reclen);
  const samples = (dump.segments[0]?.samples ?? []).slice(0, rec0.samplecnt);
  return { payload, samples, count: rec0.samplecnt };
}

const base = { ns: 589_100_000, year: 2026, day: 73, h: 9, m: 26, s: 53, rate: 100, sid: 'FDSN:XX_KV01_00_H_H_Z' };

describe('miniSEED 3 decoding of records built from the specification layout', () => {
  it('decodes a Steim-2 payload (big-endian, as the spec requires) equal to libmseed', () => {
    // The Steim-2 frames come from a libmseed-written big-endian record; libmseed decoded them.
    const { payload, samples, count } = libmseedRecord('steim2-be-512');
    const streams = decodeWaveform(handRecord({ ...base, encoding: 11, count, payload }));
    expect(streams).toHaveLength(1);
    expect(streams[0]?.format).toBe('mseed3');
    expect(streams[0]?.id).toBe('XX.KV01.00.HHZ');
    expect(Array.from(streams[0]?.samples ?? [])).toEqual(samples);
    expect(streams[0]?.startTimeUs).toBe(Date.UTC(2026, 2, 14, 9, 26, 53) * 1000 + 589_100);
  });

  it('decodes a Steim-1 payload and little-endian int32 equal to libmseed', () => {
    const s1 = libmseedRecord('steim1-be-512');
    expect(Array.from(decodeMiniSeed3(handRecord({ ...base, encoding: 10, count: s1.count, payload: s1.payload }))[0]?.samples ?? [])).toEqual(s1.samples);
    const i32 = libmseedRecord('int32-le-256');
    expect(Array.from(decodeMiniSeed3(handRecord({ ...base, encoding: 3, count: i32.count, payload: i32.payload }))[0]?.samples ?? [])).toEqual(i32.samples);
  });

  it('rounds nanoseconds to the nearest µs and reads a negative rate field as a period', () => {
    const payload = new Uint8Array(8);
    new DataView(payload.buffer).setInt32(0, 7, true);
    new DataView(payload.buffer).setInt32(4, -7, true);
    const [s] = decodeMiniSeed3(handRecord({ ...base, ns: 123_456_789, rate: -10, encoding: 3, count: 2, payload }));
    expect(s?.startTimeUs).toBe(Date.UTC(2026, 2, 14, 9, 26, 53) * 1000 + 123_457);
    expect(s?.sampleRateHz).toBe(0.1); // spec: negative value = sample period in seconds
    expect(Array.from(s?.samples ?? [])).toEqual([7, -7]);
  });

  it('keeps the extra headers (JSON) and refuses invalid JSON', () => {
    const payload = new Uint8Array(4);
    const extra = '{"FDSN":{"Time":{"Quality":100}},"KV":{"site":"north ridge"}}';
    const [s] = decodeMiniSeed3(handRecord({ ...base, encoding: 3, count: 1, payload, extra }));
    expect(s?.extraHeaders).toEqual({ FDSN: { Time: { Quality: 100 } }, KV: { site: 'north ridge' } });
    expect(() => decodeMiniSeed3(handRecord({ ...base, encoding: 3, count: 1, payload, extra: '{"FDSN":' }))).toThrow(
      /record 1 at byte 0: extra headers are not valid JSON/u,
    );
  });

  it('refuses a corrupted CRC, naming the record', () => {
    const payload = new Uint8Array(4);
    const good = handRecord({ ...base, encoding: 3, count: 1, payload });
    const bad = handRecord({ ...base, encoding: 3, count: 1, payload, badCrc: true });
    const file = new Uint8Array([...good, ...bad]);
    expect(() => decodeMiniSeed3(file)).toThrow(WaveformParseError);
    expect(() => decodeMiniSeed3(file)).toThrow(new RegExp(`record 2 at byte ${good.length}: CRC-32C mismatch`, 'u'));
    // a flipped payload bit is caught the same way
    const flipped = good.slice();
    flipped[flipped.length - 1] = (flipped[flipped.length - 1] ?? 0) ^ 0x10;
    expect(() => decodeMiniSeed3(flipped)).toThrow(/CRC-32C mismatch/u);
  });

  it('refuses truncation, non-FDSN identifiers and sample counts that do not fit', () => {
    const payload = new Uint8Array(4);
    const good = handRecord({ ...base, encoding: 3, count: 1, payload });
    expect(() => decodeMiniSeed3(good.slice(0, 30))).toThrow(/truncated/u);
    expect(() => decodeMiniSeed3(good.slice(0, good.length - 1))).toThrow(/truncated/u);
    expect(() => decodeMiniSeed3(handRecord({ ...base, sid: 'XX.KV01.00.HHZ', encoding: 3, count: 1, payload }))).toThrow(
      /not an FDSN source identifier/u,
    );
    expect(() => decodeMiniSeed3(handRecord({ ...base, encoding: 3, count: 2, payload }))).toThrow(/declares 2 int32 samples/u);
  });
});

describe('FDSN source identifiers (FDSN Source Identifiers specification 1.0)', () => {
  it('maps FDSN:NET_STA_LOC_B_S_SS to SEED codes', () => {
    expect(parseSourceId('FDSN:XX_KV01_00_H_H_Z', 'x')).toEqual({ network: 'XX', station: 'KV01', location: '00', channel: 'HHZ' });
    expect(parseSourceId('FDSN:XX_KV03__B_H_N', 'x')).toEqual({ network: 'XX', station: 'KV03', location: '', channel: 'BHN' });
    expect(() => parseSourceId('FDSN:XX_KV01_00_HHZ', 'x')).toThrow(/6/u);
  });
});

describe('encodeMiniSeed3 round trips through our decoder', () => {
  const ints = Int32Array.from({ length: 5000 }, (_, i) => Math.round(2 ** (i % 27) * Math.sin(i * 0.37)));
  const encodings: MiniSeed3WriteOptions['encoding'][] = ['steim2', 'steim1', 'int16', 'int32', 'float32', 'float64'];
  for (const encoding of encodings) {
    it(`${encoding}: multi-record, samples and times exact`, () => {
      const samples =
        encoding === 'int16'
          ? Int32Array.from(ints, (v) => v % 32768)
          : encoding === 'float32'
            ? Float32Array.from(ints, (v) => v / 3)
            : encoding === 'float64'
              ? Float64Array.from(ints, (v) => v / 3)
              : encoding === 'steim2'
                ? Int32Array.from(ints, (v) => v % 2 ** 28)
                : ints;
      const startTimeUs = Date.UTC(2026, 2, 14, 23, 59, 59) * 1000 + 987_654;
      const bytes = encodeMiniSeed3(
        { network: 'XX', station: 'KV02', location: '10', channel: 'HHN', sampleRateHz: 200, startTimeUs, samples },
        { encoding, maxRecordLength: 1024, extraHeaders: { FDSN: { Time: { Quality: 90 } } } },
      );
      expect(bytes.length).toBeGreaterThan(2 * 1024); // several records
      const streams = decodeWaveform(bytes);
      expect(streams).toHaveLength(1);
      const s = streams[0];
      expect(s?.id).toBe('XX.KV02.10.HHN');
      expect(s?.startTimeUs).toBe(startTimeUs);
      expect(s?.sampleRateHz).toBe(200);
      expect(s?.discontinuities).toEqual([]);
      expect(s?.extraHeaders).toEqual({ FDSN: { Time: { Quality: 90 } } });
      expect(Array.from(s?.samples ?? [])).toEqual(Array.from(samples));
    });
  }
});
