import { describe, expect, it } from 'vitest';
import { computeBaseline, leadChannelIndex, NETWORK_DEFAULT_BASELINE, robustStat, robustZ, scoreWindow, type ChannelFeatures } from '../../../server/dsp/score';
import { defaultProcessingProfile } from '../../../shared/schemas/processing-profile';

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
