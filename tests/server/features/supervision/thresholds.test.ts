import { describe, expect, it } from 'vitest';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import type { ChannelFeatures } from '@server/dsp/score';
import {
  confusion,
  evaluateThresholds,
  evidenceFromAnalysis,
  flagUnder,
  precisionRecallCurve,
  rates,
  scoreInputFromExtract,
  truthOf,
  type LabelledEvidence,
  type Truth,
} from '@server/features/supervision/thresholds';

const profile = defaultProcessingProfile;
const base = { eventZ: 3, noiseZ: 2, centroidMaxFactor: 1.5 };

function lead(over: Partial<ChannelFeatures> = {}): ChannelFeatures {
  return {
    id: 'XX.KV01.00.HHZ',
    log10Ratio: 0,
    ratio: 1,
    staLta: { peak: 0, peakTime: 40, triggers: [{ on: 40, off: 45 }] },
    dominantFrequency: 5,
    spectralCentroid: 6,
    bands: { high: { fmin: 2, fmax: 10 } },
    qc: [],
    ...over,
  };
}
const ev = (itemId: number, truth: Truth, zr: number | null, zp: number, over: Partial<ChannelFeatures> = {}): LabelledEvidence => ({
  itemId,
  truth,
  lead: lead(over),
  zLog10Ratio: zr,
  zStaLtaPeak: zp,
  shownFlag: 'needs eyes',
});
const noTrigger = { staLta: { peak: 0, peakTime: 10, triggers: [] } };

/*
 * Hand-worked table. The rule (server/dsp/score.ts; README of server/dsp): `likely event` iff
 * z(ratio) ≥ eventZ AND a trigger AND z(peak) ≥ eventZ AND dominant frequency in the high band
 * (2–10 Hz) AND centroid ≤ centroidMaxFactor·10 Hz AND no QC error. Predicted positive = likely event.
 *
 * | # | truth | z ratio | z peak | trigger | dominant | centroid | QC    | eventZ 3 (×1.5) | eventZ 2.5 | eventZ 4 | eventZ 3, ×2 |
 * | 1 | event | 5       | 6      | yes     | 5 Hz     | 6 Hz     |       | TP              | TP         | TP       | TP           |
 * | 2 | event | 3.0     | 3.0    | yes     | 5        | 6        |       | TP (≥ holds)    | TP         | FN       | TP           |
 * | 3 | event | 2.5     | 4      | yes     | 5        | 6        |       | FN              | TP         | FN       | FN           |
 * | 4 | event | 4       | 5      | no      | 5        | 6        |       | FN              | FN         | FN       | FN           |
 * | 5 | noise | 3.5     | 3.5    | yes     | 5        | 6        |       | FP              | FP         | TN       | FP           |
 * | 6 | noise | 6       | 7      | yes     | 20 Hz    | 21       |       | TN              | TN         | TN       | TN           |
 * | 7 | noise | 1       | 1      | no      | 5        | 6        |       | TN              | TN         | TN       | TN           |
 * | 8 | noise | 4       | 4      | yes     | 5        | 16 Hz    |       | TN (16 > 15)    | TN         | TN       | FP (16 ≤ 20) |
 * | 9 | event | 8       | 8      | yes     | 5        | 6        | error | FN              | FN         | FN       | FN           |
 *
 * eventZ 3:   TP 2, FP 1, FN 3, TN 3 → precision 2/3, recall 2/5
 * eventZ 2.5: TP 3, FP 1, FN 2, TN 3 → precision 3/4, recall 3/5
 * eventZ 4:   TP 1, FP 0, FN 4, TN 4 → precision 1,   recall 1/5
 * eventZ 3, centroid factor 2: TP 2, FP 2, FN 3, TN 2 → precision 1/2, recall 2/5
 * eventZ 9:   TP 0, FP 0, FN 5, TN 4 → precision undefined (null), recall 0
 */
const table: LabelledEvidence[] = [
  ev(1, 'event', 5, 6),
  ev(2, 'event', 3.0, 3.0),
  ev(3, 'event', 2.5, 4),
  ev(4, 'event', 4, 5, noTrigger),
  ev(5, 'noise', 3.5, 3.5),
  ev(6, 'noise', 6, 7, { dominantFrequency: 20, spectralCentroid: 21 }),
  ev(7, 'noise', 1, 1, noTrigger),
  ev(8, 'noise', 4, 4, { spectralCentroid: 16 }),
  ev(9, 'event', 8, 8, { qc: [{ severity: 'error', code: 'clipped', message: 'clipped at full scale' }] }),
];

