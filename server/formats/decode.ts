import { decodeCsv } from './csv';
import { decodeMiniSeed2, looksLikeMiniSeed2 } from './mseed2';
import { decodeMiniSeed3, looksLikeMiniSeed3 } from './mseed3';
import { WaveformParseError, type DecodedStream } from './types';
import { clipInput, MAX_QUOTED_CHARS } from '../../shared/quote-input';

/** Options for {@link decodeWaveform}. */
export interface DecodeOptions {
  /** Upload file name: only used in messages and to prefer CSV for `.csv`/`.txt` names. */
  filename?: string;
  /** Stream id `NET.STA.LOC.CHA` for CSV uploads (wins over a `# stream=` comment); ignored for MiniSEED. */
  streamId?: string;
}

/**
 * Decodes an uploaded waveform file of any supported format into streams.
 *
 * Format sniffing (first bytes): `MS` followed by byte 3 → MiniSEED 3 (FDSN 2022); a 6-character
 * sequence number of digits/spaces, a quality code D/R/Q/M and a space → MiniSEED 2 (SEED 2.4);
 * otherwise valid UTF-8 text with no control characters → CSV (see csv.ts). Anything else is refused.
 *
 * Guarantee: for any input whatsoever this returns streams or throws a {@link WaveformParseError};
 * every byte read is bounds-checked, loops are bounded by the input size, and allocations are capped
 * by what each record can actually hold. An unexpected internal exception is converted into a
 * WaveformParseError whose message starts with `internal decoder error`, so callers still see one
 * error type (the property tests assert this never happens on mutated files).
 *
 * @returns at least one stream (MiniSEED: one per NET.STA.LOC.CHA in order of first appearance)
 * @throws WaveformParseError with a message naming the problem (empty file, unknown format,
 *   truncated record, impossible header values, CRC mismatch, bad CSV cell, …)
 */
export function decodeWaveform(bytes: Uint8Array, opts: DecodeOptions = {}): DecodedStream[] {
  const name = opts.filename ? `${clipInput(opts.filename, MAX_QUOTED_CHARS, 12)}: ` : '';
  try {
    const streams = dispatch(bytes, opts);
    if (streams.length === 0) throw new WaveformParseError('the file holds no samples (only empty records)');
    return streams;
  } catch (err) {
    if (err instanceof WaveformParseError) {
      if (!name) throw err;
      throw new WaveformParseError(`${name}${err.message}`, err.offset);
    }
    const detail = err instanceof Error ? err.message : String(err);
    throw new WaveformParseError(`${name}internal decoder error: ${detail}`);
  }
}

function dispatch(bytes: Uint8Array, opts: DecodeOptions): DecodedStream[] {
  if (bytes.byteLength === 0) throw new WaveformParseError('empty file');
  if (looksLikeMiniSeed3(bytes)) return decodeMiniSeed3(bytes);
  const csvName = /\.(csv|txt)$/iu.test(opts.filename ?? '');
  if (!csvName && looksLikeMiniSeed2(bytes)) return decodeMiniSeed2(bytes);
  const text = asText(bytes);
  if (text !== undefined) {
    const csvOpts = opts.streamId === undefined ? {} : { streamId: opts.streamId };
    return [decodeCsv(text, csvOpts)];
  }
  if (looksLikeMiniSeed2(bytes)) return decodeMiniSeed2(bytes);
  const head = Array.from(bytes.subarray(0, 8), (b) => b.toString(16).padStart(2, '0')).join(' ');
  throw new WaveformParseError(
    `unrecognised format: not MiniSEED 2, MiniSEED 3 or CSV text (first bytes ${head})`,
  );
}

/** The bytes as text when they are UTF-8 without control characters other than tab, CR, LF. */
function asText(bytes: Uint8Array): string | undefined {
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return undefined;
  }
  // eslint-disable-next-line no-control-regex
  if (/[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/u.test(text)) return undefined;
  return text;
}
