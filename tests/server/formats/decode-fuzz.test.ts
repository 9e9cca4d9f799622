import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { crc32c } from '@server/formats/crc32c';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { WaveformParseError } from '@server/formats/types';

/**
 * Property tests (fast-check): whatever is done to a valid file, decodeWaveform returns streams or
 * throws WaveformParseError — never another exception, never the "internal decoder error" safety
 * net (which would mean an unguarded read), never an allocation beyond what the bytes can hold.
 * A hang would fail the test by vitest's timeout.
 */

const FIXTURES = join(import.meta.dirname, '../../fixtures/mseed');
const fixture = (name: string): Uint8Array => new Uint8Array(readFileSync(join(FIXTURES, `${name}.mseed`)));

const signal = Int32Array.from({ length: 1500 }, (_, i) => Math.round(2 ** (i % 20) * Math.sin(i * 0.3)));
const stream = { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 1_773_480_413_589_100 };

const corpus: Record<string, Uint8Array> = {
  'libmseed steim2 be': fixture('steim2-be-512').slice(0, 2048),
  'libmseed steim1 le': fixture('steim1-le-256').slice(0, 1024),
  'libmseed float64 le': fixture('float64-le-512'),
  'libmseed int16 be': fixture('int16-be-256'),
  'libmseed timecorr': fixture('steim2-timecorr').slice(0, 1024),
  'libmseed multi-stream': fixture('multi-stream').slice(0, 2048),
  'ours ms2 steim2': encodeMiniSeed2({ ...stream, samples: signal }, { encoding: 'steim2', recordLength: 512 }),
  'ours ms2 int32 le': encodeMiniSeed2({ ...stream, samples: signal }, { encoding: 'int32', recordLength: 256, byteOrder: 'little' }),
  'ours ms3 steim2': encodeMiniSeed3({ ...stream, samples: signal }, { encoding: 'steim2', maxRecordLength: 512, extraHeaders: { FDSN: { Time: { Quality: 80 } } } }),
  'ours ms3 float32': encodeMiniSeed3({ ...stream, samples: Float32Array.from(signal) }, { encoding: 'float32', maxRecordLength: 512 }),
  csv: new TextEncoder().encode(
    `# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53.589Z\nt_seconds,counts\n${Array.from({ length: 60 }, (_, i) => `${(i / 100).toFixed(2)},${i % 7}`).join('\n')}\n`,
  ),
};
const names = Object.keys(corpus);

/** Runs the decoder and checks the contract; returns what happened for statistics. */
function checkContract(bytes: Uint8Array): 'ok' | 'refused' {
  try {
    const streams = decodeWaveform(bytes, { streamId: 'XX.KV01.00.HHZ' });
    let total = 0;
    for (const s of streams) {
      total += s.samples.length;
      expect(s.id).toBe(`${s.network}.${s.station}.${s.location}.${s.channel}`);
      expect(s.sampleRateHz).toBeGreaterThan(0);
      expect(Number.isFinite(s.startTimeUs)).toBe(true);
    }
    // Steim-2 holds at most 7 samples per 4 bytes; text at most one sample per 2 bytes.
    expect(total).toBeLessThanOrEqual(2 * bytes.length);
    return 'ok';
  } catch (err) {
    if (!(err instanceof WaveformParseError)) throw err;
    expect(err.message).not.toMatch(/internal decoder error/u);
    expect(err.message.length).toBeGreaterThan(5);
    return 'refused';
  }
}

/** Re-computes the CRC of every miniSEED 3 record it can walk, so mutations reach past the CRC. */
function fixMs3Crcs(bytes: Uint8Array): Uint8Array {
  const out = bytes.slice();
  const v = new DataView(out.buffer);
  let o = 0;
  while (o + 40 <= out.length && out[o] === 0x4d && out[o + 1] === 0x53) {
    const len = 40 + (out[o + 33] ?? 0) + v.getUint16(o + 34, true) + v.getUint32(o + 36, true);
    if (o + len > out.length) break;
    const rec = out.subarray(o, o + len);
    v.setUint32(o + 28, 0, true);
    v.setUint32(o + 28, crc32c(rec), true);
    o += len;
  }
  return out;
}

const pick = fc.constantFrom(...names);
const RUNS = 400;

