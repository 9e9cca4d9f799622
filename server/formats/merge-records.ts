import { formatIsoTimeUs } from './iso-time';
import { WaveformParseError, type DecodeNote, type DecodedStream, type StreamDiscontinuity, type StreamHeader } from './types';

/**
 * One decoded data record, before records are merged into streams: `sampleRateHz` is 0 for records
 * without a rate (they carry no samples worth merging), `startTimeUs` the record's first sample's
 * time after corrections.
 */
export interface DecodedRecord extends StreamHeader {
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
 * Most runs (pieces separated by gaps or overlaps) one stream may fall into: more is refused, which
 * also bounds the work of joining records into runs on crafted files (at most records × this).
 */
export const MAX_RUNS_PER_STREAM = 1000;

/** Encodings that carry a sampled time series: a record in one of them with 0 samples is "empty". */
const SAMPLE_ENCODINGS = new Set(['int16', 'int32', 'float32', 'float64', 'steim1', 'steim2']);

const fmt = (v: number): string => Number(v.toPrecision(6)).toString();
const recordName = (r: DecodedRecord): string => `record ${r.recordIndex + 1} at byte ${r.offset}`;

/**
 * Merges data records into one stream per `NET.STA.LOC.CHA`, in order of first appearance in the
 * file, placing every sample at its time on the stream's grid `start + i / rate`.
 *
 * Records are first joined into runs as they come in the file: a record that starts where a run
 * ends (or ends where a run starts) joins it, otherwise it starts a new run (tolerance: half a
 * sample interval, libmseed's default, common practice). So records in any order join up, and a
 * repeated or re-sent record stays a run of its own. The runs, sorted by start time, are then
 * placed on the grid one after the other:
 * - on time: the samples follow;
 * - later: a gap, kept as a discontinuity (nothing is filled in); data records of the stream that
 *   claim 0 samples and start inside the gap are named in its `detail` (they are why it is there);
 * - earlier (an overlap): the overlapping samples are compared with those already placed at the
 *   same times. All identical (a repeated record, or data re-sent from a little earlier): the
 *   repeats are dropped and a `duplicate-record` / `duplicate-samples` note says so; any value
 *   different: a true overlap, kept as a discontinuity naming the first differing sample.
 * After a discontinuity the grid restarts at the run's own start. A stream with discontinuities
 * cannot be stored as one start time and rate: `placementProblems` (placement.ts) names them.
 *
 * Records carrying no samples are not placed. Data records (a sample encoding and a positive rate)
 * that claim 0 samples are reported: inside a gap in its detail, elsewhere as an `empty-record`
 * note. Text and other records without a sampled series (e.g. a LOG channel) are skipped silently.
 * The data-quality indicator is not part of the stream id. A stream whose records use several
 * encodings gets them joined with `+` (e.g. `steim2+int32`); its extra headers are those of its
 * earliest record.
 *
 * @throws WaveformParseError when one stream changes sample rate (relative difference > 1e-4, the
 *   tolerance libmseed uses by default) or has a non-positive rate while carrying samples
 */
export function mergeRecords(records: DecodedRecord[], format: DecodedStream['format']): DecodedStream[] {
  const groups = new Map<string, DecodedRecord[]>();
  const empties = new Map<string, DecodedRecord[]>();
  for (const r of records) {
    const id = `${r.network}.${r.station}.${r.location}.${r.channel}`;
    if (r.samples.length === 0) {
      if (r.sampleRateHz > 0 && Number.isFinite(r.sampleRateHz) && SAMPLE_ENCODINGS.has(r.encoding)) {
        const list = empties.get(id);
        if (list) list.push(r);
        else empties.set(id, [r]);
      }
      continue;
    }
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
    const stream = placeRecords(id, list, empties.get(id) ?? [], format);
    const earliest = list.reduce((a, b) => (b.startTimeUs < a.startTimeUs ? b : a));
    if (earliest.extraHeaders !== undefined) stream.extraHeaders = earliest.extraHeaders;
    streams.push(stream);
  }
  return streams;
}

/** Records that follow one another without a gap or overlap, in time order. */
interface Run {
  startUs: number;
  /** Expected time of the sample after the last one, µs. */
  endUs: number;
  records: DecodedRecord[];
}

/** "record 7 at byte 3072 starts" or "records 7–9 (from byte 3072) start". */
function runName(run: Run, verb: string): string {
  const first = run.records[0] as DecodedRecord;
  const last = run.records[run.records.length - 1] as DecodedRecord;
  if (run.records.length === 1) return `${recordName(first)} ${verb}s`;
  const span = last.recordIndex - first.recordIndex === run.records.length - 1 ? `${first.recordIndex + 1}–${last.recordIndex + 1}` : `${first.recordIndex + 1} and ${run.records.length - 1} more`;
  return `records ${span} (from byte ${first.offset}) ${verb}`;
}

/**
 * Joins one stream's records (file order) into runs, see mergeRecords. Runs are found by their
 * start and end times on the sample grid (hash maps keyed by time / period, the neighbouring keys
 * checked too), so a file of many separate records costs linear time, not quadratic.
 */
function joinRuns(id: string, list: DecodedRecord[], rate: number): Run[] {
  const periodUs = 1e6 / rate;
  const tol = periodUs / 2;
  const runs: Run[] = [];
  // Buckets are Sets: insertion-ordered, O(1) removal; the first matching run in a bucket is taken.
  const byEnd = new Map<number, Set<Run>>();
  const byStart = new Map<number, Set<Run>>();
  const key = (us: number): number => Math.round(us / periodUs);
  const add = (map: Map<number, Set<Run>>, us: number, run: Run): void => {
    const bucket = map.get(key(us));
    if (bucket) bucket.add(run);
    else map.set(key(us), new Set([run]));
  };
  const remove = (map: Map<number, Set<Run>>, us: number, run: Run): void => {
    const bucket = map.get(key(us));
    bucket?.delete(run);
    if (bucket?.size === 0) map.delete(key(us));
  };
  const find = (map: Map<number, Set<Run>>, us: number, at: (run: Run) => number): Run | undefined => {
    const k = key(us);
    for (const kk of [k, k - 1, k + 1]) {
      for (const run of map.get(kk) ?? []) if (Math.abs(us - at(run)) <= tol) return run;
    }
    return undefined;
  };
  for (const r of list) {
    const spanUs = r.samples.length * periodUs;
    const after = find(byEnd, r.startTimeUs, (run) => run.endUs);
    if (after) {
      remove(byEnd, after.endUs, after);
      after.records.push(r);
      after.endUs += spanUs;
      add(byEnd, after.endUs, after);
      continue;
    }
    const before = find(byStart, r.startTimeUs + spanUs, (run) => run.startUs);
    if (before) {
      remove(byStart, before.startUs, before);
      before.records.unshift(r);
      before.startUs = r.startTimeUs;
      add(byStart, before.startUs, before);
      continue;
    }
    const run: Run = { startUs: r.startTimeUs, endUs: r.startTimeUs + spanUs, records: [r] };
    if (runs.length >= MAX_RUNS_PER_STREAM) {
      throw new WaveformParseError(
        `stream ${id}: its records fall into more than ${MAX_RUNS_PER_STREAM} separate pieces (gaps or overlaps between them, from record ${r.recordIndex + 1} at byte ${r.offset}): not a window whose samples can be placed`,
        r.offset,
      );
    }
    runs.push(run);
    add(byEnd, run.endUs, run);
    add(byStart, run.startUs, run);
  }
  return runs.sort((a, b) => a.startUs - b.startUs);
}

/** Index of the first element of `sorted` (ascending by `at`) with `at(x) >= value`. */
function lowerBound<T>(sorted: readonly T[], value: number, at: (x: T) => number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (at(sorted[mid] as T) < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Places one stream's records (at least one, file order) on its sample grid; see mergeRecords. */
function placeRecords(id: string, list: DecodedRecord[], empties: DecodedRecord[], format: DecodedStream['format']): DecodedStream {
  const rate = (list[0] as DecodedRecord).sampleRateHz;
  const encodings = new Set<string>();
  for (const r of list) {
    if (Math.abs(1 - r.sampleRateHz / rate) > 1e-4) {
      throw new WaveformParseError(
        `stream ${id} changes sample rate from ${rate} Hz to ${r.sampleRateHz} Hz at record ${r.recordIndex + 1}`,
        r.offset,
      );
    }
    encodings.add(r.encoding);
  }
  const periodUs = 1e6 / rate;
  const runs = joinRuns(id, list, rate);
  const emptiesByTime = [...empties].sort((a, b) => a.startTimeUs - b.startTimeUs);
  const firstRun = runs[0] as Run;
  let total = 0;
  for (const r of list) total += r.samples.length;
  const samples = new Float64Array(total);
  const discontinuities: StreamDiscontinuity[] = [];
  const notes: DecodeNote[] = [];
  // Grid pieces: sample `index` sits at `startUs + (index - fromIndex) · period` from `fromIndex` on.
  const pieces: { startUs: number; fromIndex: number }[] = [{ startUs: firstRun.startUs, fromIndex: 0 }];
  const usedEmpties = new Set<DecodedRecord>();
  let placed = 0;
  const placeRun = (run: Run, skip: number): void => {
    for (const r of run.records) {
      const take = r.samples.subarray(Math.min(skip, r.samples.length));
      skip -= r.samples.length - take.length;
      samples.set(take, placed);
      placed += take.length;
    }
  };
  const runSample = (run: Run, j: number): number => {
    for (const r of run.records) {
      if (j < r.samples.length) return r.samples[j] as number;
      j -= r.samples.length;
    }
    return Number.NaN;
  };
  for (const run of runs) {
    const n = run.records.reduce((k, r) => k + r.samples.length, 0);
    if (placed === 0) {
      placeRun(run, 0);
      continue;
    }
    const piece = pieces[pieces.length - 1] as { startUs: number; fromIndex: number };
    const expectedUs = piece.startUs + (placed - piece.fromIndex) * periodUs;
    const lead = (run.startUs - expectedUs) / periodUs; // in samples: > 0 late, < 0 early
    if (Math.abs(lead) <= 0.5) {
      placeRun(run, 0);
      continue;
    }
    const expectedTimeUs = Math.round(expectedUs);
    const first = run.records[0] as DecodedRecord;
    if (lead < 0) {
      // The run begins at sample `at` of what is placed: compare the overlapping samples.
      const at = placed + Math.round(lead);
      const overlap = Math.min(placed - at, n);
      let differs = -1;
      if (at >= piece.fromIndex) {
        for (let j = 0; j < overlap; j++) {
          if (samples[at + j] !== runSample(run, j)) {
            differs = j;
            break;
          }
        }
      }
      if (at >= piece.fromIndex && differs < 0) {
        const timeUs = piece.startUs + (at - piece.fromIndex) * periodUs;
        if (overlap === n) {
          notes.push({
            code: 'duplicate-record',
            message: `${runName(run, 'repeat')} ${overlap} samples already placed from ${formatIsoTimeUs(Math.round(timeUs))} with identical values: dropped`,
            sampleIndex: at,
            count: overlap,
          });
        } else {
          notes.push({
            code: 'duplicate-samples',
            message: `${runName(run, 'begin')} ${fmt(overlap / rate)} s (${overlap} samples) before the end of the samples already placed, with identical values there: those ${overlap} dropped, the rest placed after them`,
            sampleIndex: at,
            count: overlap,
          });
          placeRun(run, overlap);
        }
        continue;
      }
      const where =
        differs >= 0
          ? `; at ${formatIsoTimeUs(Math.round(piece.startUs + (at + differs - piece.fromIndex) * periodUs))} it holds ${runSample(run, differs)} where ${samples[at + differs]} was already placed`
          : '; it reaches back past an earlier discontinuity';
      discontinuities.push({
        expectedTimeUs,
        actualTimeUs: first.startTimeUs,
        durationS: (first.startTimeUs - expectedTimeUs) / 1e6,
        sampleIndex: placed,
        detail: `overlap of ${fmt((expectedTimeUs - first.startTimeUs) / 1e6)} s: ${runName(run, 'start')} at ${formatIsoTimeUs(first.startTimeUs)}, before the end of the samples already placed (${formatIsoTimeUs(expectedTimeUs)}), with different values${where}`,
      });
    } else {
      const inGap: DecodedRecord[] = [];
      for (let i = lowerBound(emptiesByTime, expectedUs - periodUs / 2, (e) => e.startTimeUs); i < emptiesByTime.length; i++) {
        const e = emptiesByTime[i] as DecodedRecord;
        if (e.startTimeUs >= first.startTimeUs - periodUs / 2) break;
        inGap.push(e);
      }
      for (const e of inGap) usedEmpties.add(e);
      const why = inGap.map((e) => `; ${recordName(e)} starts in it and claims 0 samples`).join('');
      discontinuities.push({
        expectedTimeUs,
        actualTimeUs: first.startTimeUs,
        durationS: (first.startTimeUs - expectedTimeUs) / 1e6,
        sampleIndex: placed,
        detail: `gap of ${fmt((first.startTimeUs - expectedTimeUs) / 1e6)} s from ${formatIsoTimeUs(expectedTimeUs)} to ${formatIsoTimeUs(first.startTimeUs)}, before ${recordName(first)}${why}`,
      });
    }
    pieces.push({ startUs: first.startTimeUs, fromIndex: placed });
    placeRun(run, 0);
  }
  for (const e of empties) {
    if (usedEmpties.has(e)) continue;
    // The last piece starting at or before the record (pieces are in time order).
    const piece = pieces[Math.max(0, lowerBound(pieces, e.startTimeUs + 1, (p) => p.startUs) - 1)] as { startUs: number; fromIndex: number };
    const index = Math.max(0, Math.min(placed, piece.fromIndex + Math.round((e.startTimeUs - piece.startUs) / periodUs)));
    notes.push({
      code: 'empty-record',
      message: `${recordName(e)} claims 0 samples at ${formatIsoTimeUs(e.startTimeUs)}: nothing placed from it`,
      sampleIndex: index,
      count: 0,
    });
  }
  notes.sort((a, b) => a.sampleIndex - b.sampleIndex);
  const head = firstRun.records[0] as DecodedRecord;
  return {
    id,
    network: head.network,
    station: head.station,
    location: head.location,
    channel: head.channel,
    sampleRateHz: rate,
    startTimeUs: head.startTimeUs,
    // A view, not a copy: copying a large stream only to drop repeats cost more than the repeats.
    samples: placed === total ? samples : samples.subarray(0, placed),
    discontinuities,
    ...(notes.length > 0 ? { notes } : {}),
    encoding: [...encodings].join('+'),
    format,
  };
}
