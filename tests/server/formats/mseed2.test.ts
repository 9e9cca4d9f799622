import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeWaveform } from '@server/formats/decode';
import { decodeMiniSeed2, nominalRate } from '@server/formats/mseed2';
import { WaveformParseError, type DecodedStream } from '@server/formats/types';
import { libmseedDumpSchema, type LibmseedDump } from './libmseed-json';

const FIXTURES = join(import.meta.dirname, '../../fixtures/mseed');
// defect-*.mseed are broken on purpose: tests/server/formats/placement.test.ts compares them.
const names = readdirSync(FIXTURES)
  .filter((f) => f.endsWith('.mseed') && !f.startsWith('defect-'))
  .map((f) => f.slice(0, -'.mseed'.length))
  .sort();

function load(name: string): { bytes: Uint8Array; expected: LibmseedDump } {
  const bytes = new Uint8Array(readFileSync(join(FIXTURES, `${name}.mseed`)));
  const expected = libmseedDumpSchema.parse(JSON.parse(readFileSync(join(FIXTURES, `${name}.json`), 'utf8')));
  return { bytes, expected };
}

/**
 * Compares our merged streams with libmseed's segments (libmseed splits a stream at every gap or
 * overlap beyond half a sample; we keep one stream and list the discontinuities).
 */
function compareWithLibmseed(streams: DecodedStream[], expected: LibmseedDump): void {
  const ids = [...new Set(expected.segments.map((s) => s.id))].sort();
  expect(streams.map((s) => s.id).sort()).toEqual(ids);
  for (const id of ids) {
    const segs = expected.segments.filter((s) => s.id === id).sort((a, b) => a.start_us - b.start_us);
    const stream = streams.find((s) => s.id === id);
    if (!stream) throw new Error(`no stream ${id}`);
    const first = segs[0];
    if (!first) throw new Error('no segment');
    // Source: libmseed 2.19 (ms_readtracelist, msr_starttime) — exact to the µs.
    expect(stream.startTimeUs).toBe(first.start_us);
    expect(stream.sampleRateHz).toBe(first.samprate);
    // float32 values are printed with 9 significant digits: the nearest binary32 is the value.
    const all = segs.flatMap((s) => (s.sampletype === 'f' ? s.samples.map((v) => Math.fround(v)) : s.samples));
    expect(stream.samples.length).toBe(all.length);
    // Exact sample-by-sample equality: integers, and float32/float64 printed by libmseed with 9/17
    // significant digits (round-trip exact for binary32/binary64).
    let mismatches = 0;
    for (let i = 0; i < all.length; i++) if (stream.samples[i] !== all[i]) mismatches++;
    expect(mismatches).toBe(0);
    // Every libmseed segment boundary is one of our discontinuities, at the same sample index.
    expect(stream.discontinuities.length).toBe(segs.length - 1);
    let index = 0;
    segs.forEach((seg, k) => {
      if (k > 0) {
        const d = stream.discontinuities[k - 1];
        expect(d?.sampleIndex).toBe(index);
        expect(d?.actualTimeUs).toBe(seg.start_us);
      }
      index += seg.samples.length;
    });
  }
}

