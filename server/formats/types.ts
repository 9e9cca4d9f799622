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
  /**
   * For a person: what the discontinuity is and which record starts it (1-based, with its byte
   * offset), naming records that claim 0 samples inside a gap and the first differing sample of an
   * overlap. Set by the MiniSEED decoders; absent for hand-built streams.
   */
  detail?: string;
}

/**
 * Something the decoder did to place samples exactly at their times, or noticed while doing it,
 * that the window's QC findings should say.
 * - `duplicate-record`: a record whose samples all repeat samples already placed at the same times
 *   (identical values) was dropped;
 * - `duplicate-samples`: a record began inside samples already placed with identical values there:
 *   those repeated samples were dropped, the rest placed after them;
 * - `empty-record`: a data record claims 0 samples (nothing placed from it; its time lies where
 *   samples are present, so nothing is missing because of it).
 */
export interface DecodeNote {
  code: 'duplicate-record' | 'duplicate-samples' | 'empty-record';
  /** What was found and done, naming the record (1-based) and its byte offset. */
  message: string;
  /** Index in `samples` of the sample at the record's start time (after placement). */
  sampleIndex: number;
  /** Samples dropped (0 for `empty-record`). */
  count: number;
}

/**
 * Where a run of samples belongs and when it starts: the FDSN codes (network, station, location,
 * channel), the sample rate in Hz and the time of the first sample in µs since the epoch (UTC). The
 * decoded streams and records, the writers' inputs and the demo's pieces all carry it.
 */
export interface StreamHeader {
  network: string;
  station: string;
  location: string;
  channel: string;
  sampleRateHz: number;
  startTimeUs: number;
}

/**
 * One continuous-or-gapped stream after merging all its records, in time order: `sampleRateHz` is
 * the nominal rate, `startTimeUs` the first sample's time after time corrections.
 */
export interface DecodedStream extends StreamHeader {
  /** FDSN stream id `NET.STA.LOC.CHA` (location may be empty: `XX.KV03..HHZ`). */
  id: string;
  /**
   * Samples in the file's units (counts for integer/Steim data), concatenated across records. May
   * view a larger buffer (room that dropped repeats did not fill): use byteOffset/byteLength.
   */
  samples: Float64Array;
  /**
   * Gaps and overlaps between records that remain in `samples` (empty when continuous): the samples
   * after one do NOT sit at `startTimeUs + index / sampleRateHz`, see `placementProblems`.
   * Repeated samples with identical values are not discontinuities: they are dropped (see `notes`).
   */
  discontinuities: StreamDiscontinuity[];
  /** What the decoder dropped or noticed while placing the samples (MiniSEED only). */
  notes?: DecodeNote[];
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
