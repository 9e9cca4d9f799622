import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { BandError } from '@server/dsp/bands';
import { analyzeWindow, AnalysisError } from '@server/dsp/pipeline';
import { computeBaseline, scoreWindow } from '@server/dsp/score';
import { responseMagnitude } from '@server/dsp/response';
import { defaultProcessingProfile, processingProfileSchema } from '@shared/schemas/processing-profile';
import { makeSignal, maxAbsDiff, readFixture, signalSpecSchema, stream, type SignalSpec } from './fixture-signal';

const fixture = readFixture(
  'pipeline.json',
  z.object({
    cases: z.array(
      z.object({
        signal: signalSpecSchema,
        first: z.array(z.number()),
        energyLow: z.number(),
        energyHigh: z.number(),
        ratio: z.number(),
        dominantFrequency: z.number(),
        spectralCentroid: z.number(),
        staLtaPeak: z.number(),
        staLtaPeakTime: z.number(),
        triggers: z.array(z.tuple([z.number(), z.number().nullable()])),
        psdStride: z.number(),
        psd: z.array(z.number()),
      }),
    ),
  }),
);

describe('analyzeWindow end to end against the same chain in scipy (fixtures/dsp/pipeline.json)', () => {
  for (const c of fixture.cases) {
    it(`${c.signal.n} samples at ${c.signal.fs} Hz: energies, ratio, PSD to 1e-6; dominant frequency, centroid, STA/LTA`, () => {
      const x = makeSignal(c.signal);
      expect(maxAbsDiff(x.slice(0, c.first.length), c.first)).toBeLessThan(1e-12);
      const res = analyzeWindow([stream('XX.KV01.00.HHZ', x, c.signal.fs)], defaultProcessingProfile);
      const ch = res.channels[0];
      if (!ch) throw new Error('no channel');
      // Source: scipy.signal detrend + windows.tukey + butter/sosfilt + welch, scipy 1.10.
      expect(Math.abs(ch.bands.low.energy / c.energyLow - 1)).toBeLessThan(1e-6);
      expect(Math.abs(ch.bands.high.energy / c.energyHigh - 1)).toBeLessThan(1e-6);
      expect(Math.abs((ch.ratio as number) / c.ratio - 1)).toBeLessThan(1e-6);
      expect(ch.log10Ratio).toBeCloseTo(Math.log10(c.ratio), 6);
      const peak = Math.max(...c.psd);
      expect(maxAbsDiff(c.psd.map((_, k) => ch.psd.values[k * c.psdStride] as number), c.psd) / peak).toBeLessThan(1e-6);
      expect(ch.dominantFrequency).toBeCloseTo(c.dominantFrequency, 9);
      expect(ch.spectralCentroid as number).toBeCloseTo(c.spectralCentroid, 6);
      expect(ch.staLta.peak).toBeCloseTo(c.staLtaPeak, 6);
      expect(ch.staLta.peakTime).toBe(c.staLtaPeakTime);
      expect(ch.staLta.triggers.map((t) => [t.on, t.off])).toEqual(c.triggers);
    });
  }
});

const noiseSpec = (seed: number, fs = 100, n = 12000): SignalSpec => ({ n, fs, sines: [[0.5, 0.25, 0.3]], noise: 1, seed });

