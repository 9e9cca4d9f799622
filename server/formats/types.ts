/**
 * Types shared by every waveform decoder and by the analysis pipeline.
 * Times are integers in microseconds since 1970-01-01T00:00:00Z (UTC), held as `number`
 * (exact up to 2^53 µs ≈ year 2255), so sample times keep microseconds.
 */

/** A gap (positive) or overlap (negative) between two consecutive records of one stream. */
export interface StreamDiscontinuity {
  /** Expected time of the next sample (µs since epoch). */
  expectedTimeUs: number;
  /** Actual start time of the next record (µs since epoch). */
  actualTimeUs: number;
  /** actual − expected, in seconds: > 0 is a gap, < 0 an overlap. */
  durationS: number;
  /** Index in `samples` where the next record's data begins. */
  sampleIndex: number;
}

/** One continuous-or-gapped stream after merging all its records, in time order. */
export interface DecodedStream {
  /** FDSN stream id `NET.STA.LOC.CHA` (location may be empty: `XX.KV03..HHZ`). */
  id: string;
  network: string;
  station: string;
  location: string;
  channel: string;
  /** Nominal sample rate, Hz. */
  sampleRateHz: number;
  /** Time of the first sample, µs since epoch (UTC), after time corrections. */
  startTimeUs: number;
  /** Samples in the file's units (counts for integer/Steim data), concatenated across records. */
  samples: Float64Array;
  /** Gaps and overlaps between records (empty when continuous). */
  discontinuities: StreamDiscontinuity[];
  /** Source encoding name, e.g. `steim2`, `int32`, `float32`, `csv`. */
  encoding: string;
  /** `mseed2`, `mseed3` or `csv`. */
  format: 'mseed2' | 'mseed3' | 'csv';
  /** MiniSEED 3 extra headers (JSON) of the first record, kept as given; undefined otherwise. */
  extraHeaders?: unknown;
}

/** The error every decoder throws for bad input: a message a technician can read. */
export class WaveformParseError extends Error {
  override readonly name = 'WaveformParseError';
  constructor(
    message: string,
    /** Byte offset in the file where the problem was found, when known. */
    readonly offset?: number,
  ) {
    super(message);
  }
}
