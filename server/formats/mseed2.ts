import { ByteReader } from './byte-reader';
import { mergeRecords, type DecodedRecord } from './merge-records';
import { seedTimeToUs } from './seed-time';
import { decodeSteim } from './steim';
import { headerCode } from './stream-id';
import { WaveformParseError, type DecodedStream } from './types';

/** SEED data encoding codes (SEED manual 2.4, blockette 1000 field 3) that Seisift decodes. */
export const SEED_ENCODINGS: Readonly<Record<number, string>> = {
  1: 'int16',
  3: 'int32',
  4: 'float32',
  5: 'float64',
  10: 'steim1',
  11: 'steim2',
};

/** Names of SEED encodings we recognise but do not decode, for the error message. */
const UNSUPPORTED_ENCODINGS: Readonly<Record<number, string>> = {
  0: 'ASCII text',
  2: '24-bit integers',
  12: 'GEOSCOPE 24-bit',
  13: 'GEOSCOPE 16-bit gain ranged (3-bit exponent)',
  14: 'GEOSCOPE 16-bit gain ranged (4-bit exponent)',
  15: 'US National Network compression',
  16: 'CDSN 16-bit gain ranged',
  17: 'Graefenberg 16-bit gain ranged',
  18: 'IPG Strasbourg 16-bit gain ranged',
  19: 'Steim-3',
  30: 'SRO gain ranged',
  31: 'HGLP',
  32: 'DWWSSN gain ranged',
  33: 'RSTN 16-bit gain ranged',
};

/** Fixed section of the data header: 48 bytes (SEED manual 2.4, chapter 8). */
const FIXED_HEADER_LENGTH = 48;
/** Record lengths accepted: 2^7..2^16 bytes (SEED allows 256 and up; libmseed reads 128-byte records too). */
const MIN_RECORD_EXPONENT = 7;
const MAX_RECORD_EXPONENT = 16;

/** The fields of one record's fixed header and blockettes that decoding needs. */
interface ParsedHeader {
  network: string;
  station: string;
  location: string;
  channel: string;
  quality: string;
  startTimeUs: number;
  sampleCount: number;
  sampleRateHz: number;
  dataOffset: number;
  encoding: number;
  dataLittleEndian: boolean;
  recordLength: number;
  frameCount: number | undefined;
}

/**
 * True when the first bytes look like a MiniSEED 2 fixed header: a 6-character sequence number of
 * digits, spaces or NULs, a data-quality indicator D, R, Q or M, and a space or NUL (the test
 * libmseed applies, `MS_ISVALIDHEADER`, common practice).
 */
export function looksLikeMiniSeed2(bytes: Uint8Array): boolean {
  if (bytes.byteLength < 8) return false;
  for (let i = 0; i < 6; i++) {
    const c = bytes[i] ?? -1;
    if (!((c >= 0x30 && c <= 0x39) || c === 0x20 || c === 0)) return false;
  }
  const q = String.fromCharCode(bytes[6] ?? 0);
  const r = bytes[7];
  return 'DRQM'.includes(q) && (r === 0x20 || r === 0);
}

/**
 * Decodes a MiniSEED 2 file (FDSN SEED manual 2.4, data-only SEED): any number of records of any
 * supported length, any number of streams, records merged per stream in time order.
 *
 * Per record:
 * - header byte order: big-endian unless the year (bytes 20–21) and day (22–23) are implausible
 *   that way and plausible little-endian (year 1900–2100, day 1–366: common practice, as libmseed);
 * - blockette 1000 is required (encoding, word order 0 = little / 1 = big, record length 2^n);
 *   blockette 1001 adds µs and a frame count; blockette 100 (actual sample rate, float32) overrides
 *   the nominal rate; other blockettes are skipped by their next-blockette offsets, which must move
 *   forward inside the record;
 * - start time = BTIME + time correction (field 16, units 0.0001 s) unless activity flag bit 1
 *   ("time correction applied") is set + blockette 1001 µs (as libmseed's `msr_starttime`);
 * - sample rate from factor F and multiplier M (SEED manual 2.4, field 10/11): F>0,M>0: F·M;
 *   F>0,M<0: −F/M; F<0,M>0: −M/F; F<0,M<0: 1/(F·M);
 * - Steim-1/2 records are checked against their reverse integration constant;
 * - codes: spaces removed, then printable ASCII letters and digits, network, station and channel
 *   not empty (stream-id.ts `headerCode`, the same rule as for MiniSEED 3);
 * - text records (encoding 0, e.g. a LOG channel) and records without samples are skipped; a file
 *   with no samples at all is refused by decodeWaveform;
 * - zero bytes after the last record, or between records, are padding and skipped (libmseed skips
 *   them too); any other byte where a record should start is refused.
 *
 * @param bytes the whole file
 * @returns one stream per NET.STA.LOC.CHA, in order of first appearance
 * @throws WaveformParseError naming the record (1-based) and byte offset for any malformed input
 */
