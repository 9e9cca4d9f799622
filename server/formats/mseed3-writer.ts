import { crc32c } from './crc32c';
import { MS3_FIXED_HEADER_LENGTH } from './mseed3';
import { encodeSteim } from './steim-encode';
import type { StreamHeader } from './types';

/**
 * A stream to write as miniSEED 3: the channel a SEED code of 3 characters (band, source,
 * subsource), e.g. `HHZ`; the rate > 0; the start an integer number of µs.
 */
export interface MiniSeed3Input extends StreamHeader {
  /** Counts (Int32Array) or floats (Float32Array / Float64Array for float encodings). */
  samples: Int32Array | Float32Array | Float64Array;
}

/** miniSEED 3 writer options. */
export interface MiniSeed3WriteOptions {
  encoding: 'steim2' | 'steim1' | 'int16' | 'int32' | 'float32' | 'float64';
  /** Largest record, bytes (default 4096); records hold as many samples as fit. */
  maxRecordLength?: number;
  /** Extra headers, written as JSON text in every record (omitted when undefined). */
  extraHeaders?: unknown;
  /** Flags byte (bit 0 calibration signals, 1 time tag questionable, 2 clock locked); default 0. */
  flags?: number;
  /** Data publication version (default 1). */
  publicationVersion?: number;
}

const CODES = { int16: 1, int32: 3, float32: 4, float64: 5, steim1: 10, steim2: 11 } as const;

/**
 * Writes miniSEED 3 records (FDSN miniSEED 3 specification, 2022): our own encoder, used to build
 * test fixtures and hostile-input corpora (Debian's libmseed 2.19 cannot write version 3).
 *
 * Each record: the 40-byte little-endian fixed header (see mseed3.ts for the layout), the FDSN
 * source identifier `FDSN:NET_STA_LOC_B_S_SS` (channel `HHZ` → `H_H_Z`), the extra headers as
 * compact JSON, then the data: int16/int32/float32/float64 little-endian, Steim-1/2 big-endian as
 * the specification requires. Start time: µs × 1000 as nanoseconds. Sample rate field: the rate in
 * Hz when ≥ 1, else the negative period in seconds (the specification's notation for slow rates).
 * The CRC-32C is computed over the record with its CRC field zeroed, then stored.
 *
 * @throws RangeError for an empty or non-3-character channel, a bad rate or start time, samples
 *   that do not fit the encoding, or records too small for one sample
 */
