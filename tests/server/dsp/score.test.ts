import { describe, expect, it } from 'vitest';
import { computeBaseline, leadChannelIndex, NETWORK_DEFAULT_BASELINE, robustStat, robustZ, scoreWindow, type ChannelFeatures } from '@server/dsp/score';
import { defaultProcessingProfile, processingProfileSchema } from '@shared/schemas/processing-profile';

const baseline = { log10Ratio: { median: 0.2, mad: 0.1 }, staLtaPeak: { median: 2, mad: 0.3 }, count: 40 };

function features(over: Partial<ChannelFeatures> = {}): ChannelFeatures {
  return {
    id: 'XX.KV03.00.HHZ',
    ratio: 10 ** 0.2,
    log10Ratio: 0.2,
    staLta: { peak: 2, peakTime: 12, triggers: [] },
    dominantFrequency: 5,
    spectralCentroid: 6,
    bands: { high: { fmin: 2, fmax: 10 } },
    qc: [],
    ...over,
  };
}

const eventLike = (over: Partial<ChannelFeatures> = {}): ChannelFeatures =>
  features({ ratio: 14.2, log10Ratio: Math.log10(14.2), staLta: { peak: 6.3, peakTime: 40.2, triggers: [{ on: 39.1, off: 48 }] }, ...over });

describe('robust statistics (median, MAD; z with 1.4826·MAD, common practice)', () => {
  it('hand-worked: [1, 2, 3, 4, 100] → median 3, MAD 1; z of 6 = 3/1.4826', () => {
    const s = robustStat([1, 2, 3, 4, 100]);
    expect(s).toEqual({ median: 3, mad: 1 });
    expect(robustZ(6, s)).toBeCloseTo(3 / 1.4826, 12);
    expect(() => robustStat([])).toThrow(/at least one value/);
  });
  it('computeBaseline skips nulls and counts windows', () => {
    expect(computeBaseline([{ log10Ratio: 1, staLtaPeak: 2 }, { log10Ratio: null, staLtaPeak: 3 }, { log10Ratio: 3, staLtaPeak: 4 }])).toEqual({
      log10Ratio: { median: 2, mad: 1 },
      staLtaPeak: { median: 3, mad: 1 },
      count: 2,
    });
  });
  it('lead channel is the one whose code ends in Z', () => {
    expect(leadChannelIndex(['XX.KV01.00.HHN', 'XX.KV01.00.HHE', 'XX.KV01.00.HHZ'])).toBe(2);
    expect(leadChannelIndex(['XX.KV01.00.HH1', 'XX.KV01.00.HH2'])).toBe(0);
  });
});

