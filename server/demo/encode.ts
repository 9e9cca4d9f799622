/**
 * Writing demo windows the way a station sends them: MiniSEED 2, Steim-2, 512-byte records,
 * big-endian (common practice for real-time telemetry), one file per station window holding its
 * channels one after the other; and the single-channel CSV an operator exports by hand.
 */
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { formatIsoTimeUs } from '@server/formats/iso-time';
import type { StreamHeader } from '@server/formats/types';

/** A contiguous run of samples of one channel (the start an integer number of µs). */
export interface CountsPiece extends StreamHeader {
  samples: Int32Array;
}

/** Record length of the demo files, bytes. */
export const DEMO_RECORD_LENGTH = 512;

/**
 * Encodes pieces (in the given order) as one MiniSEED 2 file: Steim-2, 512-byte records, sequence
 * numbers running on across pieces as a station's record counter does.
 * @throws RangeError from the writer (codes, rates, Steim differences)
 */
export function encodeDemoMiniSeed(pieces: readonly CountsPiece[]): Uint8Array {
  const parts: Uint8Array[] = [];
  let seq = 1;
  for (const p of pieces) {
    const bytes = encodeMiniSeed2(p, { encoding: 'steim2', recordLength: DEMO_RECORD_LENGTH, firstSequenceNumber: seq });
    seq = ((seq - 1 + bytes.length / DEMO_RECORD_LENGTH) % 999_999) + 1;
    parts.push(bytes);
  }
  const out = new Uint8Array(parts.reduce((n, b) => n + b.length, 0));
  let o = 0;
  for (const b of parts) {
    out.set(b, o);
    o += b.length;
  }
  return out;
}

/**
 * A CSV window as server/formats/csv.ts reads it: `# stream=` and `# start=` comments, a
 * `t_seconds,counts` header, then one row per sample with the time relative to the start
 * (2 decimals at 100 sps) and the integer counts.
 * @param streamId NET.STA.LOC.CHA
 * @param startTimeUs first sample, µs since epoch
 * @param sampleRateHz samples per second (> 0)
 */
export function encodeDemoCsv(streamId: string, startTimeUs: number, sampleRateHz: number, samples: Int32Array, note: string): string {
  if (!(sampleRateHz > 0)) throw new RangeError(`sample rate ${sampleRateHz} Hz must be > 0`);
  const decimals = Math.max(0, Math.ceil(Math.log10(sampleRateHz)));
  const lines = [`# stream=${streamId}`, `# start=${formatIsoTimeUs(startTimeUs)}`, `# ${note}`, 't_seconds,counts'];
  for (let i = 0; i < samples.length; i++) lines.push(`${(i / sampleRateHz).toFixed(decimals)},${samples[i] ?? 0}`);
  return `${lines.join('\n')}\n`;
}
