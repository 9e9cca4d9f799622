import { WaveformParseError, type DecodedStream, type StreamDiscontinuity } from './types';

/** One decoded data record, before records are merged into streams. */
export interface DecodedRecord {
  network: string;
  station: string;
  location: string;
  channel: string;
  /** Sample rate, Hz (0 for records without a rate, which carry no samples worth merging). */
  sampleRateHz: number;
  /** Time of the record's first sample, µs since epoch, after corrections. */
  startTimeUs: number;
  samples: Float64Array;
  encoding: string;
  /** 0-based position of the record in the file, for messages. */
  recordIndex: number;
  /** Byte offset of the record in the file. */
  offset: number;
  /** MiniSEED 3 extra headers, when present. */
  extraHeaders?: unknown;
}

/**
 * Merges data records into one stream per `NET.STA.LOC.CHA`, in order of first appearance in the
 * file; each stream's records are sorted by start time (stable, so equal times keep file order).
 *
 * A record whose start differs from the previous record's end (start + n / rate) by more than half
 * a sample interval starts a discontinuity: a gap if later, an overlap if earlier (tolerance of
 * half a sample is common practice). Overlapping samples are kept as they come, in time order of
 * record starts, and reported; nothing is dropped or interpolated.
 *
 * Records carrying no samples are skipped. The data-quality indicator is not part of the stream id.
 * A stream whose records use several encodings gets them joined with `+` (e.g. `steim2+int32`);
 * its extra headers are those of its earliest record.
 *
 * @throws WaveformParseError when one stream changes sample rate (relative difference > 1e-4, the
 *   tolerance libmseed uses by default) or has a non-positive rate while carrying samples
 */
export function mergeRecords(records: DecodedRecord[], format: DecodedStream['format']): DecodedStream[] {
  const groups = new Map<string, DecodedRecord[]>();
  for (const r of records) {
    if (r.samples.length === 0) continue;
    const id = `${r.network}.${r.station}.${r.location}.${r.channel}`;
    if (!(r.sampleRateHz > 0) || !Number.isFinite(r.sampleRateHz)) {
      throw new WaveformParseError(
        `record ${r.recordIndex + 1} (${id}) carries ${r.samples.length} samples but its sample rate is ${r.sampleRateHz}`,
        r.offset,
      );
    }
    const list = groups.get(id);
    if (list) list.push(r);
    else groups.set(id, [r]);
  }
  const streams: DecodedStream[] = [];
  for (const [id, list] of groups) {
    list.sort((a, b) => a.startTimeUs - b.startTimeUs);
    const first = list[0];
    if (!first) continue;
    let total = 0;
    for (const r of list) total += r.samples.length;
    const samples = new Float64Array(total);
    const discontinuities: StreamDiscontinuity[] = [];
    let index = 0;
    let prev: DecodedRecord | undefined;
    const encodings = new Set<string>();
    for (const r of list) {
      if (Math.abs(1 - r.sampleRateHz / first.sampleRateHz) > 1e-4) {
        throw new WaveformParseError(
          `stream ${id} changes sample rate from ${first.sampleRateHz} Hz to ${r.sampleRateHz} Hz at record ${r.recordIndex + 1}`,
          r.offset,
        );
      }
      if (prev) {
        const expected = prev.startTimeUs + (prev.samples.length * 1e6) / prev.sampleRateHz;
        const halfSampleUs = 0.5e6 / first.sampleRateHz;
        if (Math.abs(r.startTimeUs - expected) > halfSampleUs) {
          const expectedTimeUs = Math.round(expected);
          discontinuities.push({
            expectedTimeUs,
            actualTimeUs: r.startTimeUs,
            durationS: (r.startTimeUs - expectedTimeUs) / 1e6,
            sampleIndex: index,
          });
        }
      }
      samples.set(r.samples, index);
      index += r.samples.length;
      encodings.add(r.encoding);
      prev = r;
    }
    const stream: DecodedStream = {
      id,
      network: first.network,
      station: first.station,
      location: first.location,
      channel: first.channel,
      sampleRateHz: first.sampleRateHz,
      startTimeUs: first.startTimeUs,
      samples,
      discontinuities,
      encoding: [...encodings].join('+'),
      format,
    };
    if (first.extraHeaders !== undefined) stream.extraHeaders = first.extraHeaders;
    streams.push(stream);
  }
  return streams;
}