describe('analyzeWindow: output contract, flags and errors', () => {
  it('gives every field of the contract, times in ISO 8601 ms UTC, the Z component leads', () => {
    const fs = 100;
    const res = analyzeWindow(
      ['XX.KV02.00.HHE', 'XX.KV02.00.HHZ', 'XX.KV02.00.HHN'].map((id, i) => stream(id, makeSignal(noiseSpec(10 + i)), fs)),
      defaultProcessingProfile,
    );
    expect(res.leadChannel).toBe('XX.KV02.00.HHZ');
    expect(res.filtering).toBe('causal, zero initial state');
    expect(['likely event', 'likely noise', 'needs eyes']).toContain(res.flag);
    expect(res.reasons.length).toBeGreaterThan(0);
    expect(typeof res.score).toBe('number');
    const ch = res.channels[1];
    if (!ch) throw new Error('no channel');
    expect(ch.startTime).toBe('2026-03-14T09:26:53.589Z');
    expect(ch.samples).toBe(12000);
    expect(ch.sampleRate).toBe(fs);
    expect(ch.bands.low).toMatchObject({ fmin: 0.5, fmax: 2 });
    expect(ch.bands.high).toMatchObject({ fmin: 2, fmax: 10 });
    expect(ch.psd.freqs).toHaveLength(513);
    expect(ch.psd.values).toHaveLength(513);
    expect(ch.units).toBe('counts');
    expect(ch.noiseModels).toBeNull();
    expect(JSON.parse(JSON.stringify(res))).toEqual(res); // plain JSON, nothing lost
  });

  it('an impulsive 5 Hz arrival over quiet noise, against a baseline of noise windows: likely event', () => {
    const fs = 100;
    const noise = Array.from({ length: 25 }, (_, i) => analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal(noiseSpec(100 + i)), fs)], defaultProcessingProfile).channels[0]);
    const baseline = computeBaseline(noise.map((c) => ({ log10Ratio: c?.log10Ratio ?? null, staLtaPeak: c?.staLta.peak ?? null })));
    expect(baseline?.count).toBe(25);
    const ev = makeSignal({ ...noiseSpec(7), bursts: [[60, 6, 25, 5]] });
    const res = analyzeWindow([stream('XX.KV03.00.HHZ', ev, fs)], defaultProcessingProfile, { baseline });
    expect(res.baseline).toBe('station');
    expect(res.flag).toBe('likely event');
    expect(res.reasons.join(' | ')).toMatch(/high\/low ratio \d+\.\d, \+\d+\.\d MAD above this station's noise/);
    expect(res.reasons.join(' | ')).toMatch(/STA\/LTA peak \d+\.\d at 6\d\.\d s/);
    // And a fresh noise window scored the same way is ordinary.
    const quiet = analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal(noiseSpec(999)), fs)], defaultProcessingProfile, { baseline });
    expect(quiet.flag).toBe('likely noise');
  });

  it('a loud 15–25 Hz machinery burst that leaks into 2–10 Hz is NOT a likely event: needs eyes, with the reason', () => {
    const fs = 100;
    const noise = Array.from({ length: 25 }, (_, i) => analyzeWindow([stream('XX.KV04.00.HHZ', makeSignal(noiseSpec(300 + i)), fs)], defaultProcessingProfile).channels[0]);
    const baseline = computeBaseline(noise.map((c) => ({ log10Ratio: c?.log10Ratio ?? null, staLtaPeak: c?.staLta.peak ?? null })));
    // A burst of 15, 20 and 25 Hz tones, 400× the noise: the causal 2–10 Hz filter's skirt lets it in.
    const x = makeSignal({ ...noiseSpec(8), bursts: [[60, 8, 400, 15], [60, 8, 400, 20], [60, 8, 400, 25]] });
    const res = analyzeWindow([stream('XX.KV04.00.HHZ', x, fs)], defaultProcessingProfile, { baseline });
    const ch = res.channels[0];
    expect(ch?.staLta.triggers.length).toBeGreaterThan(0);
    expect(res.zLog10Ratio as number).toBeGreaterThan(3);
    expect(ch?.dominantFrequency as number).toBeGreaterThan(10);
    expect(res.flag).toBe('needs eyes');
    expect(res.reasons.join(' | ')).toMatch(/spectrum peaks outside the high band 2–10 Hz/);
  });

  it('a band at or above 0.45·fs is refused naming the band and fs, or capped with a warning when the profile says so', () => {
    const x = makeSignal(noiseSpec(5, 20, 2400));
    expect(() => analyzeWindow([stream('XX.KV05.00.BHZ', x, 20)], defaultProcessingProfile)).toThrow(BandError);
    expect(() => analyzeWindow([stream('XX.KV05.00.BHZ', x, 20)], defaultProcessingProfile)).toThrow(/high band 2–10 Hz reaches 0\.45·fs = 9 Hz at a sample rate of 20 Hz/);
    const capped = processingProfileSchema.parse({ bands: { nyquistPolicy: 'cap' } });
    const res = analyzeWindow([stream('XX.KV05.00.BHZ', x, 20)], capped);
    expect(res.channels[0]?.bands.high.fmax).toBe(9);
    expect(res.channels[0]?.warnings.join(' ')).toMatch(/upper edge lowered to 9 Hz/);
  });

  it('with a sensitivity: energies in (m/s)²·s (÷S²), acceleration PSD in dB against the noise models; a flat PAZ equals the scalar', () => {
    const fs = 100;
    const x = makeSignal(noiseSpec(21));
    const s = stream('XX.KV06.00.HHZ', x, fs);
    const counts = analyzeWindow([s], defaultProcessingProfile).channels[0];
    const S = 1.5e9;
    const phys = analyzeWindow([s], defaultProcessingProfile, { sensitivity: { [s.id]: S } }).channels[0];
    expect(phys?.units).toBe('m/s');
    expect(Math.abs((phys?.bands.high.energy as number) * S * S / (counts?.bands.high.energy as number) - 1)).toBeLessThan(1e-9);
    expect(phys?.noiseModels?.medianPosition).not.toBeNull();
    const flatPaz = { zeros: [], poles: [], normalizationFactor: 1, sensitivity: S, sensitivityFrequencyHz: 1 };
    const viaPaz = analyzeWindow([s], defaultProcessingProfile, { sensitivity: { [s.id]: flatPaz } }).channels[0];
    const nums = (v: Array<number | null> | undefined): number[] => (v ?? []).map((x) => x ?? NaN);
    expect(maxAbsDiff(nums(viaPaz?.psd.values), nums(phys?.psd.values)) / Math.max(...nums(phys?.psd.values))).toBeLessThan(1e-9);
    // Acceleration PSD = velocity PSD × (2πf)² (dB): check one bin by hand.
    const k = 100;
    const f = phys?.psd.freqs[k] as number;
    expect(phys?.noiseModels?.accelerationDb[k]).toBeCloseTo(10 * Math.log10((phys?.psd.values[k] as number) * (2 * Math.PI * f) ** 2), 9);
  });

  it('band-reject filters are applied before the band-passes, skipped with a warning above Nyquist, and their band is left out of the dominant frequency', () => {
    const fs = 100;
    const x = makeSignal({ ...noiseSpec(31), sines: [[200, 25, 0], [5, 5, 0]] });
    const profile = processingProfileSchema.parse({ bandReject: [{ fmin: 24.5, fmax: 25.5, label: 'pump' }] });
    const res = analyzeWindow([stream('XX.KV04.00.HHZ', x, fs)], profile).channels[0];
    const plain = analyzeWindow([stream('XX.KV04.00.HHZ', x, fs)], defaultProcessingProfile).channels[0];
    expect(res?.bandReject[0]?.applied).toBe(true);
    expect(Math.abs((res?.dominantFrequency as number) - 5)).toBeLessThan(0.1);
    expect(plain?.dominantFrequency).toBe(25);
    expect(res?.bands.high.energy as number).toBeLessThan(plain?.bands.high.energy as number);
    const slow = analyzeWindow([stream('XX.KV04.00.BHZ', makeSignal(noiseSpec(31, 40, 2400)), 40)], profile).channels[0];
    expect(slow?.bandReject[0]?.applied).toBe(false);
    expect(slow?.warnings.join(' ')).toMatch(/not below the Nyquist frequency 20 Hz: not applied/);
  });

  it('display data: decimated curves of the requested size and a spectrogram', () => {
    const res = analyzeWindow([stream('XX.KV01.00.HHZ', makeSignal(noiseSpec(3)), 100)], defaultProcessingProfile, { display: true, displayPoints: 1000 });
    const d = res.channels[0]?.display;
    expect(d?.trace.length).toBeLessThanOrEqual(1000);
    expect(d?.trace.length).toBe(d?.times.length);
    expect(d?.staLta.length).toBe(d?.trace.length);
    expect(d?.spectrogram?.db.length).toBeGreaterThan(0);
    expect(d?.filtering).toBe('causal');
    const zp = analyzeWindow([stream('XX.KV01.00.HHZ', makeSignal(noiseSpec(3)), 100)], defaultProcessingProfile, { display: true, displayFiltering: 'zero-phase' });
    expect(zp.channels[0]?.display?.filtering).toBe('zero-phase');
    expect(zp.channels[0]?.display?.high).not.toEqual(res.channels[0]?.display?.high);
    // the numbers do not change with the display choice
    expect(zp.channels[0]?.bands).toEqual(res.channels[0]?.bands);
  });

  it('refuses channels of several stations in one window, and non-finite samples', () => {
    const x = makeSignal(noiseSpec(4));
    expect(() => analyzeWindow([stream('XX.KV01.00.HHZ', x, 100), stream('XX.KV02.00.HHZ', x, 100)], defaultProcessingProfile)).toThrow(/one station's channels; got 2 stations \(XX\.KV01, XX\.KV02\)/);
    const bad = Float64Array.from(x);
    bad[50] = NaN;
    expect(() => analyzeWindow([stream('XX.KV01.00.HHZ', bad, 100)], defaultProcessingProfile)).toThrow(/sample 50 \(0\.500 s\) is NaN/);
  });

  it('a dead channel is analysed without crashing: QC error, null ratio and spectrum, needs eyes', () => {
    const res = analyzeWindow([stream('XX.KV01.00.HHZ', new Float64Array(6000).fill(42), 100)], defaultProcessingProfile, { sensitivity: { 'XX.KV01.00.HHZ': 1e9 } });
    const ch = res.channels[0];
    expect(ch?.qc.map((q) => q.code)).toEqual(['flat-line']);
    expect(ch?.ratio).toBeNull();
    expect(ch?.dominantFrequency).toBeNull();
    expect(res.flag).toBe('needs eyes');
    expect(JSON.stringify(res)).not.toMatch(/NaN|Infinity/);
  });

  it('a poles-and-zeros sensor with zeros at 0 Hz: the uncorrectable 0 Hz bin is null, the rest corrected by |H(f)|²', () => {
    const x = makeSignal(noiseSpec(41));
    const s = stream('XX.KV06.00.HHZ', x, 100);
    const w0 = 2 * Math.PI;
    const paz = {
      zeros: [{ re: 0, im: 0 }, { re: 0, im: 0 }],
      poles: [{ re: -w0 / Math.SQRT2, im: w0 / Math.SQRT2 }, { re: -w0 / Math.SQRT2, im: -w0 / Math.SQRT2 }],
      normalizationFactor: 1,
      sensitivity: 1e9,
      sensitivityFrequencyHz: 10,
    };
    const counts = analyzeWindow([s], defaultProcessingProfile).channels[0];
    const res = analyzeWindow([s], defaultProcessingProfile, { sensitivity: { [s.id]: paz } }).channels[0];
    expect(res?.psd.values[0]).toBeNull();
    const k = 10; // ≈ 0.98 Hz, near the 1 Hz corner where |H| differs most from the flat value
    const f = res?.psd.freqs[k] as number;
    const h = responseMagnitude(paz, f);
    expect((res?.psd.values[k] as number) / ((counts?.psd.values[k] as number) / (h * h))).toBeCloseTo(1, 9);
    expect(JSON.stringify(res)).not.toMatch(/NaN|Infinity/);
  });

  it('refuses an empty window and a channel that is too short, naming it', () => {
    expect(() => analyzeWindow([], defaultProcessingProfile)).toThrow(AnalysisError);
    expect(() => analyzeWindow([stream('XX.KV01.00.HHZ', new Float64Array(5), 100)], defaultProcessingProfile)).toThrow(/XX\.KV01\.00\.HHZ: only 5 samples/);
  });

  it('does not mutate the input samples', () => {
    const x = makeSignal(noiseSpec(4));
    const copy = Float64Array.from(x);
    analyzeWindow([stream('XX.KV01.00.HHZ', x, 100)], defaultProcessingProfile);
    expect(maxAbsDiff(x, copy)).toBe(0);
  });
});

