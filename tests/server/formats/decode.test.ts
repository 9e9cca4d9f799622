import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { decodeWaveform } from '../../../server/formats/decode';
import { encodeMiniSeed2 } from '../../../server/formats/mseed2-writer';
import { WaveformParseError } from '../../../server/formats/types';

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
});
