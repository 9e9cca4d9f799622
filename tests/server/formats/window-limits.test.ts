/** The per-window limits (hand-worked cases; the defaults are 1 h at 200 sps per channel). */
import { describe, expect, it } from 'vitest';
import type { DecodedStream } from '@server/formats/types';
import { defaultWindowLimits, windowLimitProblem } from '@server/formats/window-limits';

const T0 = Date.UTC(2026, 2, 14, 9) * 1000;
function stream(channel: string, n: number, fs: number, opts: { startUs?: number; station?: string; gapS?: number } = {}): DecodedStream {
  const station = opts.station ?? 'KV01';
  return {
    id: `XX.${station}.00.${channel}`,
    network: 'XX',
    station,
    location: '00',
    channel,
    sampleRateHz: fs,
    startTimeUs: opts.startUs ?? T0,
    samples: new Float64Array(n),
    discontinuities: opts.gapS ? [{ expectedTimeUs: T0, actualTimeUs: T0 + opts.gapS * 1e6, durationS: opts.gapS, sampleIndex: 1 }] : [],
    encoding: 'int32',
    format: 'mseed3',
  };
}

describe('windowLimitProblem', () => {
  it('accepts exactly 1 h at 200 sps (720 000 samples, 3600 s) on three channels', () => {
    expect(defaultWindowLimits).toEqual({ maxSamples: 720_000, maxDurationS: 3600 });
    expect(windowLimitProblem(['HHZ', 'HHN', 'HHE'].map((c) => stream(c, 720_000, 200)), defaultWindowLimits)).toBeNull();
  });
  it('refuses one sample more, naming the stream, its size and both settings', () => {
    expect(windowLimitProblem([stream('HHZ', 720_001, 200)], defaultWindowLimits)).toBe(
      'stream XX.KV01.00.HHZ holds 720 001 samples over 1.0 h; a window may hold at most 720 000 samples and 3 600 s per channel (SEISIFT_MAX_WINDOW_SAMPLES, SEISIFT_MAX_WINDOW_S)',
    );
  });
  it('refuses a long span at a low rate (few samples): 100 000 samples at 20 sps = 5000 s', () => {
    expect(windowLimitProblem([stream('BHZ', 100_000, 20)], defaultWindowLimits)).toMatch(/^stream XX\.KV01\.00\.BHZ holds 100 000 samples over 1\.4 h/);
  });
  it('counts gaps in a channel\'s span: 3000 s of samples plus a 700 s gap', () => {
    expect(windowLimitProblem([stream('HHZ', 300_000, 100, { gapS: 700 })], defaultWindowLimits)).toMatch(/over 1\.0 h; a window may hold/);
    expect(windowLimitProblem([stream('HHZ', 300_000, 100, { gapS: 500 })], defaultWindowLimits)).toBeNull();
  });
  it('refuses channels of one station spread over more than the span; other stations are windows of their own', () => {
    const late = T0 + 3100 * 1e6; // 3100 s + 600 s of samples: 3700 s from first to last
    expect(windowLimitProblem([stream('HHZ', 60_000, 100), stream('HHN', 60_000, 100, { startUs: late })], defaultWindowLimits)).toBe(
      'the channels of station XX.KV01 span 1.0 h from the first sample to the last; a window may span 3 600 s (SEISIFT_MAX_WINDOW_S)',
    );
    expect(windowLimitProblem([stream('HHZ', 60_000, 100), stream('HHZ', 60_000, 100, { startUs: late, station: 'KV02' })], defaultWindowLimits)).toBeNull();
  });
});