export function decodeMiniSeed2(bytes: Uint8Array): DecodedStream[] {
  if (bytes.byteLength === 0) throw new WaveformParseError('empty file: no MiniSEED 2 record');
  const records: DecodedRecord[] = [];
  let offset = 0;
  let index = 0;
  while (offset < bytes.byteLength) {
    const padded = index > 0 && !looksLikeMiniSeed2(bytes.subarray(offset)) ? skipZeroPadding(bytes, offset, looksLikeMiniSeed2) : undefined;
    if (padded !== undefined) {
      offset = padded;
      continue;
    }
    const where = `MiniSEED 2 record ${index + 1} at byte ${offset}`;
    const remaining = bytes.subarray(offset);
    if (remaining.byteLength < FIXED_HEADER_LENGTH) {
      throw new WaveformParseError(
        `${where}: truncated, only ${remaining.byteLength} bytes left for a 48-byte fixed header`,
        offset,
      );
    }
    if (!looksLikeMiniSeed2(remaining)) {
      throw new WaveformParseError(
        `${where}: not a MiniSEED 2 data record header (expected a 6-digit sequence number, a quality code D/R/Q/M and a space)`,
        offset,
      );
    }
    const header = parseHeader(new ByteReader(remaining, where), where);
    if (header.recordLength > remaining.byteLength) {
      throw new WaveformParseError(
        `${where}: truncated, blockette 1000 gives a record length of ${header.recordLength} bytes but only ${remaining.byteLength} remain`,
        offset,
      );
    }
    const record = remaining.subarray(0, header.recordLength);
    const samples = decodeData(record, header, where);
    records.push({
      network: header.network,
      station: header.station,
      location: header.location,
      channel: header.channel,
      sampleRateHz: header.sampleRateHz,
      startTimeUs: header.startTimeUs,
      samples,
      encoding: SEED_ENCODINGS[header.encoding] ?? String(header.encoding),
      recordIndex: index,
      offset,
    });
    offset += header.recordLength;
    index++;
  }
  return mergeRecords(records, 'mseed2');
}

