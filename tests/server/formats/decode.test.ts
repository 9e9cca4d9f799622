import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { WaveformParseError } from '@server/formats/types';

const FIXTURES = join(import.meta.dirname, '../../fixtures/mseed');

function expectParseError(bytes: Uint8Array, pattern: RegExp): void {
  let caught: unknown;
  try {
    decodeWaveform(bytes);
  } catch (err) {
    caught = err;
  }
  expect(caught).toBeInstanceOf(WaveformParseError);
  expect(String((caught as Error).message)).toMatch(pattern);
}

describe('decodeWaveform format sniffing and refusals', () => {
  it('sniffs MiniSEED 2 (libmseed fixture), MiniSEED 3 and CSV', () => {
    const ms2 = new Uint8Array(readFileSync(join(FIXTURES, 'multi-stream.mseed')));
    const streams = decodeWaveform(ms2);
    expect(streams.map((s) => s.id)).toEqual(['XX.KV01.00.HHZ', 'XX.KV02.00.HHZ']); // order of first appearance
    expect(streams.every((s) => s.format === 'mseed2')).toBe(true);
  });

  it('refuses empty, unknown and binary garbage with a clear message', () => {
    expectParseError(new Uint8Array(0), /empty file/u);
    expectParseError(Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 0, 1, 2, 3), /unrecognised binary format.*89 50 4e 47/u);
    expectParseError(new TextEncoder().encode('hello'), /^this is plain text, not a CSV waveform.*begins "hello"/u);
    expectParseError(Uint8Array.of(0x4d, 0x53, 3), /truncated/u);
  });

  it('refuses a MiniSEED 2 file that ends inside a record', () => {
    const bytes = encodeMiniSeed2(
      { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 1.7e15, samples: new Int32Array(2000) },
      { encoding: 'steim2', recordLength: 512 },
    );
    expectParseError(bytes.subarray(0, 512 + 100), /record 2 at byte 512: truncated/u);
  });

  it('merges records that arrive out of order and reports no gap', () => {
    const bytes = encodeMiniSeed2(
      { network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 1.7e15, samples: Int32Array.from({ length: 3000 }, (_, i) => i) },
      { encoding: 'int32', recordLength: 512 },
    );
    const n = bytes.length / 512;
    const shuffled = new Uint8Array(bytes.length);
    for (let k = 0; k < n; k++) shuffled.set(bytes.subarray((n - 1 - k) * 512, (n - k) * 512), k * 512);
    const [s] = decodeWaveform(shuffled);
    expect(s?.discontinuities).toEqual([]);
    expect(Array.from(s?.samples ?? []).every((v, i) => v === i)).toBe(true);
    expect(s?.startTimeUs).toBe(1.7e15);
  });

  it('skips a text (LOG) record between data records, and refuses a file of text records only', () => {
    const data = encodeMiniSeed2(
      { network: 'XX', station: 'KV01', location: '', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 1.7e15, samples: Int32Array.from({ length: 100 }, (_, i) => i) },
      { encoding: 'int32', recordLength: 512 },
    );
    const log = data.slice();
    log.set(new TextEncoder().encode('LOG'), 15); // channel
    new DataView(log.buffer).setInt16(32, 0); // rate factor 0: no sampled series
    log[52] = 0; // blockette 1000 encoding 0: ASCII text
    const file = new Uint8Array([...log, ...data]);
    const streams = decodeWaveform(file);
    expect(streams.map((s) => s.id)).toEqual(['XX.KV01..HHZ']);
    expect(streams[0]?.samples.length).toBe(100);
    expectParseError(log, /no samples/u);
  });

  it('decodes from a Node Buffer that views the middle of a larger ArrayBuffer', () => {
    const file = readFileSync(join(FIXTURES, 'int16-le-512.mseed'));
    const padded = Buffer.alloc(file.length + 13);
    file.copy(padded, 7);
    const view = padded.subarray(7, 7 + file.length); // byteOffset 7: unaligned for DataView reads
    expect(view.byteOffset % 4).not.toBe(0);
    const a = decodeWaveform(view)[0];
    const b = decodeWaveform(new Uint8Array(file))[0];
    expect(Array.from(a?.samples ?? [])).toEqual(Array.from(b?.samples ?? []));
    expect(a?.samples.length).toBe(700);
  });

  it('names what a file is when it is not a waveform (by content, whatever its name)', () => {
    const enc = new TextEncoder();
    const msg = (bytes: Uint8Array, filename: string): string => {
      try {
        decodeWaveform(bytes, { filename });
      } catch (err) {
        expect(err).toBeInstanceOf(WaveformParseError);
        return (err as Error).message;
      }
      throw new Error(`${filename} accepted`);
    };
    // Signatures: PKWARE APPNOTE (ZIP local file header), RFC 1952 (gzip), W3C XML 1.0.
    expect(msg(Uint8Array.of(0x50, 0x4b, 0x03, 0x04, 20, 0, 0, 0, 8, 0), 'day.mseed')).toBe('day.mseed: this is a ZIP archive, not a waveform file: unpack it and upload the MiniSEED or CSV files inside');
    expect(msg(Uint8Array.of(0x1f, 0x8b, 8, 0, 0, 0, 0, 0, 0, 3), 'day.mseed.gz')).toBe('day.mseed.gz: this is gzip-compressed data, not a waveform file: decompress it and upload the file inside');
    expect(msg(enc.encode('<?xml version="1.0" encoding="UTF-8"?>\n<!-- network XX -->\n<FDSNStationXML xmlns="http://www.fdsn.org/xml/station/1" schemaVersion="1.2"></FDSNStationXML>'), 'XX.csv')).toMatch(/^XX\.csv: this is XML: StationXML station metadata, not a waveform/u);
    expect(msg(enc.encode('<?xml version="1.0"?><q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2"/>'), 'ev.xml')).toMatch(/this is XML: a QuakeML event catalogue/u);
    expect(msg(enc.encode('<?xml version="1.0"?><readings><r t="0">1</r></readings>'), 'r.xml')).toMatch(/this is XML \(root element <readings>\), not a waveform file/u);
    expect(msg(enc.encode('<!DOCTYPE html><html><body>502 Bad Gateway</body></html>'), 'w.mseed')).toMatch(/named like MiniSEED but holds text, this is an HTML page/u);
    expect(msg(enc.encode('{"samples":[1,2,3]}'), 'w.json')).toMatch(/this is JSON, not a waveform file/u);
    expect(msg(enc.encode('Station KV01 was serviced on Tuesday.\nNothing to report.\n'), 'notes.txt')).toBe(
      `notes.txt: this is plain text, not a CSV waveform: no line holds a time and a value separated by ',', ';' or a tab (it begins "Station KV01 was serviced on Tuesday. Nothing to report.")`,
    );
    expect(msg(new Uint8Array(2048), 'blank.mseed')).toBe('blank.mseed: the file holds only zero bytes (2048 bytes)');
    expect(msg(enc.encode('t_seconds,counts\n0.00,1\u0007\n'), 'bell.csv')).toMatch(/this is text with a control character \(byte 07 hex at byte 23\)/u);
  });

  it('reads a CSV file named .mseed as the CSV it is, and says so when it is refused', () => {
    const enc = new TextEncoder();
    const text = `# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53.589Z\nt_seconds,counts\n${Array.from({ length: 200 }, (_, i) => `${(i / 100).toFixed(2)},${i}`).join('\n')}\n`;
    const [s] = decodeWaveform(enc.encode(text), { filename: 'kv01.mseed' });
    expect(s?.format).toBe('csv');
    expect(s?.samples.length).toBe(200);
    expect(() => decodeWaveform(enc.encode(text.replace(/^# stream=\S+ /u, '# ')), { filename: 'kv01.mseed' })).toThrow(
      /^kv01\.mseed: named like MiniSEED but holds text, read as CSV: CSV: no stream id/u,
    );
  });

  it('accepts MiniSEED 2 followed by zero padding (libmseed fixture defect-zero-padding.mseed: 1024 zero bytes)', () => {
    const padded = new Uint8Array(readFileSync(join(FIXTURES, 'defect-zero-padding.mseed')));
    expect(padded.subarray(4096).every((b) => b === 0)).toBe(true);
    const [a] = decodeWaveform(padded);
    const [b] = decodeWaveform(padded.subarray(0, 4096));
    expect(Array.from(a?.samples ?? [])).toEqual(Array.from(b?.samples ?? []));
    expect(a?.samples.length).toBe(1500);
    // Anything else after the records is still refused.
    const junk = Uint8Array.from([...padded.subarray(0, 4096), 0, 0, ...new Uint8Array(100).fill(0x41)]);
    expectParseError(junk, /record 9 at byte 4096: not a MiniSEED 2 data record header/u);
  });
});
