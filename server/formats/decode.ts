import { decodeCsv, looksLikeCsvData, type CsvOptions } from './csv';
import { decodeMiniSeed2 } from './mseed2';
import { decodeMiniSeed3 } from './mseed3';
import { assertExactPlacement } from './placement';
import { describeNonCsvText, quoteStart, sniffFile } from './sniff';
import { WaveformParseError, type DecodedStream } from './types';
import { clipInput, MAX_QUOTED_CHARS } from '@shared/quote-input';

/** Options for {@link decodeWaveform}. */
export interface DecodeOptions {
  /** Upload file name: only used in messages (the format is judged by content, never by name). */
  filename?: string;
  /** Stream id `NET.STA.LOC.CHA` for CSV uploads (wins over a `# stream=` comment); ignored for MiniSEED. */
  streamId?: string;
  /**
   * Time of t = 0 for CSV files with relative seconds, µs since epoch (wins over a `# start=`
   * comment); ignored for MiniSEED and for CSV files with ISO-8601 times.
   */
  startTimeUs?: number;
  /**
   * Refuse streams whose samples cannot be stored as start + index / rate: a gap or a true overlap
   * between records (see placement.ts). What the ingest uses; off for tools that re-encode files
   * with their gaps (the demo replay) or analyse them with gap findings (the command line).
   */
  exactPlacement?: boolean;
}

/** File-name endings that promise MiniSEED. */
const MSEED_NAME = /\.(mseed|miniseed|ms|msd|seed|mseed3|ms3)$/iu;

/**
 * Decodes an uploaded waveform file of any supported format into streams.
 *
 * The format is judged by content (sniff.ts), never by the file name: `MS` + byte 3 → MiniSEED 3
 * (FDSN 2022); a MiniSEED 2 fixed header → MiniSEED 2 (SEED 2.4); UTF-8 text → CSV (csv.ts) unless
 * it is XML or JSON, or no line holds a time and a value, each refused by name ("this is XML …",
 * "this is plain text …"); ZIP, gzip and other known binary formats are refused by name too. A
 * text file whose name promises MiniSEED is read as the CSV it is, and any refusal says so.
 *
 * Guarantee: for any input whatsoever this returns streams or throws a {@link WaveformParseError};
 * every byte read is bounds-checked, loops are bounded by the input size, and allocations are capped
 * by what each record can actually hold. An unexpected internal exception is converted into a
 * WaveformParseError whose message starts with `internal decoder error`, so callers still see one
 * error type (the property tests assert this never happens on mutated files).
 *
 * @returns at least one stream (MiniSEED: one per NET.STA.LOC.CHA in order of first appearance)
 * @throws WaveformParseError with a message naming the problem (empty file, what the file is when
 *   it is not a waveform, truncated record, impossible header values, CRC mismatch, bad CSV cell,
 *   and with `exactPlacement` a gap or overlap, …)
 */
export function decodeWaveform(bytes: Uint8Array, opts: DecodeOptions = {}): DecodedStream[] {
  const name = opts.filename ? `${clipInput(opts.filename, MAX_QUOTED_CHARS, 12)}: ` : '';
  try {
    const streams = dispatch(bytes, opts);
    if (streams.length === 0) throw new WaveformParseError('the file holds no samples (only empty records)');
    if (opts.exactPlacement) assertExactPlacement(streams);
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
  const sniffed = sniffFile(bytes);
  switch (sniffed.kind) {
    case 'mseed3':
      return decodeMiniSeed3(bytes);
    case 'mseed2':
      return decodeMiniSeed2(bytes);
    case 'refused':
      throw new WaveformParseError(sniffed.message);
    case 'text':
      return [decodeText(sniffed.text, opts)];
  }
}

/** A text file: a CSV waveform, or refused naming what it is. */
function decodeText(text: string, opts: DecodeOptions): DecodedStream {
  const misnamed = MSEED_NAME.test(opts.filename ?? '') ? 'named like MiniSEED but holds text, ' : '';
  const other = describeNonCsvText(text);
  if (other) throw new WaveformParseError(`${misnamed}${other}`);
  if (!looksLikeCsvData(text)) {
    throw new WaveformParseError(
      `${misnamed}this is plain text, not a CSV waveform: no line holds a time and a value separated by ',', ';' or a tab (it begins ${quoteStart(text)})`,
    );
  }
  const csvOpts: CsvOptions = {};
  if (opts.streamId !== undefined) csvOpts.streamId = opts.streamId;
  if (opts.startTimeUs !== undefined) csvOpts.startTimeUs = opts.startTimeUs;
  try {
    return decodeCsv(text, csvOpts);
  } catch (err) {
    if (err instanceof WaveformParseError && misnamed) throw new WaveformParseError(`${misnamed}read as CSV: ${err.message}`, err.offset);
    throw err;
  }
}
