import { encodeSteim } from './steim-encode';
import type { StreamHeader } from './types';

/**
 * A stream to write: codes, rate, start and samples. The codes fit the SEED 2 field widths (network
 * 1–2 characters, station 1–5, location 0–2, channel 3 or fewer); the rate is > 0 and must be exact
 * as factor/multiplier (see below); the start is an integer number of µs.
 */
export interface MiniSeed2Input extends StreamHeader {
  /** Samples: counts (Int32Array) or floats (Float32Array; integer encodings need integral values). */
  samples: Int32Array | Float32Array;
}

/** Writer options. */
export interface MiniSeed2WriteOptions {
  encoding: 'steim2' | 'steim1' | 'int32' | 'float32' | 'int16' | 'float64';
  /** Record length, bytes: a power of two 256–8192 (default 4096). */
  recordLength?: number;
  /** Byte order of header and data (default big-endian, SEED practice). */
  byteOrder?: 'big' | 'little';
  /** Data-quality indicator (default `D`). */
  quality?: 'D' | 'R' | 'Q' | 'M';
  /** First sequence number (default 1); it wraps from 999999 to 1. */
  firstSequenceNumber?: number;
}

const ENCODING_CODES = { int16: 1, int32: 3, float32: 4, float64: 5, steim1: 10, steim2: 11 } as const;
const HEADER_BYTES = 64; // 48-byte fixed header + blockette 1000 (8) + blockette 1001 (8)

/**
 * Writes a stream as MiniSEED 2 records (FDSN SEED manual 2.4, data-only SEED), our own encoder.
 *
 * Each record: the 48-byte fixed header (sequence number, quality, codes, BTIME start at 0.0001 s,
 * sample count, rate factor/multiplier, no flags, no time correction, data at byte 64), blockette
 * 1000 at byte 48 (encoding, word order, record length exponent) and blockette 1001 at byte 56
 * (timing quality 0 = not stated, the µs beyond BTIME's 0.0001 s, frames used for Steim). Record k
 * starts at `startTimeUs + round(first sample index × 10^6 / rate)` µs. The last record is padded
 * with zeros to the record length.
 *
 * Sample rate: an integer rate ≤ 32767 Hz is written as factor = rate, multiplier = 1; a rate whose
 * period is an integer ≤ 32767 s as factor = −period, multiplier = 1; otherwise the best fraction
 * p/q with p, q ≤ 32767 (factor p, multiplier −q), refused when it is not within 1e-9 relative.
 *
 * @returns the file bytes (a whole number of records)
 * @throws RangeError for codes that do not fit SEED 2 fields, a bad record length, rate or start
 *   time, non-integral or out-of-range samples for an integer encoding, or a Steim difference too
 *   large (Steim-2 holds 30-bit differences)
 */