describe('confusion counts and precision/recall against the hand-worked table', () => {
  it('at the default thresholds (eventZ 3, noiseZ 2, centroid ×1.5)', () => {
    expect(evaluateThresholds(table, base, profile)).toEqual({ tp: 2, fp: 1, fn: 3, tn: 3, precision: 2 / 3, recall: 2 / 5 });
  });
  it('at eventZ 2.5', () => {
    expect(evaluateThresholds(table, { ...base, eventZ: 2.5 }, profile)).toEqual({ tp: 3, fp: 1, fn: 2, tn: 3, precision: 3 / 4, recall: 3 / 5 });
  });
  it('at eventZ 4', () => {
    expect(evaluateThresholds(table, { ...base, eventZ: 4 }, profile)).toEqual({ tp: 1, fp: 0, fn: 4, tn: 4, precision: 1, recall: 1 / 5 });
  });
  it('with the centroid factor raised to 2', () => {
    expect(evaluateThresholds(table, { ...base, centroidMaxFactor: 2 }, profile)).toEqual({ tp: 2, fp: 2, fn: 3, tn: 2, precision: 1 / 2, recall: 2 / 5 });
  });
  it('gives a null precision when nothing is flagged', () => {
    expect(evaluateThresholds(table, { ...base, eventZ: 9 }, profile)).toEqual({ tp: 0, fp: 0, fn: 5, tn: 4, precision: null, recall: 0 });
  });
  it('replays z exactly at the boundary (item 2: z = 3.0 ≥ 3)', () => {
    expect(flagUnder(table[1] as LabelledEvidence, base, profile)).toBe('likely event');
    expect(flagUnder(table[1] as LabelledEvidence, { ...base, eventZ: 3.0000001 }, profile)).not.toBe('likely event');
  });
  it('gives likely noise for the quiet item and needs eyes for the out-of-band one', () => {
    expect(flagUnder(table[6] as LabelledEvidence, base, profile)).toBe('likely noise');
    expect(flagUnder(table[5] as LabelledEvidence, base, profile)).toBe('needs eyes');
  });
});

describe('precision–recall curve', () => {
  it('passes through the hand-worked points and never gains recall as eventZ rises', () => {
    const curve = precisionRecallCurve(table, base, profile, { fromZ: 2, toZ: 4, steps: 4 });
    expect(curve.map((p) => p.eventZ)).toEqual([2, 2.5, 3, 3.5, 4]);
    expect(curve[1]).toMatchObject({ tp: 3, fp: 1, fn: 2, tn: 3 });
    expect(curve[2]).toMatchObject({ tp: 2, fp: 1, fn: 3, tn: 3 });
    expect(curve[4]).toMatchObject({ tp: 1, fp: 0, fn: 4, tn: 4 });
    for (let i = 1; i < curve.length; i++) expect((curve[i] as { recall: number }).recall).toBeLessThanOrEqual((curve[i - 1] as { recall: number }).recall);
  });
  it('refuses an empty range', () => {
    expect(() => precisionRecallCurve(table, base, profile, { fromZ: 3, toZ: 3, steps: 4 })).toThrow(/fromZ < toZ/);
    expect(() => precisionRecallCurve(table, base, profile, { fromZ: 0, toZ: 3, steps: 0 })).toThrow(/steps/);
  });
});

describe('rates and confusion', () => {
  it('computes precision and recall with null for 0/0', () => {
    expect(rates(0, 0, 0, 5)).toEqual({ tp: 0, fp: 0, fn: 0, tn: 5, precision: null, recall: null });
    expect(confusion([{ truth: 'event', flag: 'likely event' }, { truth: 'noise', flag: 'needs eyes' }])).toEqual({ tp: 1, fp: 0, fn: 0, tn: 1, precision: 1, recall: 1 });
  });
});

describe('truthOf', () => {
  it('reads events, noise, not existing and rejections', () => {
    expect(truthOf('labelled', { kind: 'event', eventType: 'earthquake' }, null)).toBe('event');
    expect(truthOf('confirmed', { kind: 'event', eventType: 'quarry blast' }, 'final')).toBe('event');
    expect(truthOf('labelled', { kind: 'event', eventType: 'not existing' }, null)).toBe('noise');
    expect(truthOf('dismissed', { kind: 'noise', noiseReason: 'traffic' }, null)).toBe('noise');
    expect(truthOf('confirmed', { kind: 'event', eventType: 'earthquake' }, 'rejected')).toBe('noise');
  });
  it('leaves out escalations, items back in the queue and unreadable labels', () => {
    expect(truthOf('escalated', { kind: 'escalation', reason: 'strange onset' }, null)).toBeNull();
    expect(truthOf('returned', { kind: 'event', eventType: 'earthquake' }, null)).toBeNull();
    expect(truthOf('labelled', { kind: 'bogus' }, null)).toBeNull();
  });
});

