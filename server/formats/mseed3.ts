import { ByteReader } from './byte-reader';
import { crc32c } from './crc32c';
import { mergeRecords, type DecodedRecord } from './merge-records';
import { decodeSamples, latin1, SEED_ENCODINGS, skipZeroPadding } from './mseed2';
import { seedTimeToUs } from './seed-time';
import { headerCode } from './stream-id';
import { WaveformParseError, type DecodedStream } from './types';
import { quoteInput } from '@shared/quote-input';

/** Fixed header length of a miniSEED 3 record, bytes (FDSN miniSEED 3 specification, 2022). */
export const MS3_FIXED_HEADER_LENGTH = 40;

/** True when the bytes start with the miniSEED 3 record indicator `MS` and format version 3. */
export function looksLikeMiniSeed3(bytes: Uint8Array): boolean {
  return bytes.byteLength >= 3 && bytes[0] === 0x4d && bytes[1] === 0x53 && bytes[2] === 3;
}

/**
 * Maps an FDSN source identifier (FDSN Source Identifiers specification, v1.0) to SEED codes:
 * `FDSN:NET_STA_LOC_BAND_SOURCE_SUBSOURCE` → network, station, location, and channel =
 * band + source + subsource concatenated (`FDSN:XX_KV01_00_H_H_Z` → `XX.KV01.00.HHZ`). Each code
 * is checked by the same rule as MiniSEED 2 header codes (stream-id.ts `headerCode`): printable
 * ASCII letters and digits, network, station and channel not empty.
 *
 * @param sid the identifier's bytes, one character per byte (latin-1)
 * @throws WaveformParseError when the id does not start with `FDSN:`, does not have 6 parts, or a
 *   code breaks the rule (naming the field and its bytes)
 */
export function parseSourceId(sid: string, where: string): { network: string; station: string; location: string; channel: string } {
  if (!sid.startsWith('FDSN:')) {
    throw new WaveformParseError(`${where}: source identifier ${quoteInput(printable(sid))} is not an FDSN source identifier (FDSN:NET_STA_LOC_B_S_SS)`);
  }
  const parts = sid.slice(5).split('_');
  if (parts.length !== 6) {
    throw new WaveformParseError(
      `${where}: source identifier ${quoteInput(printable(sid))} has ${parts.length} '_'-separated parts; FDSN:NET_STA_LOC_B_S_SS has 6`,
    );
  }
  const [network = '', station = '', location = '', band = '', source = '', subsource = ''] = parts;
  if (source === '') {
    throw new WaveformParseError(`${where}: source identifier ${quoteInput(printable(sid))} lacks a source code (the middle letter of the channel)`);
  }
  return {
    network: headerCode(network, 'network', where),
    station: headerCode(station, 'station', where),
    location: headerCode(location, 'location', where),
    channel: headerCode(`${band}${source}${subsource}`, 'channel', where),
  };
}

/**
 * Decodes a miniSEED 3 file (FDSN miniSEED 3 specification, 2022): a sequence of records, each a
 * 40-byte little-endian fixed header, the source identifier, the extra headers (JSON) and the data.
 *
 * Fixed header (byte offset: field): 0 `MS`; 2 format version (3); 3 flags; 4 nanosecond (u32);
 * 8 year (u16); 10 day of year (u16); 12 hour; 13 minute; 14 second; 15 data encoding;
 * 16 sample rate/period (f64: > 0 rate in Hz, < 0 period in s); 24 number of samples (u32);
 * 28 CRC-32C (u32); 32 data publication version; 33 identifier length (u8); 34 extra header length
 * (u16); 36 data length (u32).
 *
 * - The CRC-32C is computed over the whole record with the CRC field set to zero; a mismatch is an
 *   error naming the record.
 * - Start time: nanoseconds are rounded to the nearest µs (half up) because DecodedStream keeps µs.
 * - Encodings: 1 int16, 3 int32, 4 float32, 5 float64 little-endian; 10 Steim-1 and 11 Steim-2
 *   big-endian (the specification keeps Steim big-endian).
 * - Extra headers must be a JSON text; the first record's parsed value is kept on the stream.
 * - Records with text (0) or opaque (100) payloads, or no samples, are skipped (after their CRC
 *   and header checks).
 *
 * @throws WaveformParseError naming the record (1-based) and byte offset for any malformed input
 */