describe('MiniSEED 2 decoding against libmseed-written fixtures (libmseed 2.19, Debian libmseed-dev)', () => {
  it('has the fixtures the issue asks for', () => {
    // every encoding × both byte orders, record lengths 256/512/4096/8192, multi-stream, gap
    const all = names.map((n) => load(n).expected.records).flat();
    for (const enc of ['int16', 'int32', 'float32', 'float64', 'steim1', 'steim2']) {
      for (const order of ['big', 'little']) {
        expect(all.some((r) => r.encoding === enc && r.byteorder === order), `${enc} ${order}`).toBe(true);
      }
    }
    for (const len of [256, 512, 4096, 8192]) expect(all.some((r) => r.reclen === len)).toBe(true);
    expect(names).toContain('multi-stream');
    expect(names).toContain('gap-overlap');
  });

  for (const name of names) {
    it(`${name}: decodes sample by sample equal to libmseed`, () => {
      const { bytes, expected } = load(name);
      const streams = decodeWaveform(bytes, { filename: `${name}.mseed` });
      // the fixture holds what its name says (encoding, byte order, record length)
      const m = /^(int16|int32|float32|float64|steim1|steim2)-(be|le)-(\d+)$/u.exec(name);
      if (m) {
        for (const r of expected.records) {
          expect(r.encoding).toBe(m[1]);
          expect(r.byteorder).toBe(m[2] === 'be' ? 'big' : 'little');
          expect(r.reclen).toBe(Number(m[3]));
        }
        expect(expected.records.length).toBeGreaterThan(1); // multi-record
        expect(streams[0]?.encoding).toBe(m[1]);
      }
      for (const s of streams) expect(s.format).toBe('mseed2');
      compareWithLibmseed(streams, expected);
    });
  }

  it('applies the header time correction and blockette 1001 µs as libmseed does', () => {
    const { bytes, expected } = load('steim2-timecorr');
    const [stream] = decodeMiniSeed2(bytes);
    // Given to libmseed: 2026-03-14T12:00:00.123457Z with time correction 1234 × 0.0001 s, not
    // applied; libmseed reads back start + 0.1234 s (msr_starttime).
    expect(expected.records[0]?.b1001).toBe(true);
    expect(stream?.startTimeUs).toBe(Date.UTC(2026, 2, 14, 12) * 1000 + 123457 + 123400);
    const applied = decodeMiniSeed2(load('steim2-timecorr-applied').bytes)[0];
    expect(applied?.startTimeUs).toBe(Date.UTC(2026, 2, 14, 12) * 1000 + 123457);
  });

  it('reports the 2.5 s gap and the 0.5 s overlap', () => {
    const [stream] = decodeMiniSeed2(load('gap-overlap').bytes);
    // The C program wrote 1000 samples at 100 Hz, then 800 samples 2.5 s late, then 600 samples
    // starting 0.5 s before the previous end.
    expect(stream?.discontinuities.map((d) => d.durationS)).toEqual([2.5, -0.5]);
    expect(stream?.discontinuities.map((d) => d.sampleIndex)).toEqual([1000, 1800]);
  });
});

describe('MiniSEED 2 header rules (SEED manual 2.4)', () => {
  it('derives the sample rate from factor and multiplier (SEED 2.4 fixed header fields 10-11)', () => {
    expect(nominalRate(100, 1)).toBe(100);
    expect(nominalRate(-10, 1)).toBe(0.1);
    expect(nominalRate(1, -10)).toBe(0.1);
    expect(nominalRate(-2, -5)).toBe(0.1);
    expect(nominalRate(0, 1)).toBe(0);
  });

  const base = (): Uint8Array => load('steim2-be-512').bytes.slice(0, 512);
  const view = (b: Uint8Array): DataView => new DataView(b.buffer, b.byteOffset, b.byteLength);

  it('accepts the data quality indicators D, R, Q and M', () => {
    for (const q of 'DRQM') {
      const b = base();
      b[6] = q.charCodeAt(0);
      expect(decodeMiniSeed2(b)[0]?.samples.length).toBeGreaterThan(0);
    }
  });

  it('refuses a record without blockette 1000', () => {
    const b = base();
    view(b).setUint16(46, 0); // first blockette offset → none
    expect(() => decodeMiniSeed2(b)).toThrow(/no blockette 1000/u);
  });

  it('refuses a blockette chain that loops', () => {
    const b = base();
    const first = view(b).getUint16(46);
    view(b).setUint16(first + 2, first); // next → itself
    expect(() => decodeMiniSeed2(b)).toThrow(/loop in the blockette chain/u);
  });

  it('names the record when the Steim reverse integration constant disagrees', () => {
    const b = base();
    const dataOffset = view(b).getUint16(44);
    view(b).setInt32(dataOffset + 8, view(b).getInt32(dataOffset + 8) + 1);
    expect(() => decodeMiniSeed2(b)).toThrow(/record 1 at byte 0: Steim-2 last sample .* reverse integration constant/u);
  });

  it('refuses a truncated record and a sample count that cannot fit', () => {
    expect(() => decodeMiniSeed2(base().slice(0, 300))).toThrow(WaveformParseError);
    expect(() => decodeMiniSeed2(base().slice(0, 300))).toThrow(/truncated/u);
    const b = load('int32-le-256').bytes.slice(0, 256);
    view(b).setUint16(30, 5000, true);
    expect(() => decodeMiniSeed2(b)).toThrow(/declares 5000 int32 samples/u);
  });

  it('refuses an implausible start time and an absurd record length', () => {
    const b = base();
    view(b).setUint16(20, 0x0101); // year 257 either way
    expect(() => decodeMiniSeed2(b)).toThrow(/implausible in either byte order/u);
    const c = base();
    const first = view(c).getUint16(46);
    c[first + 6] = 30; // 2^30-byte record
    expect(() => decodeMiniSeed2(c)).toThrow(/record length 2\^30/u);
  });
});