describe('decodeWaveform never throws anything but WaveformParseError (fast-check)', () => {
  it('decodes the unmutated corpus', () => {
    for (const name of names) expect(checkContract(corpus[name] ?? new Uint8Array()), name).toBe('ok');
  });

  it('bit flips', () => {
    fc.assert(
      fc.property(pick, fc.array(fc.nat(), { minLength: 1, maxLength: 8 }), fc.boolean(), (name, flips, fixCrc) => {
        const src = corpus[name] ?? new Uint8Array();
        let b: Uint8Array = src.slice();
        for (const f of flips) {
          const bit = f % (b.length * 8);
          b[bit >> 3] = (b[bit >> 3] ?? 0) ^ (1 << (bit & 7));
        }
        if (fixCrc) b = fixMs3Crcs(b);
        checkContract(b);
      }),
      { numRuns: RUNS, seed: 1 },
    );
  });

  it('truncation and extension', () => {
    fc.assert(
      fc.property(pick, fc.nat(), fc.uint8Array({ maxLength: 64 }), (name, cut, tail) => {
        const src = corpus[name] ?? new Uint8Array();
        const b = src.subarray(0, cut % (src.length + 1));
        checkContract(b);
        checkContract(new Uint8Array([...b, ...tail]));
      }),
      { numRuns: RUNS, seed: 2 },
    );
  });

  it('altered header fields (lying sample counts, offsets, lengths, rates, times)', () => {
    // Offsets of MiniSEED 2 fields (SEED 2.4) and miniSEED 3 fields (FDSN 2022) worth lying in.
    const ms2Fields = [20, 22, 24, 28, 30, 32, 34, 36, 39, 40, 44, 46, 48, 50, 52, 53, 54, 56, 58, 61, 63, 64, 68, 72];
    const ms3Fields = [3, 4, 8, 10, 12, 15, 16, 20, 24, 28, 33, 34, 36, 40];
    fc.assert(
      fc.property(
        pick,
        fc.array(fc.tuple(fc.nat(), fc.integer({ min: 0, max: 0xffffffff }), fc.constantFrom(1, 2, 4), fc.nat(6)), { minLength: 1, maxLength: 4 }),
        (name, edits) => {
          const src = corpus[name] ?? new Uint8Array();
          const b = src.slice();
          const v = new DataView(b.buffer);
          const isMs3 = name.includes('ms3');
          const fields = isMs3 ? ms3Fields : ms2Fields;
          for (const [which, value, width, recordNo] of edits) {
            const recLen = isMs3 ? 0 : name.includes('256') || name.includes('steim1 le') || name.includes('int16') || name.includes('int32 le') ? 256 : 512;
            const base = isMs3 ? 0 : (recordNo * recLen) % Math.max(b.length, 1);
            const off = base + (fields[which % fields.length] ?? 0);
            if (off + width > b.length) continue;
            if (width === 1) v.setUint8(off, value & 0xff);
            else if (width === 2) v.setUint16(off, value & 0xffff, (value & 1) === 0);
            else v.setUint32(off, value, (value & 2) === 0);
          }
          checkContract(isMs3 ? fixMs3Crcs(b) : b);
        },
      ),
      { numRuns: RUNS, seed: 3 },
    );
  });

  it('random bytes, and random bytes behind a valid-looking header', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 2048 }), pick, fc.nat(64), (noise, name, keep) => {
        checkContract(noise);
        const src = corpus[name] ?? new Uint8Array();
        const b = new Uint8Array(Math.max(src.length, keep));
        b.set(src.subarray(0, keep));
        b.set(noise.subarray(0, Math.max(0, b.length - keep)), keep);
        checkContract(b);
        checkContract(fixMs3Crcs(b));
      }),
      { numRuns: RUNS, seed: 4 },
    );
  });

  it('record shuffles and splices between files', () => {
    fc.assert(
      fc.property(pick, pick, fc.nat(), fc.nat(), (a, c, i, j) => {
        const x = corpus[a] ?? new Uint8Array();
        const y = corpus[c] ?? new Uint8Array();
        const cutX = i % (x.length + 1);
        const cutY = j % (y.length + 1);
        checkContract(new Uint8Array([...x.subarray(0, cutX), ...y.subarray(cutY)]));
      }),
      { numRuns: RUNS, seed: 5 },
    );
  });
});