describe('scoreWindow', () => {
  it('a high ratio and an STA/LTA onset with the spectrum in the high band: likely event, reasons in words', () => {
    const r = scoreWindow([eventLike()], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('likely event');
    // z = (log10 14.2 − 0.2)/(1.4826·0.1) = (1.1523 − 0.2)/0.14826 = 6.42
    expect(r.zLog10Ratio).toBeCloseTo((Math.log10(14.2) - 0.2) / 0.14826, 9);
    expect(r.reasons[0]).toBe("high/low ratio 14.2, +6.4 MAD above this station's noise");
    expect(r.reasons[1]).toBe('STA/LTA peak 6.3 at 40.2 s (+9.7 MAD), 1 trigger(s) above 3.5');
    expect(r.baseline).toBe('station');
  });

  it('the same numbers with the spectrum peaking at 20 Hz (machinery leaking into 2–10 Hz): needs eyes, and a lower score', () => {
    const ok = scoreWindow([eventLike()], baseline, defaultProcessingProfile);
    const r = scoreWindow([eventLike({ dominantFrequency: 20, spectralCentroid: 19 })], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('needs eyes');
    expect(r.reasons.join(' ')).toMatch(/spectrum peaks outside the high band 2–10 Hz \(dominant 20\.0 Hz, centroid 19\.0 Hz\)/);
    expect(r.score).toBeLessThan(ok.score);
    // the centroid alone far above the band (> 1.5 × 10 Hz) is enough to refuse "likely event" …
    const high = scoreWindow([eventLike({ spectralCentroid: 16 })], baseline, defaultProcessingProfile);
    expect(high.flag).toBe('needs eyes');
    expect(high.reasons.join(' ')).toMatch(/spectral centroid 16\.0 Hz lies above 1\.5 × the high band's 10 Hz edge/);
    // … but a centroid pulled a little above the band by a white noise floor is not
    expect(scoreWindow([eventLike({ spectralCentroid: 14 })], baseline, defaultProcessingProfile).flag).toBe('likely event');
    // and the dominant frequency below the band refuses it too
    expect(scoreWindow([eventLike({ dominantFrequency: 1.2 })], baseline, defaultProcessingProfile).flag).toBe('needs eyes');
  });

  it('ordinary values and no trigger: likely noise; one kind of evidence only: needs eyes', () => {
    expect(scoreWindow([features()], baseline, defaultProcessingProfile).flag).toBe('likely noise');
    const onlyRatio = scoreWindow([features({ ratio: 14.2, log10Ratio: Math.log10(14.2) })], baseline, defaultProcessingProfile);
    expect(onlyRatio.flag).toBe('needs eyes');
    expect(onlyRatio.reasons.join(' ')).toMatch(/high ratio without a matching STA\/LTA onset/);
  });

  it('uses the network default while the station has fewer noise windows than the profile asks', () => {
    const r = scoreWindow([eventLike()], { ...baseline, count: 5 }, defaultProcessingProfile);
    expect(r.baseline).toBe('network default');
    expect(r.zLog10Ratio).toBeCloseTo((Math.log10(14.2) - NETWORK_DEFAULT_BASELINE.log10Ratio.median) / (1.4826 * 0.3), 9);
    expect(r.reasons[0]).toMatch(/network default \(station has 5 of 20 noise windows\)/);
  });

  it('a QC error on the lead channel means needs eyes; the vertical leads, others are shown beside it', () => {
    const r = scoreWindow(
      [features({ id: 'XX.KV03.00.HHN' }), eventLike({ qc: [{ code: 'clipped', severity: 'error', message: 'clipped' }] })],
      baseline,
      defaultProcessingProfile,
    );
    expect(r.leadChannel).toBe('XX.KV03.00.HHZ');
    expect(r.flag).toBe('needs eyes');
    expect(r.reasons.join(' ')).toMatch(/quality problem on XX\.KV03\.00\.HHZ: clipped/);
    expect(r.reasons.join(' ')).toMatch(/beside it, XX\.KV03\.00\.HHN/);
    expect(() => scoreWindow([], baseline, defaultProcessingProfile)).toThrow(/at least one channel/);
  });
});

describe('scoreWindow with a signal spectrum (the triggered part over the pre-trigger noise)', () => {
  const sig = (peakFrequency: number | null, centroid: number | null = peakFrequency) => ({
    peakFrequency,
    peakSnr: peakFrequency === null ? null : 1000,
    centroid,
    fromS: 39.1,
    toS: 48,
    noiseFromS: 8.1,
    noiseToS: 38.1,
    nperseg: 256,
    minSnr: 2,
  });
  // The whole-window spectrum peaks at a 0.2 Hz microseism, as in a quiet station's 120 s window.
  const microseismWindow = (over: Partial<ChannelFeatures> = {}): ChannelFeatures => eventLike({ dominantFrequency: 0.2, spectralCentroid: 1.1, ...over });

  it('the signal peak in the high band decides over a microseism-dominated whole window: likely event, the peak in words', () => {
    expect(scoreWindow([microseismWindow()], baseline, defaultProcessingProfile).flag).toBe('needs eyes');
    const r = scoreWindow([microseismWindow({ signalSpectrum: sig(4.8, 5.6) })], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('likely event');
    // 10·log10(1000) = 30 dB
    expect(r.reasons[2]).toBe('signal peaks at 4.8 Hz over the pre-trigger noise (30.0 dB above it there, centroid of the excess 5.6 Hz; signal 39.1–48.0 s against noise 8.1–38.1 s)');
    // not halved: the same score as with the whole-window spectrum in the band
    expect(r.score).toBe(scoreWindow([eventLike()], baseline, defaultProcessingProfile).score);
  });

  it('a signal peak at 20 Hz (leaking burst) refuses it even when the whole window looks fine; the reason names the peak', () => {
    const r = scoreWindow([eventLike({ signalSpectrum: sig(20, 19.5) })], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('needs eyes');
    expect(r.reasons.join(' | ')).toMatch(/signal spectrum peaks outside the high band 2–10 Hz \(at 20\.0 Hz, accepted 1\.7–12\.0 Hz\)/);
    expect(r.score).toBeLessThan(scoreWindow([eventLike()], baseline, defaultProcessingProfile).score);
  });

  it('tolerance: fmin/(1 + 0.2) … fmax·(1 + 0.2) = 1.67–12 Hz by default, and a profile value widens it', () => {
    expect(scoreWindow([eventLike({ signalSpectrum: sig(11.9, 9) })], baseline, defaultProcessingProfile).flag).toBe('likely event');
    expect(scoreWindow([eventLike({ signalSpectrum: sig(12.2, 9) })], baseline, defaultProcessingProfile).flag).toBe('needs eyes');
    expect(scoreWindow([eventLike({ signalSpectrum: sig(1.6, 3) })], baseline, defaultProcessingProfile).flag).toBe('needs eyes');
    const wide = processingProfileSchema.parse({ thresholds: { signalPeakTolerance: 0.5 } });
    expect(scoreWindow([eventLike({ signalSpectrum: sig(14.5, 9) })], baseline, wide).flag).toBe('likely event');
  });

  it('the excess centroid above 1.5 × fmax, or no bin above minSnr × the noise: needs eyes, said', () => {
    const c = scoreWindow([eventLike({ signalSpectrum: sig(8, 16) })], baseline, defaultProcessingProfile);
    expect(c.flag).toBe('needs eyes');
    expect(c.reasons.join(' | ')).toMatch(/centroid of the signal's excess over the noise, 16\.0 Hz, lies above 1\.5 × the high band's 10 Hz edge/);
    const none = scoreWindow([eventLike({ signalSpectrum: sig(null) })], baseline, defaultProcessingProfile);
    expect(none.flag).toBe('needs eyes');
    expect(none.reasons.join(' | ')).toMatch(/the triggered part \(39\.1–48\.0 s\) is nowhere 2 × the pre-trigger noise .*does not stand out from the pre-trigger noise in any frequency bin/);
  });

  it('without a trigger a signal spectrum is ignored; a note without one names the fallback', () => {
    const quiet = features({ signalSpectrum: sig(20) });
    expect(scoreWindow([quiet], baseline, defaultProcessingProfile)).toEqual(scoreWindow([features()], baseline, defaultProcessingProfile));
    const r = scoreWindow([eventLike({ signalSpectrum: null, signalSpectrumNote: 'only 3.0 s of untapered noise before the trigger at 10.0 s (at least 5 s needed)' })], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('likely event');
    expect(r.reasons.join(' | ')).toMatch(/no signal spectrum: only 3\.0 s of untapered noise .*; the whole-window spectrum decides/);
  });

  it('older thresholds without the new knob (as stored evidence is replayed) use the default tolerance', () => {
    const { signalPeakTolerance: _t, ...older } = defaultProcessingProfile.thresholds;
    const profile = { thresholds: older, staLta: defaultProcessingProfile.staLta };
    expect(scoreWindow([eventLike({ signalSpectrum: sig(11.9, 9) })], baseline, profile).flag).toBe('likely event');
    expect(scoreWindow([eventLike({ signalSpectrum: sig(12.2, 9) })], baseline, profile).flag).toBe('needs eyes');
  });
});

describe('processing profile: the signal-spectrum knobs are backward compatible', () => {
  it('a stored profile from before them parses, with the defaults filled in', () => {
    const stored = {
      preprocess: { taperAlpha: 0.1 },
      bands: { low: { fmin: 0.5, fmax: 2 }, high: { fmin: 2, fmax: 10 }, order: 4, nyquistPolicy: 'refuse' },
      bandReject: [{ fmin: 24.5, fmax: 25.5, order: 4, label: 'pump, 25 Hz' }],
      psd: { nperseg: 1024, fminStats: 0.1 },
      staLta: { method: 'classic', staS: 1, ltaS: 30, on: 3.5, off: 1.5 },
      snr: { signalS: 10, noiseS: 30 },
      qc: { flatTopSamples: 3, spikeK: 20 },
      thresholds: { eventZ: 3.5, noiseZ: 2, minBaselineWindows: 20, centroidMaxFactor: 1.5 },
    };
    const p = processingProfileSchema.parse(stored);
    expect(p.thresholds).toEqual({ eventZ: 3.5, noiseZ: 2, minBaselineWindows: 20, centroidMaxFactor: 1.5, signalPeakTolerance: 0.2 });
    expect(p.signalSpectrum).toEqual({ minS: 2, maxS: 20, noiseMinS: 5, noiseMaxS: 30, segmentS: 2.56, minSnr: 2 });
    expect(processingProfileSchema.parse({})).toEqual(defaultProcessingProfile);
  });
  it('refuses inconsistent values with a message', () => {
    expect(() => processingProfileSchema.parse({ signalSpectrum: { minS: 30 } })).toThrow(/minS must not exceed maxS/);
    expect(() => processingProfileSchema.parse({ signalSpectrum: { minSnr: 0.5 } })).toThrow();
  });
});
