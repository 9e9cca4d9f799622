import { WaveformParseError, type DecodedStream } from './types';

/**
 * Why samples of decoded streams cannot be stored as "start time + index / rate" (one line per
 * gap or true overlap, naming the stream, the times and the record), or an empty list when every
 * sample sits at its time (within half a sample interval, libmseed's default tolerance).
 *
 * A window is stored and analysed as one uniformly sampled series per channel, so after a gap the
 * samples would be drawn and picked early by the gap's length, and after an overlap two values
 * would claim one time; nothing is filled in or chosen, so such a window is refused instead.
 * Repeated samples with identical values are not problems: the decoder drops them (DecodeNote).
 */
export function placementProblems(streams: readonly DecodedStream[]): string[] {
  const out: string[] = [];
  for (const s of streams) {
    for (const d of s.discontinuities) {
      const what = d.detail ?? `${d.durationS > 0 ? 'gap' : 'overlap'} of ${Math.abs(d.durationS)} s before sample ${d.sampleIndex}`;
      out.push(`${s.id}: ${what}`);
    }
  }
  return out;
}

/** At most this many problems are spelled out in the refusal; the rest are counted. */
const LISTED = 3;

/**
 * Throws unless every sample of every stream sits at its time (see placementProblems).
 * @throws WaveformParseError "samples cannot be placed exactly at their times: …", naming the
 *   first few gaps or overlaps and what to do
 */
export function assertExactPlacement(streams: readonly DecodedStream[]): void {
  const problems = placementProblems(streams);
  if (problems.length === 0) return;
  const more = problems.length > LISTED ? `; and ${problems.length - LISTED} more` : '';
  const gaps = streams.some((s) => s.discontinuities.some((d) => d.durationS > 0));
  const advice = gaps
    ? 'upload the continuous parts as separate files (nothing is filled in)'
    : 'send one version of the overlapping data (nothing is chosen for you)';
  throw new WaveformParseError(
    `samples cannot be placed exactly at their times (a window is stored as one evenly sampled series per channel): ${problems.slice(0, LISTED).join('; ')}${more}. ${advice[0]?.toUpperCase()}${advice.slice(1)}`,
  );
}
