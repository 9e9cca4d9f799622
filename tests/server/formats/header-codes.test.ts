import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';
import { headerCode } from '@server/formats/stream-id';
import { WaveformParseError } from '@server/formats/types';
import { concatBytes, fixMs3Crc, ms3Records } from '@tests/fixtures/hostile/make-corpus';
import { libmseedDumpSchema } from './libmseed-json';

/**
 * Header codes (network, station, location, channel) with bytes outside printable ASCII, or empty
 * network / station codes, in MiniSEED 2 and MiniSEED 3.
 *
 * Reference: libmseed 2.19 (Debian libmseed-dev) reads the MiniSEED 2 fixtures
 * tests/fixtures/mseed/defect-{location-nonascii,empty-network,empty-station}.mseed (written by
 * libmseed, then the header bytes changed in every record) and passes the codes through: location
 * bytes F0 41 as they are, an empty network or station as an empty string (its ids in the .json
 * beside each file). Seisift refuses them instead, naming the field and the bytes, the same way for
 * MiniSEED 2 and 3: an id with such codes matches no registered station, and F0 41 would be shown
 * as "ðA". Codes rules: SEED manual 2.4 ch. 8 (fixed header fields 4–7, ASCII, space padded) and
 * the FDSN Source Identifiers specification (MiniSEED 3).
 */

const FIXTURES = join(import.meta.dirname, '../../fixtures/mseed');
const load = (name: string) => ({
  bytes: new Uint8Array(readFileSync(join(FIXTURES, `${name}.mseed`))),
  ref: libmseedDumpSchema.parse(JSON.parse(readFileSync(join(FIXTURES, `${name}.json`), 'utf8'))),
});

function refusal(bytes: Uint8Array): string {
  try {
    decodeWaveform(bytes);
  } catch (err) {
    expect(err).toBeInstanceOf(WaveformParseError);
    return (err as Error).message;
  }
  throw new Error('accepted');
}

/** A MiniSEED 3 file of 600 samples whose source identifier `FDSN:XX_KV01_00_H_H_Z` gets `edit` (same length or not) in every record. */
function ms3With(edit: (sid: string) => Uint8Array): Uint8Array {
  const file = encodeMiniSeed3(
    { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 1_773_480_413_589_100, samples: Int32Array.from({ length: 600 }, (_, i) => Math.round(500 * Math.sin(i / 7))) },
    { encoding: 'steim2', maxRecordLength: 512 },
  );
  return concatBytes(
    ...ms3Records(file).map((rec) => {
      const sidLen = rec[33] ?? 0;
      const sid = new TextDecoder().decode(rec.subarray(40, 40 + sidLen));
      const next = edit(sid);
      const out = concatBytes(rec.subarray(0, 40), next, rec.subarray(40 + sidLen));
      out[33] = next.length;
      fixMs3Crc(out, 0, out.length);
      return out;
    }),
  );
}
const bytesOf = (s: string): Uint8Array => Uint8Array.from(s, (c) => c.charCodeAt(0));

describe('header codes: bytes outside printable ASCII and empty codes (MiniSEED 2 against libmseed, MiniSEED 3 alike)', () => {
  it('location F0 41: libmseed passes the bytes through; Seisift refuses naming them, for MiniSEED 2 and 3 alike', () => {
    const { bytes, ref } = load('defect-location-nonascii');
    expect(ref.records.every((r) => r.id === 'XX.KV01.\u00f0A.HHZ')).toBe(true);
    const want = /location code holds bytes F0 41 \(hex\), of which F0 is not printable ASCII: codes are letters and digits$/u;
    expect(refusal(bytes)).toMatch(/^MiniSEED 2 record 1 at byte 0: location code holds bytes F0 41/u);
    expect(refusal(bytes)).toMatch(want);
    const ms3 = ms3With((sid) => bytesOf(sid.replace('_00_', '_\u00f0A_')));
    expect(refusal(ms3)).toMatch(/^miniSEED 3 record 1 at byte 0: location code holds bytes F0 41/u);
    expect(refusal(ms3)).toMatch(want);
  });

  it('empty network code: libmseed reads an empty network; Seisift refuses it, for MiniSEED 2 and 3 alike', () => {
    const { bytes, ref } = load('defect-empty-network');
    expect(ref.records.every((r) => r.id === '.KV01.00.HHZ')).toBe(true);
    const want = /network code is empty: a stream id needs network, station and channel codes$/u;
    expect(refusal(bytes)).toMatch(want);
    expect(refusal(ms3With((sid) => bytesOf(sid.replace('FDSN:XX_', 'FDSN:_'))))).toMatch(want);
  });

  it('empty station code: likewise', () => {
    const { bytes, ref } = load('defect-empty-station');
    expect(ref.records.every((r) => r.id === 'XX..00.HHZ')).toBe(true);
    const want = /station code is empty: a stream id needs network, station and channel codes$/u;
    expect(refusal(bytes)).toMatch(want);
    expect(refusal(ms3With((sid) => bytesOf(sid.replace('_KV01_', '__'))))).toMatch(want);
  });

  it('a control byte or a dot in a code is refused; space padding and trailing NULs are not', () => {
    expect(headerCode('KV01 ', 'station', 'x')).toBe('KV01');
    expect(headerCode('  ', 'location', 'x')).toBe('');
    expect(headerCode('HH\0', 'channel', 'x')).toBe('HH');
    expect(() => headerCode('K\u0007V1', 'station', 'x')).toThrow(/station code holds bytes 4B 07 56 31 \(hex\), of which 07 is not printable ASCII/u);
    expect(() => headerCode('K.V1', 'station', 'x')).toThrow(/station code 'K\.V1' must be 1–8 letters or digits/u);
    expect(() => headerCode('KV\u00ff', 'station', 'x')).toThrow(/FF is not printable/u);
  });
});