const sigFixture = readFixture(
  'signal-spectrum.json',
  z.object({
    cases: z.array(
      z.object({
        signal: signalSpecSchema,
        onIndex: z.number().int(),
        offIndex: z.number().int().nullable(),
        signalFrom: z.number().int(),
        signalTo: z.number().int(),
        noiseFrom: z.number().int(),
        noiseTo: z.number().int(),
        nperseg: z.number().int(),
        peakFrequency: z.number(),
        centroid: z.number(),
        wholeWindowDominant: z.number(),
      }),
    ),
  }),
);

describe('signal spectrum in analyzeWindow against the same rule in scipy (fixtures/dsp/signal-spectrum.json)', () => {
  // Constructed test signals (0.2 Hz "microseism" sine ×30 + white noise + a windowed burst), not reference data.
  for (const c of sigFixture.cases) {
    it(`${c.signal.n} samples at ${c.signal.fs} Hz, burst at ${c.signal.bursts?.[0]?.[3]} Hz: trigger, parts, segment, peak and centroid`, () => {
      const fs = c.signal.fs;
      const ch = analyzeWindow([stream('XX.KV01.00.HHZ', makeSignal(c.signal), fs)], defaultProcessingProfile).channels[0];
      // Source: scipy.signal detrend/tukey/butter/sosfilt/welch + numpy STA/LTA, scipy 1.10.
      expect(ch?.staLta.triggers[0]).toEqual({ on: c.onIndex / fs, off: c.offIndex === null ? null : c.offIndex / fs });
      expect(ch?.dominantFrequency).toBeCloseTo(c.wholeWindowDominant, 9);
      const ss = ch?.signalSpectrum;
      expect(ss).toMatchObject({ fromS: c.signalFrom / fs, toS: c.signalTo / fs, noiseFromS: c.noiseFrom / fs, noiseToS: c.noiseTo / fs, nperseg: c.nperseg, minSnr: 2 });
      expect(ss?.peakFrequency).toBeCloseTo(c.peakFrequency, 9);
      expect(ss?.centroid as number).toBeCloseTo(c.centroid, 6);
      expect(ch?.signalSpectrumNote).toBeNull();
    });
  }
});