describe('evidenceFromAnalysis', () => {
  it('takes the lead channel and the stored z values', () => {
    const e = evidenceFromAnalysis({ leadChannel: 'XX.KV01.00.HHZ', zLog10Ratio: 4.2, zStaLtaPeak: 5.1, channels: [lead({ id: 'XX.KV01.00.HHN' }), lead()], extra: 1 });
    expect(e?.lead.id).toBe('XX.KV01.00.HHZ');
    expect(e?.zLog10Ratio).toBe(4.2);
    expect(evidenceFromAnalysis({ channels: [] })).toBeNull();
  });
});

describe('scoreInputFromExtract', () => {
  const full = { leadChannel: 'XX.KV01.00.HHZ', zLog10Ratio: 4.2, zStaLtaPeak: 5.1, channels: [lead(), lead({ id: 'XX.KV01.00.HHN', log10Ratio: null, ratio: null })] };
  const col = <K extends keyof ChannelFeatures>(k: K) => full.channels.map((c) => c[k]);
  it('rebuilds the analysis from parsed driver values and from JSON text alike', () => {
    const parsed = { leadChannel: full.leadChannel, zLog10Ratio: 4.2, zStaLtaPeak: 5.1, ids: col('id'), log10Ratio: col('log10Ratio'), ratio: col('ratio'), staLta: col('staLta'), dominantFrequency: col('dominantFrequency'), spectralCentroid: col('spectralCentroid'), bands: col('bands'), qc: col('qc') };
    const text: Record<keyof typeof parsed, unknown> = { ...parsed };
    for (const k of Object.keys(parsed) as Array<keyof typeof parsed>) text[k] = JSON.stringify(parsed[k]);
    for (const row of [parsed, text]) {
      const e = evidenceFromAnalysis(scoreInputFromExtract(row));
      expect(e?.lead).toEqual(full.channels[0]);
      expect(e?.channels[1]?.log10Ratio).toBeNull();
      expect(e?.zStaLtaPeak).toBe(5.1);
    }
  });
  it('wraps the values of a single channel that came back unwrapped', () => {
    const c = lead();
    const row = { leadChannel: c.id, zLog10Ratio: 1, zStaLtaPeak: 2, ids: c.id, log10Ratio: c.log10Ratio, ratio: c.ratio, staLta: c.staLta, dominantFrequency: c.dominantFrequency, spectralCentroid: c.spectralCentroid, bands: c.bands, qc: c.qc };
    expect(evidenceFromAnalysis(scoreInputFromExtract(row))?.lead).toEqual(c);
  });
});

/*
 * Rule 4a of server/dsp/score.ts (with a trigger, the signal spectrum decides where the spectrum
 * peaks): the signal peak must lie within [fmin/(1+tol), fmax·(1+tol)] and its centroid at or below
 * centroidMaxFactor·fmax. High band 2–10 Hz, default tolerance 0.2 → [1.667, 12] Hz, centroid ≤ 15 Hz.
 * | item | z ratio | z peak | whole-window dominant | signal peak | signal centroid | flag at eventZ 3 |
 * | A    | 5       | 6      | 5 Hz (in band)        | 15 Hz (out) | 14 Hz           | needs eyes        |
 * | B    | 5       | 6      | 20 Hz (out)           | 11 Hz (in)  | 8 Hz            | likely event      |
 * | B'   | as B with the station's tolerance 0 → [2, 10] Hz: 11 Hz is out  | needs eyes        |
 */
describe('signal-spectrum rule in the replay', () => {
  const sig = (peakFrequency: number, centroid: number) => ({ peakFrequency, peakSnr: 20, centroid, minSnr: 4, fromS: 40, toS: 50, noiseFromS: 10, noiseToS: 40, nperseg: 256 });
  const a = ev(101, 'noise', 5, 6, { signalSpectrum: sig(15, 14) });
  const b = ev(102, 'event', 5, 6, { dominantFrequency: 20, spectralCentroid: 21, signalSpectrum: sig(11, 8) });
  it('follows the triggered part, not the whole window', () => {
    expect(flagUnder(a, base, profile)).toBe('needs eyes');
    expect(flagUnder(b, base, profile)).toBe('likely event');
  });
  it('uses the station’s own signal-peak tolerance', () => {
    const strict = { ...profile, thresholds: { ...profile.thresholds, signalPeakTolerance: 0 } };
    expect(flagUnder(b, base, strict)).toBe('needs eyes');
  });
  it('keeps the signal spectrum when reading a stored analysis', () => {
    const e = evidenceFromAnalysis({ leadChannel: 'XX.KV01.00.HHZ', zLog10Ratio: 5, zStaLtaPeak: 6, channels: [lead({ signalSpectrum: sig(11, 8), signalSpectrumNote: null })] });
    expect(e?.lead.signalSpectrum?.peakFrequency).toBe(11);
  });
});