/** Reads the fixed header and the blockette chain of one record. */
function parseHeader(r: ByteReader, where: string): ParsedHeader {
  const yearBE = r.u16(20, false, 'start year');
  const dayBE = r.u16(22, false, 'start day');
  const yearLE = r.u16(20, true, 'start year');
  const dayLE = r.u16(22, true, 'start day');
  const plausible = (y: number, d: number): boolean => y >= 1900 && y <= 2100 && d >= 1 && d <= 366;
  let le: boolean;
  if (plausible(yearBE, dayBE)) le = false;
  else if (plausible(yearLE, dayLE)) le = true;
  else {
    throw new WaveformParseError(
      `${where}: start time year ${yearBE} / day ${dayBE} is implausible in either byte order (expected year 1900–2100, day 1–366)`,
    );
  }
  const year = le ? yearLE : yearBE;
  const day = le ? dayLE : dayBE;
  const hour = r.u8(24, 'start hour');
  const minute = r.u8(25, 'start minute');
  const second = r.u8(26, 'start second');
  const fract = r.u16(28, le, 'start fraction (0.0001 s)');
  if (fract > 9999) throw new WaveformParseError(`${where}: start fraction ${fract} exceeds 9999 (units of 0.0001 s)`);
  const sampleCount = r.u16(30, le, 'number of samples');
  const factor = r.i16(32, le, 'sample rate factor');
  const multiplier = r.i16(34, le, 'sample rate multiplier');
  const activity = r.u8(36, 'activity flags');
  const blocketteCount = r.u8(39, 'number of blockettes');
  const timeCorrection = r.i32(40, le, 'time correction');
  const dataOffset = r.u16(44, le, 'beginning of data');
  const firstBlockette = r.u16(46, le, 'first blockette');

  let sampleRateHz = nominalRate(factor, multiplier);
  let encoding: number | undefined;
  let wordOrder: number | undefined;
  let recordExponent: number | undefined;
  let microseconds = 0;
  let frameCount: number | undefined;

  // Walk the blockette chain: each next offset must move forward and stay in the record window we
  // can see; the number of steps is bounded by the blockette count and by the bytes available.
  let next = firstBlockette;
  let seen = 0;
  let lastBlocketteEnd = 0;
  const maxSteps = Math.min(Math.max(blocketteCount, 1) + 16, 512);
  while (next !== 0) {
    if (next < FIXED_HEADER_LENGTH) {
      throw new WaveformParseError(`${where}: blockette offset ${next} points inside the 48-byte fixed header`);
    }
    if (seen >= maxSteps) {
      throw new WaveformParseError(`${where}: blockette chain is longer than the ${blocketteCount} blockettes declared`);
    }
    const type = r.u16(next, le, `blockette ${seen + 1} type`);
    const following = r.u16(next + 2, le, `blockette ${seen + 1} next offset`);
    if (type === 1000) {
      encoding = r.u8(next + 4, 'blockette 1000 encoding');
      wordOrder = r.u8(next + 5, 'blockette 1000 word order');
      recordExponent = r.u8(next + 6, 'blockette 1000 record length');
    } else if (type === 1001) {
      r.u8(next + 4, 'blockette 1001 timing quality');
      microseconds = r.i8(next + 5, 'blockette 1001 microseconds');
      frameCount = r.u8(next + 7, 'blockette 1001 frame count');
    } else if (type === 100) {
      const actual = r.f32(next + 4, le, 'blockette 100 sample rate');
      if (Number.isFinite(actual) && actual > 0) sampleRateHz = actual;
    }
    lastBlocketteEnd = Math.max(lastBlocketteEnd, next + (type === 1000 || type === 1001 || type === 100 ? 8 : 4));
    seen++;
    if (following !== 0 && following <= next) {
      throw new WaveformParseError(
        `${where}: blockette ${type} at byte ${next} points back to byte ${following} (a loop in the blockette chain)`,
      );
    }
    next = following;
  }
  if (encoding === undefined || wordOrder === undefined || recordExponent === undefined) {
    throw new WaveformParseError(`${where}: no blockette 1000 (needed for encoding, byte order and record length)`);
  }
  if (recordExponent < MIN_RECORD_EXPONENT || recordExponent > MAX_RECORD_EXPONENT) {
    throw new WaveformParseError(
      `${where}: record length 2^${recordExponent} bytes is outside 2^${MIN_RECORD_EXPONENT}–2^${MAX_RECORD_EXPONENT}`,
    );
  }
  if (wordOrder > 1) {
    throw new WaveformParseError(`${where}: blockette 1000 word order ${wordOrder} is neither 0 (little) nor 1 (big endian)`);
  }
  const recordLength = 2 ** recordExponent;
  if (lastBlocketteEnd > recordLength) {
    throw new WaveformParseError(`${where}: a blockette ends at byte ${lastBlocketteEnd}, past the ${recordLength}-byte record`);
  }
  if (sampleCount > 0 && (dataOffset < FIXED_HEADER_LENGTH || dataOffset >= recordLength)) {
    throw new WaveformParseError(
      `${where}: beginning of data ${dataOffset} lies outside the record (48–${recordLength - 1} bytes)`,
    );
  }
  const correctionUs = (activity & 0x02) === 0 ? timeCorrection * 100 : 0;
  const startTimeUs =
    seedTimeToUs(year, day, hour, minute, second, fract * 100, where) + correctionUs + microseconds;

  return {
    station: headerCode(latin1(r.slice(8, 5, 'station code')), 'station', where),
    location: headerCode(latin1(r.slice(13, 2, 'location code')), 'location', where),
    channel: headerCode(latin1(r.slice(15, 3, 'channel code')), 'channel', where),
    network: headerCode(latin1(r.slice(18, 2, 'network code')), 'network', where),
    quality: String.fromCharCode(r.u8(6, 'quality')),
    startTimeUs,
    sampleCount,
    sampleRateHz,
    dataOffset,
    encoding,
    dataLittleEndian: wordOrder === 0,
    recordLength,
    frameCount,
  };
}

