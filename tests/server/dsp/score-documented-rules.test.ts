import { describe, expect, it } from 'vitest';
import { analyzeWindow } from '@server/dsp/pipeline';
import { computeBaseline, scoreWindow, type ChannelFeatures } from '@server/dsp/score';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { makeSignal, stream, type SignalSpec } from './fixture-signal';

/**
 * The score's documented rules (server/dsp/score.ts module and type comments) on cases found while
 * rewriting the tests for the delayed-LTA trigger, where the first version of the code did otherwise.
 */
describe('the score keeps its documented rules', () => {
  const baseline = { log10Ratio: { median: 0.2, mad: 0.1 }, staLtaPeak: { median: 2, mad: 0.3 }, count: 40 };
  const quiet = (id: string, peak: number): ChannelFeatures => ({
    id,
    ratio: 10 ** 0.2,
    log10Ratio: 0.2,
    staLta: { peak, peakTime: 3.5, triggers: [], main: null },
    dominantFrequency: 5,
    spectralCentroid: 6,
    bands: { high: { fmin: 2, fmax: 10 } },
    qc: [],
  });

  // score.ts: `leadChannel` is "the strongest trigger; the vertical on a tie or with none", and step 1
  // says "the vertical on a tie or when none triggered". The code takes the highest STA/LTA peak over
  // all channels whether or not anything triggered, so a horizontal whose sub-threshold noise peak is
  // higher decides (and its higher peak sets z).
  it('with no trigger on any channel the vertical decides', () => {
    const r = scoreWindow([quiet('XX.KV03.00.HHZ', 2.0), quiet('XX.KV03.00.HHN', 3.0)], baseline, defaultProcessingProfile);
    expect(r.leadChannel).toBe('XX.KV03.00.HHZ');
  });

  // score.ts rule 4: "`likely noise` when z(peak) < noiseZ (no trigger, or only one as weak as this
  // station's noise)". A fresh window of the same constructed noise as the station's 25 baseline
  // windows (seed 999) has no trigger at all, but its highest STA/LTA, 2.8 at 3.5 s — inside the
  // first seconds where the expanding LTA holds only 1.25–2.75 s — is +2.2 MAD: "needs eyes",
  // "evidence between ordinary noise and an event", for a window where nothing triggered.
  it('a noise window with no trigger is likely noise against a baseline of the same noise', () => {
    const fs = 100;
    const noiseSpec = (seed: number): SignalSpec => ({ n: 12000, fs, sines: [[0.5, 0.25, 0.3]], noise: 1, seed });
    const noise = Array.from({ length: 25 }, (_, i) => analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal(noiseSpec(100 + i)), fs)], defaultProcessingProfile).channels[0]);
    const base = computeBaseline(noise.map((c) => ({ log10Ratio: c?.log10Ratio ?? null, staLtaPeak: c?.staLta.peak ?? null })));
    const res = analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal(noiseSpec(999)), fs)], defaultProcessingProfile, { baseline: base });
    expect(res.channels[0]?.staLta.triggers).toEqual([]);
    expect(res.flag).toBe('likely noise');
  });

  // score.ts rule 3 says a trigger passes "as long as the band itself rose". A constructed 5 Hz burst
  // (6 s, sin² envelope, 5× the noise) under a microseism rises 27.5 dB over the noise in 2–10 Hz
  // (fixtures/dsp/signal-spectrum.json case 1: inBandSnr 567, numpy/scipy) but fills only 35 % of
  // the band's bins (a narrow-band arrival), so it is refused by minInBandShare 0.5 — and the
  // reason then reads "the high band 2–10 Hz hardly rose (27.5 dB, 35 % of its bins)".
  it('a 27.5 dB rise in the band is not described as "hardly rose"', () => {
    const fs = 100;
    const res = analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal({ n: 12000, fs, sines: [[30, 0.2, 0]], bursts: [[60, 6, 5, 5]], noise: 1, seed: 71 }), fs)], defaultProcessingProfile);
    expect(res.channels[0]?.signalSpectrum?.inBandSnr as number).toBeGreaterThan(100);
    expect(res.reasons.join(' | ')).not.toMatch(/hardly rose/);
  });
});