export function decodeMiniSeed3(bytes: Uint8Array): DecodedStream[] {
  if (bytes.byteLength === 0) throw new WaveformParseError('empty file: no miniSEED 3 record');
  const records: DecodedRecord[] = [];
  let offset = 0;
  let index = 0;
  while (offset < bytes.byteLength) {
    const padded = index > 0 && !looksLikeMiniSeed3(bytes.subarray(offset)) ? skipZeroPadding(bytes, offset, looksLikeMiniSeed3) : undefined;
    if (padded !== undefined) {
      offset = padded;
      continue;
    }
    const where = `miniSEED 3 record ${index + 1} at byte ${offset}`;
    const remaining = bytes.subarray(offset);
    if (!looksLikeMiniSeed3(remaining)) {
      throw new WaveformParseError(`${where}: does not start with 'MS' and format version 3`, offset);
    }
    if (remaining.byteLength < MS3_FIXED_HEADER_LENGTH) {
      throw new WaveformParseError(
        `${where}: truncated, only ${remaining.byteLength} bytes left for a 40-byte fixed header`,
        offset,
      );
    }
    const r = new ByteReader(remaining, where);
    const nanosecond = r.u32(4, true, 'nanosecond');
    const year = r.u16(8, true, 'year');
    const day = r.u16(10, true, 'day of year');
    const hour = r.u8(12, 'hour');
    const minute = r.u8(13, 'minute');
    const second = r.u8(14, 'second');
    const encoding = r.u8(15, 'data encoding');
    const rateOrPeriod = r.f64(16, true, 'sample rate/period');
    const sampleCount = r.u32(24, true, 'number of samples');
    const storedCrc = r.u32(28, true, 'CRC');
    const sidLength = r.u8(33, 'identifier length');
    const extraLength = r.u16(34, true, 'extra header length');
    const dataLength = r.u32(36, true, 'data length');
    const recordLength = MS3_FIXED_HEADER_LENGTH + sidLength + extraLength + dataLength;
    if (recordLength > remaining.byteLength) {
      throw new WaveformParseError(
        `${where}: truncated, header gives a record of ${recordLength} bytes (identifier ${sidLength}, extra headers ${extraLength}, data ${dataLength}) but only ${remaining.byteLength} remain`,
        offset,
      );
    }
    const record = remaining.subarray(0, recordLength);
    const check = new Uint8Array(record); // copy: the CRC is computed with its own field zeroed
    check.fill(0, 28, 32);
    const computed = crc32c(check);
    if (computed !== storedCrc) {
      throw new WaveformParseError(
        `${where}: CRC-32C mismatch (header 0x${hex(storedCrc)}, computed 0x${hex(computed)}): the record is corrupt`,
        offset,
      );
    }
    if (nanosecond > 999_999_999) {
      throw new WaveformParseError(`${where}: nanosecond field ${nanosecond} exceeds 999999999`, offset);
    }
    if (!Number.isFinite(rateOrPeriod)) {
      throw new WaveformParseError(`${where}: sample rate/period ${rateOrPeriod} is not a finite number`, offset);
    }
    const sampleRateHz = rateOrPeriod > 0 ? rateOrPeriod : rateOrPeriod < 0 ? -1 / rateOrPeriod : 0;
    const sid = latin1(r.slice(MS3_FIXED_HEADER_LENGTH, sidLength, 'source identifier'));
    const ids = parseSourceId(sid, where);
    let extraHeaders: unknown;
    if (extraLength > 0) {
      const extraBytes = r.slice(MS3_FIXED_HEADER_LENGTH + sidLength, extraLength, 'extra headers');
      let json: string;
      try {
        json = new TextDecoder('utf-8', { fatal: true }).decode(extraBytes);
      } catch {
        throw new WaveformParseError(`${where}: extra headers are not valid UTF-8 text`, offset);
      }
      try {
        extraHeaders = JSON.parse(json) as unknown;
      } catch (err) {
        const detail = err instanceof Error ? err.message : String(err);
        throw new WaveformParseError(`${where}: extra headers are not valid JSON (${detail})`, offset);
      }
    }
    const startTimeUs = seedTimeToUs(year, day, hour, minute, second, Math.round(nanosecond / 1000), where);
    let samples: Float64Array = new Float64Array(0);
    // Text (0) and opaque (100) payloads hold no samples: such records are skipped.
    if (sampleCount > 0 && encoding !== 0 && encoding !== 100) {
      if (SEED_ENCODINGS[encoding] === undefined) {
        throw new WaveformParseError(
          `${where}: encoding ${encoding} is not supported (int16, int32, float32, float64, Steim-1, Steim-2 are)`,
          offset,
        );
      }
      const data = record.subarray(MS3_FIXED_HEADER_LENGTH + sidLength + extraLength);
      const steim = encoding === 10 || encoding === 11;
      samples = decodeSamples(data, sampleCount, encoding, !steim, where);
    }
    const decoded: DecodedRecord = {
      ...ids,
      sampleRateHz,
      startTimeUs,
      samples,
      encoding: SEED_ENCODINGS[encoding] ?? String(encoding),
      recordIndex: index,
      offset,
    };
    if (extraHeaders !== undefined) decoded.extraHeaders = extraHeaders;
    records.push(decoded);
    offset += recordLength;
    index++;
  }
  return mergeRecords(records, 'mseed3');
}

/** `s` for a message: at most 80 characters, bytes outside printable ASCII as \xNN. */
function printable(s: string): string {
  const cut = s.length > 80 ? `${s.slice(0, 80)}…` : s;
  return cut.replace(/[^\x20-\x7e…]/gu, (c) => `\\x${c.charCodeAt(0).toString(16).toUpperCase().padStart(2, '0')}`);
}

function hex(n: number): string {
  return n.toString(16).toUpperCase().padStart(8, '0');
}