/** Bytes as a string of one character per byte (latin-1), for headerCode. */
export function latin1(bytes: Uint8Array): string {
  let s = '';
  for (const b of bytes) s += String.fromCharCode(b);
  return s;
}

/**
 * Offset of the next record after zero padding that starts at `offset`: the bytes from `offset`
 * are all zero up to a position where `isRecord` holds (a record header may itself begin with
 * NULs), or up to the end of the file (then `bytes.byteLength`). Undefined when `offset` does not
 * start zero padding, or a non-zero byte comes before any record.
 */
export function skipZeroPadding(bytes: Uint8Array, offset: number, isRecord: (rest: Uint8Array) => boolean): number | undefined {
  if (bytes[offset] !== 0) return undefined;
  let end = offset;
  while (end < bytes.byteLength && bytes[end] === 0) end++;
  if (end === bytes.byteLength) return end;
  for (let p = offset + 1; p <= end; p++) if (isRecord(bytes.subarray(p))) return p;
  return undefined;
}

/**
 * Nominal sample rate from the SEED factor and multiplier (SEED manual 2.4, fixed header fields
 * 10–11), Hz; 0 when the factor or multiplier is 0 (records without a sampled time series).
 */
export function nominalRate(factor: number, multiplier: number): number {
  if (factor === 0 || multiplier === 0) return 0;
  if (factor > 0 && multiplier > 0) return factor * multiplier;
  if (factor > 0) return -factor / multiplier;
  if (multiplier > 0) return -multiplier / factor;
  return 1 / (factor * multiplier);
}

/** Decodes one record's data section to Float64Array samples. */
function decodeData(record: Uint8Array, h: ParsedHeader, where: string): Float64Array {
  // Text records (encoding 0, e.g. a LOG channel) hold messages, not samples: skipped.
  if (h.sampleCount === 0 || h.encoding === 0) return new Float64Array(0);
  const name = SEED_ENCODINGS[h.encoding];
  if (name === undefined) {
    const known = UNSUPPORTED_ENCODINGS[h.encoding];
    throw new WaveformParseError(
      `${where}: encoding ${h.encoding}${known ? ` (${known})` : ''} is not supported (int16, int32, float32, float64, Steim-1, Steim-2 are)`,
    );
  }
  const data = record.subarray(h.dataOffset);
  return decodeSamples(data, h.sampleCount, h.encoding, h.dataLittleEndian, where, h.frameCount);
}

/**
 * Decodes `count` samples of a SEED encoding code from a data section.
 * Shared by MiniSEED 2 and 3.
 *
 * @param encoding SEED code: 1 int16, 3 int32, 4 float32, 5 float64, 10 Steim-1, 11 Steim-2
 * @param littleEndian byte order of the samples (of the 32-bit words, for Steim)
 * @throws WaveformParseError when the count does not fit, or the encoding is unsupported
 */
export function decodeSamples(
  data: Uint8Array,
  count: number,
  encoding: number,
  littleEndian: boolean,
  where: string,
  frameCount?: number,
): Float64Array {
  const width = encoding === 1 ? 2 : encoding === 3 || encoding === 4 ? 4 : encoding === 5 ? 8 : 0;
  if (encoding === 10 || encoding === 11) {
    const ints = decodeSteim(data, count, littleEndian, encoding === 10 ? 1 : 2, where, frameCount);
    return Float64Array.from(ints);
  }
  if (width === 0) {
    throw new WaveformParseError(`${where}: encoding ${encoding} is not supported`);
  }
  if (count * width > data.byteLength) {
    throw new WaveformParseError(
      `${where}: declares ${count} ${SEED_ENCODINGS[encoding] ?? ''} samples (${count * width} bytes) but the data section has only ${data.byteLength} bytes`,
    );
  }
  const view = new DataView(data.buffer, data.byteOffset, data.byteLength);
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) {
    const o = i * width;
    let v: number;
    if (encoding === 1) v = view.getInt16(o, littleEndian);
    else if (encoding === 3) v = view.getInt32(o, littleEndian);
    else if (encoding === 4) v = view.getFloat32(o, littleEndian);
    else v = view.getFloat64(o, littleEndian);
    if (!Number.isFinite(v)) {
      throw new WaveformParseError(`${where}: sample ${i + 1} is ${v} (not a finite number)`);
    }
    out[i] = v;
  }
  return out;
}