export function encodeMiniSeed3(stream: MiniSeed3Input, opts: MiniSeed3WriteOptions): Uint8Array {
  const maxLen = opts.maxRecordLength ?? 4096;
  if (stream.channel.length !== 3) {
    throw new RangeError(`channel code '${stream.channel}' must have 3 characters (band, source, subsource)`);
  }
  if (!(stream.sampleRateHz > 0) || !Number.isFinite(stream.sampleRateHz)) {
    throw new RangeError(`sample rate ${stream.sampleRateHz} Hz must be a positive number`);
  }
  if (!Number.isInteger(stream.startTimeUs)) throw new RangeError(`start time ${stream.startTimeUs} µs is not an integer`);
  const [b, s, ss] = stream.channel;
  const sid = `FDSN:${stream.network}_${stream.station}_${stream.location}_${b}_${s}_${ss}`;
  const sidBytes = new TextEncoder().encode(sid);
  if (sidBytes.length > 255) throw new RangeError(`source identifier '${sid}' is longer than 255 bytes`);
  const extra = opts.extraHeaders === undefined ? new Uint8Array(0) : new TextEncoder().encode(JSON.stringify(opts.extraHeaders));
  if (extra.length > 65535) throw new RangeError(`extra headers are ${extra.length} bytes, more than 65535`);
  const code = CODES[opts.encoding];
  const steim = opts.encoding === 'steim1' || opts.encoding === 'steim2';
  const room = maxLen - MS3_FIXED_HEADER_LENGTH - sidBytes.length - extra.length;
  const width = opts.encoding === 'int16' ? 2 : opts.encoding === 'float64' ? 8 : 4;
  if (room < (steim ? 64 : width)) throw new RangeError(`a ${maxLen}-byte record has no room for data`);

  let ints: Int32Array | undefined;
  if (opts.encoding === 'int16' || opts.encoding === 'int32' || steim) {
    ints = new Int32Array(stream.samples.length);
    for (let i = 0; i < stream.samples.length; i++) {
      const v = stream.samples[i] ?? 0;
      const lim = opts.encoding === 'int16' ? 32768 : 2147483648;
      if (!Number.isInteger(v) || v < -lim || v >= lim) {
        throw new RangeError(`sample ${i} = ${v} does not fit ${opts.encoding}`);
      }
      ints[i] = v;
    }
  }
  const records: Uint8Array[] = [];
  const n = stream.samples.length;
  let index = 0;
  while (index < n || (n === 0 && records.length === 0)) {
    let data: Uint8Array;
    let count: number;
    if (steim && ints) {
      const packed = encodeSteim(ints, index, Math.floor(room / 64), opts.encoding === 'steim1' ? 1 : 2, false);
      data = packed.bytes;
      count = packed.count;
    } else {
      count = Math.min(Math.floor(room / width), n - index);
      data = new Uint8Array(count * width);
      const v = new DataView(data.buffer);
      for (let k = 0; k < count; k++) {
        const x = opts.encoding === 'int16' || opts.encoding === 'int32' ? (ints?.[index + k] ?? 0) : (stream.samples[index + k] ?? 0);
        if (opts.encoding === 'int16') v.setInt16(k * 2, x, true);
        else if (opts.encoding === 'int32') v.setInt32(k * 4, x, true);
        else if (opts.encoding === 'float32') v.setFloat32(k * 4, x, true);
        else v.setFloat64(k * 8, x, true);
      }
    }
    const startUs = stream.startTimeUs + Math.round((index * 1e6) / stream.sampleRateHz);
    records.push(buildRecord({ startUs, code, rate: stream.sampleRateHz, count, sidBytes, extra, data, opts }));
    index += count;
    if (n === 0) break;
  }
  const total = records.reduce((a, r) => a + r.length, 0);
  const out = new Uint8Array(total);
  let o = 0;
  for (const r of records) {
    out.set(r, o);
    o += r.length;
  }
  return out;
}

interface RecordParts {
  startUs: number;
  code: number;
  rate: number;
  count: number;
  sidBytes: Uint8Array;
  extra: Uint8Array;
  data: Uint8Array;
  opts: MiniSeed3WriteOptions;
}

function buildRecord(p: RecordParts): Uint8Array {
  const len = MS3_FIXED_HEADER_LENGTH + p.sidBytes.length + p.extra.length + p.data.length;
  const rec = new Uint8Array(len);
  const v = new DataView(rec.buffer);
  const secondUs = Math.floor(p.startUs / 1e6) * 1e6;
  const date = new Date(secondUs / 1000);
  const year = date.getUTCFullYear();
  const day = Math.floor((Date.UTC(year, date.getUTCMonth(), date.getUTCDate()) - Date.UTC(year, 0, 1)) / 86_400_000) + 1;
  rec[0] = 0x4d;
  rec[1] = 0x53;
  rec[2] = 3;
  rec[3] = p.opts.flags ?? 0;
  v.setUint32(4, (p.startUs - secondUs) * 1000, true);
  v.setUint16(8, year, true);
  v.setUint16(10, day, true);
  rec[12] = date.getUTCHours();
  rec[13] = date.getUTCMinutes();
  rec[14] = date.getUTCSeconds();
  rec[15] = p.code;
  v.setFloat64(16, p.rate >= 1 ? p.rate : -1 / p.rate, true);
  v.setUint32(24, p.count, true);
  v.setUint32(28, 0, true);
  rec[32] = p.opts.publicationVersion ?? 1;
  rec[33] = p.sidBytes.length;
  v.setUint16(34, p.extra.length, true);
  v.setUint32(36, p.data.length, true);
  rec.set(p.sidBytes, MS3_FIXED_HEADER_LENGTH);
  rec.set(p.extra, MS3_FIXED_HEADER_LENGTH + p.sidBytes.length);
  rec.set(p.data, MS3_FIXED_HEADER_LENGTH + p.sidBytes.length + p.extra.length);
  v.setUint32(28, crc32c(rec), true);
  return rec;
}