describe('MiniSEED 2 record built by hand from the SEED manual 2.4 layout', () => {
  /**
   * Fixed header little-endian, data big-endian (word order from blockette 1000), a 200-byte
   * blockette 500 (timing) to be skipped by its next offset, a blockette 100 (actual sample rate)
   * and int32 data at byte 320 of a 512-byte record.
   */
  function handRecord(): Uint8Array {
    const rec = new Uint8Array(512);
    const v = new DataView(rec.buffer);
    const le = true;
    rec.set(new TextEncoder().encode('000001D KV06 00HHZXX'), 0); // seq, quality, reserved, sta, loc, cha, net
    v.setUint16(20, 2026, le);
    v.setUint16(22, 73, le); // 14 March
    rec[24] = 9;
    rec[25] = 26;
    rec[26] = 53;
    v.setUint16(28, 5891, le); // 0.5891 s
    v.setUint16(30, 48, le); // samples
    v.setInt16(32, 100, le); // rate factor
    v.setInt16(34, 1, le); // rate multiplier
    rec[36] = 0; // activity flags: time correction not applied
    rec[39] = 3; // blockettes that follow
    v.setInt32(40, -25, le); // time correction −0.0025 s
    v.setUint16(44, 320, le); // beginning of data
    v.setUint16(46, 48, le); // first blockette
    // blockette 1000 at 48 → next 56
    v.setUint16(48, 1000, le);
    v.setUint16(50, 56, le);
    rec[52] = 3; // int32
    rec[53] = 1; // big-endian data
    rec[54] = 9; // 2^9 = 512
    // blockette 500 (timing, 200 bytes) at 56 → next 256; its content is irrelevant here
    v.setUint16(56, 500, le);
    v.setUint16(58, 256, le);
    // blockette 100 (sample rate) at 256 → end of chain
    v.setUint16(256, 100, le);
    v.setUint16(258, 0, le);
    v.setFloat32(260, 99.99, le);
    for (let i = 0; i < 48; i++) v.setInt32(320 + i * 4, (i - 24) * 1000003, false);
    return rec;
  }

  it('follows the chain, applies the correction, reads big-endian data behind a little-endian header', () => {
    const [s] = decodeMiniSeed2(handRecord());
    expect(s?.id).toBe('XX.KV06.00.HHZ');
    expect(s?.startTimeUs).toBe(Date.UTC(2026, 2, 14, 9, 26, 53) * 1000 + 589_100 - 2_500);
    expect(s?.sampleRateHz).toBe(Math.fround(99.99)); // blockette 100 overrides factor/multiplier
    expect(Array.from(s?.samples ?? [])).toEqual(Array.from({ length: 48 }, (_, i) => (i - 24) * 1000003));
  });

  it('refuses a chain that runs past the record', () => {
    const b = handRecord();
    new DataView(b.buffer).setUint16(58, 510, true); // next blockette at 510: its 8 bytes cross the end
    expect(() => decodeMiniSeed2(b)).toThrow(WaveformParseError);
  });
});
