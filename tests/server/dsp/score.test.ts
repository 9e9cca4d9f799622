import { describe, expect, it } from 'vitest';
import { computeBaseline, leadChannelIndex, NETWORK_DEFAULT_BASELINE, robustStat, robustZ, scoreWindow, type ChannelFeatures, type SignalSpectrumFeatures } from '@server/dsp/score';
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

/** The triggered part's spectrum against the noise before it (the pipeline's `signalSpectrum`). */
const sig = (over: Partial<SignalSpectrumFeatures> = {}): SignalSpectrumFeatures => ({
  peakFrequency: 4.8,
  peakSnr: 1000,
  centroid: 5.6,
  inBandSnr: 100,
  inBandShare: 0.8,
  fromS: 39.1,
  toS: 48,
  noiseFromS: 8.1,
  noiseToS: 38.1,
  nperseg: 256,
  minSnr: 2,
  ...over,
});

/** A channel with one strong trigger (peak 6.3, AIC onset 38.9 s, on 39.1 s) whose part rose in the band. */
const eventLike = (over: Partial<ChannelFeatures> = {}): ChannelFeatures =>
  features({
    ratio: 14.2,
    log10Ratio: Math.log10(14.2),
    staLta: { peak: 6.3, peakTime: 40.2, triggers: [{ on: 39.1, off: 48, onset: 38.9, peak: 6.3 }], main: 0 },
    snr: 12,
    signalSpectrum: sig(),
    signalSpectrumNote: null,
    ...over,
  });

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

