import { describe, expect, it } from 'vitest';
import { butterworthSos } from '@server/dsp/butterworth';
import { channelChain } from '@server/dsp/channel-chain';
import { analyzeWindow } from '@server/dsp/pipeline';
import { bandEnergy, sosfilt } from '@server/dsp/sosfilt';
import { defaultProcessingProfile, processingProfileSchema } from '@shared/schemas/processing-profile';
import { makeSignal, stream, type SignalSpec } from './fixture-signal';

/**
 * The per-channel chain has two ways to its band energies: from the kept band traces (the trace view,
 * the display) and, for the analysis without display, without them (chunked low band, high band from
 * the trigger's own band except at the ends). Both must give the same numbers to the last bit, so a
 * flag never depends on whether someone looked at the traces. The traces themselves are the causal
 * Butterworth band-passes of the band-rejected trace (`sosfilt`, checked against scipy.signal.sosfilt
 * in sosfilt.test.ts).
 */
describe('channelChain: band energies with and without band traces', () => {
  // Invented deterministic test signal: offset, drift, a swell, an in-band burst and noise.
  const spec = (n: number, fs: number, seed: number): SignalSpec => ({
    n,
    fs,
    offset: 1500,
    slope: 0.3,
    sines: [[250, 0.3, 0.2]],
    bursts: [[(0.55 * n) / fs, 6, 5000, 7]],
    noise: 300,
    seed,
  });
  const profiles = [
    defaultProcessingProfile,
    processingProfileSchema.parse({ bandReject: [{ fmin: 24.5, fmax: 25.5, order: 4 }] }),
    processingProfileSchema.parse({ preprocess: { taperAlpha: 0.2 } }),
  ];
  const cases: Array<[number, number, number]> = [
    [12_000, 100, 1],
    [40_000, 200, 2],
    [3000, 40, 3],
  ];

  it('energies-only mode (work arrays) equals the traces mode bit for bit, for counts and with a sensitivity', () => {
    for (const profile of profiles) {
      for (const [n, fs, seed] of cases) {
        const x = makeSignal(spec(n, fs, seed));
        for (const sens of [1, 6.3e8]) {
          const full = channelChain(x, fs, profile, sens);
          const fullEnergy = { ...full.energy };
          expect(fullEnergy.low).toBe(bandEnergy(sosfilt(full.lowSos, full.rejected), fs));
          expect(fullEnergy.high).toBe(bandEnergy(sosfilt(full.highSos, full.rejected), fs));
          expect(Array.from(full.lowY)).toEqual(Array.from(sosfilt(full.lowSos, full.rejected)));
          const lean = channelChain(x, fs, profile, sens, butterworthSos, { bands: 'energies', workArrays: true });
          expect(lean.lowY).toBeNull();
          expect(lean.highY).toBeNull();
          expect(Object.is(lean.energy.low, fullEnergy.low)).toBe(true);
          expect(Object.is(lean.energy.high, fullEnergy.high)).toBe(true);
          expect(lean.trigger.triggers).toEqual(full.trigger.triggers);
        }
      }
    }
  });

  it('analyzeWindow reports the same energies, ratio and triggers with and without display', () => {
    const fs = 100;
    const w = [stream('XX.KV02.00.HHZ', makeSignal(spec(18_000, fs, 11)), fs)];
    for (const profile of profiles) {
      const plain = analyzeWindow(w, profile);
      const shown = analyzeWindow(w, profile, { display: true });
      const c0 = plain.channels[0];
      const c1 = shown.channels[0];
      expect(c0?.bands).toEqual(c1?.bands);
      expect(Object.is(c0?.ratio, c1?.ratio)).toBe(true);
      expect(c0?.staLta).toEqual(c1?.staLta);
      expect(c1?.display?.low.length).toBeGreaterThan(0);
    }
  });
});
