import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { processingProfileSchema, type ProcessingProfile } from '@shared/schemas/processing-profile';
import { encodeSamples } from '@server/db/samples-codec';
import { analyzeWindow } from '@server/dsp/pipeline';
import { DISPLAY_TOLERANCE } from '@server/dsp/display-precision';
import { computeTraces, tracesForDisplay, type TracesInput } from '@server/features/queue/queue-traces';
import { channelSensitivity } from '@server/features/stations/station-registry';
import { decodeWaveform } from '@server/formats/decode';
import type { DecodedStream } from '@server/formats/types';

/**
 * The trace an analyst sees is the trace the flag came from: `computeTraces` (the trace view) at
 * full resolution equals the engine's own display curves (`analyzeWindow` with `display`, one
 * point per sample) — pre-processed trace, both bands, STA/LTA — and the band edges and units it
 * reports, for every profile option that changes the chain: band mode (the default high band fitted
 * to slow channels, a station's own band refused or capped at 0.45·fs), band-reject filters below
 * and above Nyquist, filter order, taper, STA/LTA method, units (counts, a flat velocity
 * sensitivity, a poles-and-zeros response, a non-velocity sensitivity left out) and sample rates.
 *
 * Input: a real three-component window of the open PhaseNet training set (tests/fixtures/real-windows,
 * BG.ACR 2012-08-25, 100 sps); the slower rates keep every k-th sample (aliasing does not matter
 * here: both sides filter the same samples). The check value is the engine's output itself.
 */

const fixture = new URL('../../../fixtures/real-windows/windows/XX.ACR.BG_ACR_2012082505145960.mseed', import.meta.url);
const recorded = decodeWaveform(new Uint8Array(readFileSync(fixture)), { filename: 'XX.ACR.mseed' });

/** The window at `fs` Hz: every (100 / fs)-th sample of the 100 sps recording. */
function atRate(fs: number): DecodedStream[] {
  const step = Math.round(100 / fs);
  return recorded.map((s) => {
    const samples = new Float64Array(Math.floor(s.samples.length / step));
    for (let i = 0; i < samples.length; i++) samples[i] = s.samples[i * step] as number;
    return { ...s, sampleRateHz: s.sampleRateHz / step, samples, discontinuities: [] };
  });
}

/** Both sides of one case: the engine's display curves and the trace view's, per channel. */
function bothSides(streams: DecodedStream[], profile: ProcessingProfile, channel: Parameters<typeof channelSensitivity>[0]) {
  const used = channelSensitivity(channel);
  const sensitivity = Object.fromEntries(used === null ? [] : streams.map((s) => [s.id, used]));
  const n = Math.max(...streams.map((s) => s.samples.length));
  const engine = analyzeWindow(streams, profile, { sensitivity, display: true, displayPoints: 2 * n });
  const input: TracesInput = {
    channels: streams.map((s) => ({ streamId: s.id, sampleRateHz: s.sampleRateHz, startTimeUs: s.startTimeUs, sampleCount: s.samples.length, samples: encodeSamples(s.samples) })),
    profile,
    // As loadTracesInput hands them over: the flat value the engine divides by.
    sensitivities: Object.fromEntries(used === null ? [] : streams.map((s) => [s.id, typeof used === 'number' ? used : used.sensitivity])),
    query: { points: 2 * n },
  };
  return { engine, shown: computeTraces(input) };
}

const counts = { sensitivity: null, sensitivityInputUnits: null, response: null };
const velocity = { sensitivity: 6.29e8, sensitivityInputUnits: 'M/S', response: null };
// A 1 Hz velocity sensor's two poles (rad/s) and a 6.29e8 counts per m/s sensitivity at 1 Hz
// (the shape of a short-period seismometer's StationXML response; values from memory).
const paz = { sensitivity: 6.29e8, sensitivityInputUnits: 'm/s', response: { zeros: [{ re: 0, im: 0 }, { re: 0, im: 0 }], poles: [{ re: -4.443, im: 4.443 }, { re: -4.443, im: -4.443 }], normalizationFactor: 1, sensitivity: 6.29e8, sensitivityFrequencyHz: 1 } };
const acceleration = { sensitivity: 1.0e6, sensitivityInputUnits: 'M/S**2', response: null };

const cases: Array<{ name: string; fs: number; profile: object; channel: Parameters<typeof channelSensitivity>[0]; units: 'counts' | 'm/s' }> = [
  { name: 'defaults, counts, 100 sps', fs: 100, profile: {}, channel: counts, units: 'counts' },
  { name: 'defaults, flat velocity sensitivity, 100 sps', fs: 100, profile: {}, channel: velocity, units: 'm/s' },
  { name: 'defaults, poles and zeros, 50 sps', fs: 50, profile: {}, channel: paz, units: 'm/s' },
  { name: 'an accelerometer sensitivity is left out (counts), 100 sps', fs: 100, profile: {}, channel: acceleration, units: 'counts' },
  { name: 'default high band fitted to 20 sps (2–8 Hz)', fs: 20, profile: {}, channel: velocity, units: 'm/s' },
  { name: "a station's own high band capped at 0.45·fs (policy cap), 20 sps", fs: 20, profile: { bands: { high: { fmin: 2, fmax: 15 }, nyquistPolicy: 'cap' } }, channel: counts, units: 'counts' },
  {
    name: 'band-reject below Nyquist applied, one above skipped; order 2; recursive STA/LTA; no taper; 50 sps',
    fs: 50,
    profile: { bands: { order: 2 }, bandReject: [{ fmin: 4, fmax: 6, order: 2, label: 'pump' }, { fmin: 30, fmax: 35 }], staLta: { method: 'recursive' }, preprocess: { taperAlpha: 0 } },
    channel: velocity,
    units: 'm/s',
  },
];