export function encodeMiniSeed2(stream: MiniSeed2Input, opts: MiniSeed2WriteOptions): Uint8Array {
  const recordLength = opts.recordLength ?? 4096;
  const exponent = Math.log2(recordLength);
  if (!Number.isInteger(exponent) || exponent < 8 || exponent > 13) {
    throw new RangeError(`record length ${recordLength} is not a power of two from 256 to 8192 bytes`);
  }
  const le = opts.byteOrder === 'little';
  const code = ENCODING_CODES[opts.encoding];
  checkCode(stream.network, 1, 2, 'network');
  checkCode(stream.station, 1, 5, 'station');
  checkCode(stream.location, 0, 2, 'location');
  checkCode(stream.channel, 1, 3, 'channel');
  if (!Number.isInteger(stream.startTimeUs)) throw new RangeError(`start time ${stream.startTimeUs} µs is not an integer`);
  const [factor, multiplier] = rateFactors(stream.sampleRateHz);
  const quality = opts.quality ?? 'D';

  const integer = opts.encoding !== 'float32' && opts.encoding !== 'float64';
  let ints: Int32Array | undefined;
  if (integer) {
    if (stream.samples instanceof Int32Array) ints = stream.samples;
    else {
      ints = new Int32Array(stream.samples.length);
      for (let i = 0; i < stream.samples.length; i++) {
        const v = stream.samples[i] ?? 0;
        if (!Number.isInteger(v) || v < -2147483648 || v > 2147483647) {
          throw new RangeError(`sample ${i} = ${v} is not a 32-bit integer, needed for ${opts.encoding}`);
        }
        ints[i] = v;
      }
    }
    if (opts.encoding === 'int16') {
      for (let i = 0; i < ints.length; i++) {
        const v = ints[i] ?? 0;
        if (v < -32768 || v > 32767) throw new RangeError(`sample ${i} = ${v} does not fit int16`);
      }
    }
  }
  const floats = stream.samples;
  const dataBytes = recordLength - HEADER_BYTES;
  const n = stream.samples.length;
  const records: Uint8Array[] = [];
  let index = 0;
  let seq = opts.firstSequenceNumber ?? 1;
  while (index < n || (n === 0 && records.length === 0)) {
    const rec = new Uint8Array(recordLength);
    const view = new DataView(rec.buffer);
    let count: number;
    let frames = 0;
    if ((opts.encoding === 'steim1' || opts.encoding === 'steim2') && ints) {
      const packed = encodeSteim(ints, index, dataBytes / 64, opts.encoding === 'steim1' ? 1 : 2, le);
      rec.set(packed.bytes, HEADER_BYTES);
      count = packed.count;
      frames = packed.frames;
    } else {
      const width = opts.encoding === 'int16' ? 2 : opts.encoding === 'float64' ? 8 : 4;
      count = Math.min(Math.floor(dataBytes / width), n - index);
      for (let k = 0; k < count; k++) {
        const o = HEADER_BYTES + k * width;
        if (opts.encoding === 'int16') view.setInt16(o, ints?.[index + k] ?? 0, le);
        else if (opts.encoding === 'int32') view.setInt32(o, ints?.[index + k] ?? 0, le);
        else if (opts.encoding === 'float32') view.setFloat32(o, floats[index + k] ?? 0, le);
        else view.setFloat64(o, floats[index + k] ?? 0, le);
      }
    }
    const startUs = stream.startTimeUs + Math.round((index * 1e6) / stream.sampleRateHz);
    writeHeader(view, rec, {
      seq,
      quality,
      stream,
      startUs,
      count,
      factor,
      multiplier,
      code,
      le,
      exponent,
      frames,
    });
    records.push(rec);
    index += count;
    seq = seq >= 999_999 ? 1 : seq + 1;
    if (n === 0) break;
  }
  const out = new Uint8Array(records.length * recordLength);
  records.forEach((r, k) => out.set(r, k * recordLength));
  return out;
}

interface HeaderFields {
  seq: number;
  quality: string;
  stream: MiniSeed2Input;
  startUs: number;
  count: number;
  factor: number;
  multiplier: number;
  code: number;
  le: boolean;
  exponent: number;
  frames: number;
}

