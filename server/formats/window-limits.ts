import type { DecodedStream } from './types';

/**
 * How large one uploaded window may be. A queue item is a short window around something to look
 * at (BRIEF.md: "short windows"); the defaults allow an hour at 200 samples per second per
 * channel, far above the usual 2–10 minutes, while keeping every later step (analysis, traces,
 * spectrogram) bounded: without a limit one 25 MB Steim-2 file held 40 million samples (111 h),
 * and each traces request then held the event loop for 8.5 s and 3.75 GB of memory.
 */
export interface WindowLimits {
  /** Most samples per channel (SEISIFT_MAX_WINDOW_SAMPLES). */
  maxSamples: number;
  /** Longest span of a channel, and of the window from its earliest to its latest sample, s (SEISIFT_MAX_WINDOW_S). */
  maxDurationS: number;
}

/** The default limits: 1 h at 200 sps per channel. */
export const defaultWindowLimits: WindowLimits = { maxSamples: 720_000, maxDurationS: 3600 };

const fmt = (n: number) => n.toLocaleString('en-GB').replace(/,/g, ' ');
const span = (s: number) => (s >= 3600 ? `${(s / 3600).toFixed(1)} h` : `${s.toFixed(1)} s`);

/**
 * The first way `streams` break `limits`, as a message naming the stream, its size and the limit
 * with its setting, or null when they fit. Per channel: its samples, and its span — the samples'
 * length (samples ÷ rate) plus every gap between its records. Per station (the streams of one
 * station form one window): the span from the earliest first sample to the latest last one.
 * Pure; units s and samples.
 */
export function windowLimitProblem(streams: readonly DecodedStream[], limits: WindowLimits): string | null {
  const setting = `at most ${fmt(limits.maxSamples)} samples and ${fmt(limits.maxDurationS)} s per channel (SEISIFT_MAX_WINDOW_SAMPLES, SEISIFT_MAX_WINDOW_S)`;
  const byStation = new Map<string, { startUs: number; endUs: number }>();
  for (const s of streams) {
    const n = s.samples.length;
    const gapsS = s.discontinuities.reduce((sum, d) => sum + Math.max(0, d.durationS), 0);
    const durationS = n / s.sampleRateHz + gapsS;
    if (n > limits.maxSamples || durationS > limits.maxDurationS) {
      return `stream ${s.id} holds ${fmt(n)} samples over ${span(durationS)}; a window may hold ${setting}`;
    }
    const key = `${s.network}.${s.station}`;
    const endUs = s.startTimeUs + durationS * 1e6;
    const w = byStation.get(key);
    byStation.set(key, w ? { startUs: Math.min(w.startUs, s.startTimeUs), endUs: Math.max(w.endUs, endUs) } : { startUs: s.startTimeUs, endUs });
  }
  for (const [key, w] of byStation) {
    const s = (w.endUs - w.startUs) / 1e6;
    if (s > limits.maxDurationS) return `the channels of station ${key} span ${span(s)} from the first sample to the last; a window may span ${fmt(limits.maxDurationS)} s (SEISIFT_MAX_WINDOW_S)`;
  }
  return null;
}