describe('the score with the signal spectrum (constructed test signals: a large 0.2 Hz microseism, white noise, a windowed burst)', () => {
  const fs = 100;
  const micro = (seed: number, phase: number): SignalSpec => ({ n: 12000, fs, sines: [[30, 0.2, phase]], noise: 1, seed });
  // The station's own noise windows carry the microseism too, as a real station's would.
  const noiseWindows = Array.from({ length: 25 }, (_, i) => analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal(micro(500 + i, 0.7 * i)), fs)], defaultProcessingProfile).channels[0]);
  const baseline = computeBaseline(noiseWindows.map((c) => ({ log10Ratio: c?.log10Ratio ?? null, staLtaPeak: c?.staLta.peak ?? null })));

  it('a 5 Hz burst at 60 s under a microseism that dominates the whole-window PSD: likely event, the signal peak named', () => {
    const res = analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal({ ...micro(71, 0), bursts: [[60, 6, 5, 5]] }), fs)], defaultProcessingProfile, { baseline });
    const ch = res.channels[0];
    if (!ch) throw new Error('no channel');
    expect(res.baseline).toBe('station');
    // the whole-window spectrum peaks at the microseism (bin 0.195 Hz = 2·100/1024) …
    expect(ch.dominantFrequency).toBeCloseTo(0.1953125, 9);
    // … so the whole-window rule alone would not call it an event:
    expect(scoreWindow([{ ...ch, signalSpectrum: null }], baseline, defaultProcessingProfile).flag).toBe('needs eyes');
    // the excess over the pre-trigger noise is at the burst's 5 Hz (bin 5.08 Hz of a 256-sample segment)
    expect(Math.abs((ch.signalSpectrum?.peakFrequency as number) - 5)).toBeLessThan(100 / 256);
    expect(res.flag).toBe('likely event');
    expect(res.reasons.join(' | ')).toMatch(/signal peaks at 5\.1 Hz over the pre-trigger noise \(\d+\.\d dB above it there, centroid of the excess 5\.1 Hz; signal 60\.\d–6\d\.\d s against noise \d+\.\d–59\.\d s\)/);
  });

  it('the same with a loud 20 Hz burst leaking through the causal 2–10 Hz filter: needs eyes, naming the signal peak', () => {
    const res = analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal({ ...micro(72, 0), bursts: [[60, 8, 400, 20]] }), fs)], defaultProcessingProfile, { baseline });
    const ch = res.channels[0];
    expect(res.zLog10Ratio as number).toBeGreaterThan(3);
    expect(res.zStaLtaPeak).toBeGreaterThan(3);
    expect(ch?.staLta.triggers.length).toBeGreaterThan(0);
    expect(Math.abs((ch?.signalSpectrum?.peakFrequency as number) - 20)).toBeLessThan(100 / 256);
    expect(res.flag).toBe('needs eyes');
    expect(res.reasons.join(' | ')).toMatch(/signal spectrum peaks outside the high band 2–10 Hz \(at 19\.9 Hz, accepted 1\.7–12\.0 Hz\)/);
  });

  it('no trigger: no signal spectrum, and the score is the whole-window rule unchanged', () => {
    const res = analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal(micro(999, 1)), fs)], defaultProcessingProfile, { baseline });
    const ch = res.channels[0];
    if (!ch) throw new Error('no channel');
    expect(ch.staLta.triggers).toEqual([]);
    expect(ch.signalSpectrum).toBeNull();
    expect(ch.signalSpectrumNote).toBeNull();
    const { signalSpectrum: _s, signalSpectrumNote: _n, ...wholeWindowOnly } = ch;
    const old = scoreWindow([wholeWindowOnly], baseline, defaultProcessingProfile);
    expect({ flag: res.flag, score: res.score, reasons: res.reasons }).toEqual({ flag: old.flag, score: old.score, reasons: old.reasons });
    expect(res.flag).toBe('likely noise');
  });

  it('a trigger too early for 5 s of untapered noise before it: the whole-window rule, said in the reasons', () => {
    // A 5 s LTA lets a trigger come at ~10 s, inside the first 6 s taper + 1 s guard + 5 s minimum.
    const profile = processingProfileSchema.parse({ staLta: { ltaS: 5 } });
    const res = analyzeWindow([stream('XX.KV03.00.HHZ', makeSignal({ ...micro(73, 0), bursts: [[9, 6, 5, 5]] }), fs)], profile);
    const ch = res.channels[0];
    expect(ch?.staLta.triggers[0]?.on as number).toBeLessThan(12);
    expect(ch?.signalSpectrum).toBeNull();
    expect(ch?.signalSpectrumNote).toMatch(/of untapered noise before the trigger at \d+\.\d s \(at least 5 s needed\)/);
    expect(res.reasons.join(' | ')).toMatch(/no signal spectrum: only \d\.\d s of untapered noise .*; the whole-window spectrum decides/);
  });
});