function writeHeader(view: DataView, rec: Uint8Array, h: HeaderFields): void {
  const ascii = (offset: number, width: number, text: string): void => {
    const padded = text.padEnd(width, ' ');
    for (let i = 0; i < width; i++) rec[offset + i] = padded.charCodeAt(i);
  };
  ascii(0, 6, String(h.seq).padStart(6, '0'));
  ascii(6, 1, h.quality);
  ascii(7, 1, ' ');
  ascii(8, 5, h.stream.station);
  ascii(13, 2, h.stream.location);
  ascii(15, 3, h.stream.channel);
  ascii(18, 2, h.stream.network);
  // BTIME: year, day of year, h, m, s, unused, 0.0001 s; the remaining µs go to blockette 1001.
  const ms = Math.floor(h.startUs / 1000);
  const date = new Date(ms);
  const year = date.getUTCFullYear();
  if (year < 1900 || year > 2100) throw new RangeError(`start year ${year} is outside 1900–2100`);
  const dayOfYear = Math.floor((Date.UTC(year, date.getUTCMonth(), date.getUTCDate()) - Date.UTC(year, 0, 1)) / 86_400_000) + 1;
  const usInSecond = h.startUs - Math.floor(h.startUs / 1e6) * 1e6;
  const tenThousandths = Math.floor(usInSecond / 100);
  const usec = usInSecond - tenThousandths * 100;
  view.setUint16(20, year, h.le);
  view.setUint16(22, dayOfYear, h.le);
  view.setUint8(24, date.getUTCHours());
  view.setUint8(25, date.getUTCMinutes());
  view.setUint8(26, date.getUTCSeconds());
  view.setUint8(27, 0);
  view.setUint16(28, tenThousandths, h.le);
  view.setUint16(30, h.count, h.le);
  view.setInt16(32, h.factor, h.le);
  view.setInt16(34, h.multiplier, h.le);
  view.setUint8(36, 0); // activity flags
  view.setUint8(37, 0); // I/O flags
  view.setUint8(38, 0); // data quality flags
  view.setUint8(39, 2); // blockettes that follow
  view.setInt32(40, 0, h.le); // time correction
  view.setUint16(44, HEADER_BYTES, h.le); // beginning of data
  view.setUint16(46, 48, h.le); // first blockette
  // Blockette 1000 (data only SEED)
  view.setUint16(48, 1000, h.le);
  view.setUint16(50, 56, h.le);
  view.setUint8(52, h.code);
  view.setUint8(53, h.le ? 0 : 1);
  view.setUint8(54, h.exponent);
  view.setUint8(55, 0);
  // Blockette 1001 (data extension)
  view.setUint16(56, 1001, h.le);
  view.setUint16(58, 0, h.le);
  view.setUint8(60, 0);
  view.setInt8(61, usec);
  view.setUint8(62, 0);
  view.setUint8(63, h.frames);
}

function checkCode(code: string, min: number, max: number, what: string): void {
  if (code.length < min || code.length > max || !/^[A-Za-z0-9]*$/u.test(code)) {
    throw new RangeError(`${what} code '${code}' must be ${min}–${max} letters or digits for MiniSEED 2`);
  }
}

/** SEED factor and multiplier for a rate (see encodeMiniSeed2). */
export function rateFactors(rateHz: number): [number, number] {
  if (!Number.isFinite(rateHz) || rateHz <= 0) throw new RangeError(`sample rate ${rateHz} Hz must be a positive number`);
  if (Number.isInteger(rateHz) && rateHz <= 32767) return [rateHz, 1];
  const period = 1 / rateHz;
  if (Math.abs(period - Math.round(period)) < 1e-9 * period && Math.round(period) <= 32767) {
    return [-Math.round(period), 1];
  }
  // Best rational approximation p/q (continued fractions) with p, q ≤ 32767.
  let [p0, q0, p1, q1] = [0, 1, 1, 0];
  let x = rateHz;
  for (let k = 0; k < 40; k++) {
    const a = Math.floor(x);
    const p2 = a * p1 + p0;
    const q2 = a * q1 + q0;
    if (p2 > 32767 || q2 > 32767) break;
    [p0, q0, p1, q1] = [p1, q1, p2, q2];
    if (Math.abs(p1 / q1 - rateHz) <= 1e-12 * rateHz) break;
    const frac = x - a;
    if (frac < 1e-15) break;
    x = 1 / frac;
  }
  if (q1 === 0 || Math.abs(p1 / q1 - rateHz) > 1e-9 * rateHz) {
    throw new RangeError(`sample rate ${rateHz} Hz cannot be written exactly as a SEED factor and multiplier`);
  }
  return [p1, -q1];
}