describe('scoreWindow (the rule in server/dsp/score.ts: deciding channel, z of its STA/LTA peak, energy in the band)', () => {
  // z(peak 6.3) = (6.3 − 2)/(1.4826·0.3) = 9.67; z(log10 14.2) = (1.1523 − 0.2)/(1.4826·0.1) = 6.42.
  const zPeak = (6.3 - 2) / (1.4826 * 0.3);
  const zRatio = (Math.log10(14.2) - 0.2) / (1.4826 * 0.1);

  it('a strong trigger whose triggered part rose in the high band: likely event, reasons in words, the detection', () => {
    const r = scoreWindow([eventLike()], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('likely event');
    expect(r.zStaLtaPeak).toBeCloseTo(zPeak, 9);
    expect(r.zLog10Ratio).toBeCloseTo(zRatio, 9);
    expect(r.reasons[0]).toBe("STA/LTA peak 6.3 on XX.KV03.00.HHZ, onset at 38.9 s (+9.7 MAD against this station's noise), 1 trigger(s) above 3.5");
    expect(r.reasons[1]).toBe("whole-window high/low ratio 14.2, +6.4 MAD above this station's noise");
    // 10·log10(100) = 20 dB
    expect(r.reasons[2]).toBe("the triggered part (39.1–48.0 s) in 2–10 Hz: 20.0 dB over the noise before it (8.1–38.1 s), 80 % of the band's bins 2 × the noise or more; its excess peaks at 4.8 Hz (centroid 5.6 Hz)");
    expect(r.baseline).toBe('station');
    expect(r.leadChannel).toBe('XX.KV03.00.HHZ');
    expect(r.detection).toEqual({ channel: 'XX.KV03.00.HHZ', onset: 38.9, on: 39.1, peak: 6.3, decidedBy: 'XX.KV03.00.HHZ' });
    // score = ½·z(peak) + ½·z(ratio), rounded to 0.1
    expect(r.score).toBe(Math.round((0.5 * zPeak + 0.5 * zRatio) * 10) / 10);
  });

  it('the same trigger with a band that did not rise (a 20 Hz machinery burst leaking in): likely noise with the reason, and a halved score', () => {
    const ok = scoreWindow([eventLike()], baseline, defaultProcessingProfile);
    const r = scoreWindow([eventLike({ signalSpectrum: sig({ inBandSnr: 1.3, inBandShare: 0.1, peakFrequency: 20, centroid: 19.5 }) })], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('likely noise');
    // 10·log10(1.3) = 1.1 dB
    expect(r.reasons.join(' | ')).toMatch(/its excess peaks at 20\.0 Hz \(centroid 19\.5 Hz\)/);
    expect(r.reasons.join(' | ')).toMatch(/the high band 2–10 Hz did not rise \(1\.1 dB\): the energy that set the trigger off lies outside the band \(its excess peaks at 20\.0 Hz\) and leaked through the filter/);
    expect(r.score).toBe(Math.round(((0.5 * zPeak + 0.5 * zRatio) / 2) * 10) / 10);
    expect(r.score).toBeLessThan(ok.score);
  });

  it('the in-band test: Σ PSD ≥ minInBandSnr (6.3, about 8 dB) × the noise AND ≥ minInBandShare (50 %) of the bins; a profile value moves it', () => {
    const flag = (over: Partial<SignalSpectrumFeatures>, profile = defaultProcessingProfile): string => scoreWindow([eventLike({ signalSpectrum: sig(over) })], baseline, profile).flag;
    expect(flag({ inBandSnr: 6.3, inBandShare: 0.5 })).toBe('likely event');
    expect(flag({ inBandSnr: 6.29, inBandShare: 0.9 })).toBe('needs eyes');
    expect(flag({ inBandSnr: 50, inBandShare: 0.49 })).toBe('needs eyes');
    expect(flag({ inBandSnr: 3, inBandShare: 0.5 }, processingProfileSchema.parse({ thresholds: { minInBandSnr: 2 } }))).toBe('likely event');
    expect(flag({ inBandSnr: 50, inBandShare: 0.3 }, processingProfileSchema.parse({ thresholds: { minInBandShare: 0.25 } }))).toBe('likely event');
  });

  it('where the excess peaks is reported, not required: a local P peaking at 17 Hz or a large event at 1 Hz passes when the band rose (issue 14)', () => {
    const at17 = scoreWindow([eventLike({ signalSpectrum: sig({ peakFrequency: 17.6, centroid: 15 }) })], baseline, defaultProcessingProfile);
    expect(at17.flag).toBe('likely event');
    expect(at17.reasons.join(' | ')).toMatch(/its excess peaks at 17\.6 Hz/);
    expect(scoreWindow([eventLike({ dominantFrequency: 1, signalSpectrum: sig({ peakFrequency: 1, centroid: 1.4 }) })], baseline, defaultProcessingProfile).flag).toBe('likely event');
  });

  it('no trigger and ordinary values: likely noise, and a high whole-window ratio alone does not change the flag (it moves the score)', () => {
    const quiet = scoreWindow([features()], baseline, defaultProcessingProfile);
    expect(quiet.flag).toBe('likely noise');
    expect(quiet.detection).toBeNull();
    expect(quiet.reasons[0]).toBe("STA/LTA peak 2.0 at 12.0 s on XX.KV03.00.HHZ: no trigger above 3.5 (+0.0 MAD against this station's noise)");
    const onlyRatio = scoreWindow([features({ ratio: 14.2, log10Ratio: Math.log10(14.2) })], baseline, defaultProcessingProfile);
    expect(onlyRatio.flag).toBe('likely noise');
    expect(onlyRatio.score).toBeGreaterThan(quiet.score);
  });

  it('a trigger between noiseZ and eventZ: needs eyes ("between"); the same standing out in no bin: likely noise, said', () => {
    // peak 2.9: z = 0.9/(1.4826·0.3) = 2.02, ≥ noiseZ 2 and < eventZ 3
    const mid = (s: SignalSpectrumFeatures): ChannelFeatures => eventLike({ staLta: { peak: 2.9, peakTime: 40, triggers: [{ on: 39.1, off: 41, onset: 39, peak: 2.9 }], main: 0 }, signalSpectrum: s });
    const between = scoreWindow([mid(sig())], baseline, defaultProcessingProfile);
    expect(between.flag).toBe('needs eyes');
    expect(between.reasons.join(' | ')).toMatch(/evidence between ordinary noise and an event/);
    const flat = scoreWindow([mid(sig({ peakFrequency: null, peakSnr: null, centroid: null, inBandSnr: 1.1, inBandShare: 0 }))], baseline, defaultProcessingProfile);
    expect(flat.flag).toBe('likely noise');
    expect(flat.reasons.join(' | ')).toMatch(/the triggered part stands out from the noise before it in no frequency bin/);
    // a trigger weaker than the station's noise (z < noiseZ): likely noise, said
    const weak = scoreWindow([eventLike({ staLta: { peak: 2.5, peakTime: 40, triggers: [{ on: 39.1, off: 41, onset: 39, peak: 2.5 }], main: 0 } })], baseline, defaultProcessingProfile);
    expect(weak.flag).toBe('likely noise');
    expect(weak.reasons.join(' | ')).toMatch(/the trigger is no stronger than this station's ordinary noise/);
  });

  it('uses the network default while the station has fewer noise windows than the profile asks', () => {
    const r = scoreWindow([eventLike()], { ...baseline, count: 5 }, defaultProcessingProfile);
    expect(r.baseline).toBe('network default');
    const b = NETWORK_DEFAULT_BASELINE;
    expect(r.zStaLtaPeak).toBeCloseTo((6.3 - b.staLtaPeak.median) / (1.4826 * Math.max(b.staLtaPeak.mad, 0.1)), 9);
    expect(r.zLog10Ratio).toBeCloseTo((Math.log10(14.2) - b.log10Ratio.median) / (1.4826 * Math.max(b.log10Ratio.mad, 0.05)), 9);
    expect(r.reasons[0]).toMatch(/network default \(station has 5 of 20 noise windows\)/);
  });

  it('a QC error on the deciding channel means needs eyes; the others are shown beside it', () => {
    const r = scoreWindow(
      [features({ id: 'XX.KV03.00.HHN' }), eventLike({ qc: [{ code: 'clipped', severity: 'error', message: 'clipped' }] })],
      baseline,
      defaultProcessingProfile,
    );
    expect(r.leadChannel).toBe('XX.KV03.00.HHZ');
    expect(r.flag).toBe('needs eyes');
    expect(r.reasons.join(' ')).toMatch(/quality problem on XX\.KV03\.00\.HHZ: clipped/);
    expect(r.reasons.join(' ')).toMatch(/beside it, XX\.KV03\.00\.HHN: STA\/LTA peak 2\.0, 0 trigger\(s\), ratio 1\.6/);
    expect(() => scoreWindow([], baseline, defaultProcessingProfile)).toThrow(/at least one channel/);
  });

  it('the strongest trigger decides over all components: a clear S on a horizontal beside a quiet vertical, named in the reasons', () => {
    const e = eventLike({ id: 'XX.KV03.00.HHE', staLta: { peak: 20, peakTime: 46, triggers: [{ on: 45.2, off: 55, onset: 45, peak: 20 }], main: 0 } });
    const r = scoreWindow([features(), features({ id: 'XX.KV03.00.HHN' }), e], baseline, defaultProcessingProfile);
    expect(r.leadChannel).toBe('XX.KV03.00.HHE');
    expect(r.flag).toBe('likely event');
    expect(r.reasons[0]).toBe("XX.KV03.00.HHE decides: its STA/LTA peak is the window's highest (the vertical XX.KV03.00.HHZ peaks at 2.0)");
    expect(r.reasons[1]).toMatch(/^STA\/LTA peak 20\.0 on XX\.KV03\.00\.HHE, onset at 45\.0 s/);
    expect(r.reasons.join(' | ')).toMatch(/beside it, XX\.KV03\.00\.HHZ: STA\/LTA peak 2\.0, 0 trigger\(s\)/);
    expect(r.detection).toEqual({ channel: 'XX.KV03.00.HHE', onset: 45, on: 45.2, peak: 20, decidedBy: 'XX.KV03.00.HHE' });
  });

  it('the detection is the earliest strong onset: P on the vertical before a stronger S on a horizontal; weak earlier triggers do not count', () => {
    const z = eventLike();
    const e = eventLike({ id: 'XX.KV03.00.HHE', staLta: { peak: 20, peakTime: 46, triggers: [{ on: 45.2, off: 55, onset: 45, peak: 20 }], main: 0 } });
    const r = scoreWindow([z, e], baseline, defaultProcessingProfile);
    expect(r.leadChannel).toBe('XX.KV03.00.HHE');
    expect(r.detection).toEqual({ channel: 'XX.KV03.00.HHZ', onset: 38.9, on: 39.1, peak: 20, decidedBy: 'XX.KV03.00.HHE' });
    // a vertical trigger at z 2.0 (< eventZ 3) is not taken as the arrival
    const weakZ = eventLike({ staLta: { peak: 2.9, peakTime: 39, triggers: [{ on: 38.5, off: 39.5, onset: 38.4, peak: 2.9 }], main: 0 } });
    expect(scoreWindow([weakZ, e], baseline, defaultProcessingProfile).detection?.channel).toBe('XX.KV03.00.HHE');
  });

  it('no vertical component: the strongest channel decides and the reasons say there is no vertical', () => {
    const r = scoreWindow([features({ id: 'XX.KV03.00.HH1' }), eventLike({ id: 'XX.KV03.00.HH2' })], baseline, defaultProcessingProfile);
    expect(r.leadChannel).toBe('XX.KV03.00.HH2');
    expect(r.reasons[0]).toBe('no vertical component: XX.KV03.00.HH2 decides');
  });

  it('older stored analyses (triggers without onset or peak, no main index) are read: onset = on, peak = the channel peak, the first trigger', () => {
    const old = eventLike({ staLta: { peak: 6.3, peakTime: 40.2, triggers: [{ on: 39.1, off: 48 }, { on: 60, off: 61 }] } });
    const r = scoreWindow([old], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('likely event');
    expect(r.detection).toEqual({ channel: 'XX.KV03.00.HHZ', onset: 39.1, on: 39.1, peak: 6.3, decidedBy: 'XX.KV03.00.HHZ' });
  });
});

describe('scoreWindow without a usable signal spectrum', () => {
  it('without a trigger a signal spectrum is ignored', () => {
    const quiet = features({ signalSpectrum: sig({ peakFrequency: 20 }) });
    expect(scoreWindow([quiet], baseline, defaultProcessingProfile)).toEqual(scoreWindow([features()], baseline, defaultProcessingProfile));
  });

  it('a strong trigger with no signal spectrum (too little data around it): needs eyes, the note and the amplitude SNR in words', () => {
    const note = 'only 1.0 s of usable noise before the onset at 3.2 s (at least 1.5 s needed)';
    const r = scoreWindow([eventLike({ signalSpectrum: null, signalSpectrumNote: note, snr: 7.25 })], baseline, defaultProcessingProfile);
    expect(r.flag).toBe('needs eyes');
    expect(r.reasons).toContain(`no signal spectrum (${note}); high-band SNR 7.3 (amplitude) around the onset`);
    expect(r.reasons.join(' | ')).toMatch(/the trigger is strong but there is too little data around it to check the band: look at this window and the next/);
    // older analyses without an SNR: the note alone
    const r2 = scoreWindow([eventLike({ signalSpectrum: null, signalSpectrumNote: note, snr: null })], baseline, defaultProcessingProfile);
    expect(r2.flag).toBe('needs eyes');
    expect(r2.reasons).toContain(`no signal spectrum: ${note}`);
  });

  it('older thresholds without the newer knobs (as stored evidence is replayed) use the defaults (6.3, 50 %)', () => {
    const { signalPeakTolerance: _t, minInBandSnr: _s, minInBandShare: _h, ...older } = defaultProcessingProfile.thresholds;
    const profile = { thresholds: older, staLta: defaultProcessingProfile.staLta };
    expect(scoreWindow([eventLike({ signalSpectrum: sig({ inBandSnr: 6.3, inBandShare: 0.5 }) })], baseline, profile).flag).toBe('likely event');
    expect(scoreWindow([eventLike({ signalSpectrum: sig({ inBandSnr: 6.2 }) })], baseline, profile).flag).toBe('needs eyes');
    expect(scoreWindow([eventLike({ signalSpectrum: sig({ inBandShare: 0.4 }) })], baseline, profile).flag).toBe('needs eyes');
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
    expect(p.thresholds).toEqual({ eventZ: 3.5, noiseZ: 2, minBaselineWindows: 20, centroidMaxFactor: 1.5, signalPeakTolerance: 0.2, minInBandSnr: 6.3, minInBandShare: 0.5 });
    expect(p.signalSpectrum).toEqual({ minS: 2, maxS: 20, noiseMinS: 1.5, noiseMaxS: 30, guardS: 0.25, segmentS: 2.56, minSnr: 2 });
    expect(p.staLta).toEqual({ method: 'classic', staS: 1, ltaS: 30, on: 3.5, off: 1.5, startS: 0.75, minLtaS: 1.25, onsetSearchS: 2.5, onsetAfterS: 0.5, onsetWindowS: 0.5 });
    // a stored signalSpectrum section from before guardS keeps its own values
    const withOld = processingProfileSchema.parse({ ...stored, signalSpectrum: { minS: 2, maxS: 20, noiseMinS: 5, noiseMaxS: 30, segmentS: 2.56, minSnr: 2 } });
    expect(withOld.signalSpectrum).toEqual({ minS: 2, maxS: 20, noiseMinS: 5, noiseMaxS: 30, guardS: 0.25, segmentS: 2.56, minSnr: 2 });
    expect(processingProfileSchema.parse({})).toEqual(defaultProcessingProfile);
  });
  it('refuses inconsistent values with a message', () => {
    expect(() => processingProfileSchema.parse({ signalSpectrum: { minS: 30 } })).toThrow(/minS must not exceed maxS/);
    expect(() => processingProfileSchema.parse({ signalSpectrum: { minSnr: 0.5 } })).toThrow();
    expect(() => processingProfileSchema.parse({ staLta: { ltaS: 5, minLtaS: 6 } })).toThrow(/minLtaS must not exceed the LTA window/);
    expect(() => processingProfileSchema.parse({ thresholds: { minInBandShare: 1.5 } })).toThrow();
  });
});