describe('the trace view runs the engine’s per-channel chain', () => {
  for (const c of cases) {
    it(`${c.name}: the shown trace, bands and STA/LTA equal the engine's, sample for sample`, () => {
      const profile = processingProfileSchema.parse(c.profile);
      const { engine, shown } = bothSides(atRate(c.fs), profile, c.channel);
      expect(shown.channels.map((ch) => ch.streamId)).toEqual(engine.channels.map((ch) => ch.id));
      for (const ch of engine.channels) {
        const view = shown.channels.find((s) => s.streamId === ch.id);
        const display = ch.display;
        if (!view || !display) throw new Error(`${ch.id}: missing on one side`);
        expect(display.bucket).toBe(1);
        expect(view.bucket).toBe(1);
        expect(view.units).toBe(ch.units);
        expect(view.units).toBe(c.units);
        expect(view.bands).toEqual({ low: [ch.bands.low.fmin, ch.bands.low.fmax], high: [ch.bands.high.fmin, ch.bands.high.fmax] });
        expect(view.raw).toEqual(display.trace);
        expect(view.low).toEqual(display.low);
        expect(view.high).toEqual(display.high);
        expect(view.staLta).toEqual(display.staLta);
        expect(view.triggers.map((t) => t.on)).toEqual(ch.staLta.triggers.map((t) => t.on));
      }
    });
  }

  it('as the API sends them (tracesForDisplay): every curve within 0.05 % of its peak of the engine’s, the peak exact, times to the µs, levels to 0.01 dB', () => {
    // Reference: the engine's own display curves (as above); the tolerance is the display rounding's
    // stated bound (server/dsp/display-precision.ts, DISPLAY_TOLERANCE of each curve's peak).
    const { engine, shown } = bothSides(atRate(100), processingProfileSchema.parse({}), velocity);
    const sent = tracesForDisplay(shown);
    expect(DISPLAY_TOLERANCE).toBe(5e-4);
    const close = (got: readonly number[], want: readonly number[]) => {
      expect(got).toHaveLength(want.length);
      const peak = Math.max(...want.map(Math.abs));
      const at = want.findIndex((v) => Math.abs(v) === peak);
      expect(got[at]).toBe(want[at]);
      got.forEach((v, i) => expect(Math.abs(v - (want[i] as number))).toBeLessThanOrEqual(peak * DISPLAY_TOLERANCE));
    };
    for (const ch of engine.channels) {
      const view = sent.channels.find((s) => s.streamId === ch.id);
      const exact = shown.channels.find((s) => s.streamId === ch.id);
      const display = ch.display;
      if (!view || !exact || !display) throw new Error(`${ch.id}: missing on one side`);
      close(view.raw, display.trace);
      close(view.low, display.low);
      close(view.high, display.high);
      close(view.staLta, display.staLta);
      view.times.forEach((t, i) => expect(Math.abs(t - (exact.times[i] as number))).toBeLessThanOrEqual(0.5e-6 + 1e-12));
      const db = exact.spectrogram?.db ?? [];
      expect(view.spectrogram?.db).toHaveLength(db.length);
      view.spectrogram?.db.forEach((v, i) => expect(Math.abs(v - (db[i] as number))).toBeLessThanOrEqual(0.005 + 1e-9));
      expect(view.triggers).toEqual(exact.triggers);
      // And the point of it: the answer's JSON is well under half the size of the full doubles.
      expect(JSON.stringify(view).length).toBeLessThan(0.5 * JSON.stringify(exact).length);
    }
  });

  it("a station's own band that reaches 0.45·fs under policy refuse is refused by both, in the same words", () => {
    const profile = processingProfileSchema.parse({ bands: { high: { fmin: 2, fmax: 15 }, nyquistPolicy: 'refuse' } });
    const { engineError, viewError } = (() => {
      const streams = atRate(20);
      let engineError = '';
      let viewError = '';
      try {
        analyzeWindow(streams, profile);
      } catch (err) {
        engineError = err instanceof Error ? err.message : String(err);
      }
      try {
        computeTraces({ channels: streams.map((s) => ({ streamId: s.id, sampleRateHz: s.sampleRateHz, startTimeUs: s.startTimeUs, sampleCount: s.samples.length, samples: encodeSamples(s.samples) })), profile, sensitivities: {}, query: { points: 100 } });
      } catch (err) {
        viewError = err instanceof Error ? err.message : String(err);
      }
      return { engineError, viewError };
    })();
    expect(engineError).toMatch(/high band 2–15 Hz reaches 0\.45·fs = 9 Hz at a sample rate of 20 Hz: refused/);
    expect(viewError).toBe(engineError);
  });
});
