import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { decodeStoredSamples, encodeSamples, fitsInt32, isTaggedSamples, SAMPLES_HEADER_BYTES } from '@server/db/samples-codec';
import { samplesToBytes } from '@server/features/ingest/ingest-upload';

describe('stored samples codec', () => {
  it('counts become a tagged int32 blob: header bytes, then two’s-complement little-endian int32 (IEEE/ISO C int32_t, LE)', () => {
    const x = Float64Array.from([0, 1, -1, 2147483647, -2147483648]);
    const b = encodeSamples(x);
    expect(b.length).toBe(SAMPLES_HEADER_BYTES + 5 * 4);
    expect([...b.subarray(0, 8)]).toEqual([0x53, 0x4b, 1, 0, 0, 0, 0xf8, 0x7f]);
    // -1 as int32 LE is FF FF FF FF; 2^31 − 1 is FF FF FF 7F; −2^31 is 00 00 00 80.
    expect([...b.subarray(16, 20)]).toEqual([0xff, 0xff, 0xff, 0xff]);
    expect([...b.subarray(20, 24)]).toEqual([0xff, 0xff, 0xff, 0x7f]);
    expect([...b.subarray(24, 28)]).toEqual([0, 0, 0, 0x80]);
    expect(Array.from(decodeStoredSamples(b, 5))).toEqual(Array.from(x));
  });

  it('the header read as a little-endian float64 is a NaN (IEEE 754: exponent all ones, mantissa ≠ 0), which no stored legacy sample can be', () => {
    const b = encodeSamples(Float64Array.from([3]));
    expect(Number.isNaN(b.readDoubleLE(0))).toBe(true);
    expect(isTaggedSamples(b)).toBe(true);
    expect(isTaggedSamples(samplesToBytes(Float64Array.from([3])))).toBe(false);
  });

  it('non-integers, values beyond int32 and −0 stay float64, exactly', () => {
    for (const x of [Float64Array.from([0.5, 1]), Float64Array.from([2147483648]), Float64Array.from([-0, 1]), Float64Array.from([1e-300, -Number.MAX_VALUE])]) {
      expect(fitsInt32(x)).toBe(false);
      const b = encodeSamples(x);
      expect(b[2]).toBe(2);
      expect(b.length).toBe(SAMPLES_HEADER_BYTES + x.length * 8);
      const y = decodeStoredSamples(b, x.length);
      expect(y.length).toBe(x.length);
      x.forEach((v, i) => expect(Object.is(y[i], v)).toBe(true));
    }
  });

  it('legacy rows (bare float64 LE, no header) still read', () => {
    const x = Float64Array.from([1.5, -2.25, 12345]);
    const legacy = samplesToBytes(x);
    expect(Array.from(decodeStoredSamples(legacy, 3))).toEqual([1.5, -2.25, 12345]);
    expect(Array.from(decodeStoredSamples(legacy))).toEqual([1.5, -2.25, 12345]);
    expect(() => decodeStoredSamples(legacy, 4)).toThrow(/24 bytes, expected 4 × 8/);
    expect(() => decodeStoredSamples(new Uint8Array(7))).toThrow(/not a whole number of float64/);
  });

  it('deflated payloads are raw DEFLATE (RFC 1951): Python’s zlib inflates them to the same int32 bytes', () => {
    const x = new Float64Array(2000);
    for (let i = 0; i < x.length; i++) x[i] = Math.round(300 * Math.sin(i / 7)) | 0;
    const b = encodeSamples(x, { deflateLevel: 1 });
    expect(b[3]).toBe(1);
    expect(Array.from(decodeStoredSamples(b, x.length))).toEqual(Array.from(x));
    // Independent check: CPython's zlib module, wbits = -15 selects a raw DEFLATE stream.
    const py = spawnSync('/usr/bin/python3', ['-c', 'import sys,zlib,struct; d=zlib.decompress(sys.stdin.buffer.read(), -15); print(",".join(str(v) for v in struct.unpack("<%di" % (len(d)//4), d)))'], { input: b.subarray(SAMPLES_HEADER_BYTES) });
    expect(py.status).toBe(0);
    expect(py.stdout.toString().trim().split(',').map(Number)).toEqual(Array.from(x));
  });

  it('refuses bad blobs and options with a message naming the problem', () => {
    const b = encodeSamples(Float64Array.from([1, 2]));
    expect(() => decodeStoredSamples(b, 3)).toThrow(/hold 2 int32 values, expected 3/);
    const badEnc = Buffer.from(b);
    badEnc[2] = 9;
    expect(() => decodeStoredSamples(badEnc)).toThrow(/unknown sample encoding 9/);
    const badComp = Buffer.from(b);
    badComp[3] = 7;
    expect(() => decodeStoredSamples(badComp)).toThrow(/unknown compression 7/);
    expect(() => decodeStoredSamples(b.subarray(0, b.length - 1))).toThrow(/7 payload bytes are not a whole number of int32/);
    const corrupt = Buffer.concat([b.subarray(0, 8), Buffer.from([0xff, 0xff, 0xff])]);
    corrupt[3] = 1;
    expect(() => decodeStoredSamples(corrupt)).toThrow(/DEFLATE stream is corrupt/);
    expect(() => encodeSamples(Float64Array.from([1]), { deflateLevel: 0 })).toThrow(/deflate level must be a whole number from 1 to 9/);
  });
});
