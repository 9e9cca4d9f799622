import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { hannPeriodic, largestPowerOfTwoAtMost, planSignalSegments, snrSpectrum, spectralStats, spectrogram, welchPsd } from '../../../server/dsp/spectrum';
import { detrendLinear } from '../../../server/dsp/preprocess';
import { lcgUniform, makeSignal, maxAbsDiff, readFixture, signalSpecSchema } from './fixture-signal';

const fixture = readFixture(
  'welch.json',
  z.object({
    cases: z.array(z.object({ signal: signalSpecSchema, first: z.array(z.number()), freqs: z.array(z.number()), psd: z.array(z.number()) })),
  }),
);

describe('Welch PSD against scipy.signal.welch (fixtures/dsp/welch.json)', () => {
  for (const c of fixture.cases) {
    it(`${c.signal.n} samples at ${c.signal.fs} Hz: values to 1e-6 of max PSD, same frequencies`, () => {
      const x = makeSignal(c.signal);
      expect(maxAbsDiff(x.slice(0, c.first.length), c.first)).toBeLessThan(1e-12);
      // Source: scipy.signal.welch(x, fs, window='hann', nperseg=1024, detrend='constant',
      // scaling='density', return_onesided=True), scipy 1.10 (noverlap default = nperseg//2).
      const psd = welchPsd(x, c.signal.fs, 1024);
      expect(psd.values.length).toBe(c.psd.length);
      expect(maxAbsDiff(psd.freqs, c.freqs)).toBeLessThan(1e-9);
      const peak = Math.max(...c.psd);
      expect(maxAbsDiff(psd.values, c.psd) / peak).toBeLessThanOrEqual(1e-6);
      if (c.signal.n < 1024) expect(psd.warning).toMatch(/shorter than the 1024-sample PSD segment/);
      else expect(psd.warning).toBeUndefined();
    });
  }

  it('periodic Hann: w_i = ½ − ½cos(2πi/N) (scipy get_window("hann", N), hand-worked N = 4: [0, ½, 1, ½])', () => {
    expect(maxAbsDiff(hannPeriodic(4), [0, 0.5, 1, 0.5])).toBeLessThan(1e-15);
  });

  it('refuses traces that are too short, with a message', () => {
    expect(() => welchPsd(Float64Array.from([1]), 100)).toThrow(/at least 2 samples/);
    expect(() => welchPsd(Float64Array.from([1, 2]), 0)).toThrow(/sample rate/);
  });
});

describe('Parseval for the Welch estimate', () => {
  it('exact identity: Σ P_k·Δf = mean over segments of Σ(x̃·w)²/Σw² (DFT Parseval, one-sided doubling) — property test', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -50, max: 50, noNaN: true }), { minLength: 64, maxLength: 700 }), (xs) => {
        const x = Float64Array.from(xs);
        const fs = 10;
        const seg = 64;
        const psd = welchPsd(x, fs, seg);
        const df = fs / seg;
        let integral = 0;
        for (const v of psd.values) integral += v * df;
        const w = hannPeriodic(seg);
        const wss = w.reduce((a, v) => a + v * v, 0);
        const step = seg / 2;
        let sum = 0;
        for (let j = 0; j < psd.segments; j++) {
          const part = x.slice(j * step, j * step + seg);
          const m = part.reduce((a, v) => a + v, 0) / seg;
          sum += part.reduce((a, v, i) => a + ((v - m) * (w[i] as number)) ** 2, 0) / wss;
        }
        const expected = sum / psd.segments;
        expect(Math.abs(integral - expected)).toBeLessThanOrEqual(1e-9 * Math.max(1, expected));
      }),
      { numRuns: 100 },
    );
  });

  it('statistical: for white noise ∫PSD df ≈ variance (uniform on [−½, ½): 1/12) within 3 %', () => {
    // 200 000 samples, 389 segments: the relative standard error of the mean power is ≈ 1.3 %.
    const u = lcgUniform(2024, 200_000).map((v) => v - 0.5);
    const psd = welchPsd(u, 100, 1024);
    let integral = 0;
    for (const v of psd.values) integral += v * (100 / 1024);
    expect(Math.abs(integral * 12 - 1)).toBeLessThan(0.03);
  });
});

describe('spectrogram against scipy.signal.spectrogram (fixtures/dsp/spectrogram.json)', () => {
  const sg = readFixture(
    'spectrogram.json',
    z.object({ signal: signalSpecSchema, first: z.array(z.number()), freqs: z.array(z.number()), times: z.array(z.number()), db: z.array(z.array(z.number())) }),
  );
  it("hann, nperseg 256, noverlap 128, constant detrend, density: same times, frequencies and dB to 1e-6", () => {
    const x = makeSignal(sg.signal);
    expect(maxAbsDiff(x.slice(0, sg.first.length), sg.first)).toBeLessThan(1e-12);
    // Source: scipy.signal.spectrogram(x, fs, window='hann', nperseg=256, noverlap=128,
    // detrend='constant', scaling='density', mode='psd'), scipy 1.10.
    const ours = spectrogram(x, sg.signal.fs, 256, 1000);
    expect(ours.step).toBe(128);
    expect(maxAbsDiff(ours.times, sg.times)).toBeLessThan(1e-9);
    expect(maxAbsDiff(ours.freqs, sg.freqs)).toBeLessThan(1e-9);
    sg.db.forEach((col, j) => {
      expect(maxAbsDiff(ours.db.slice(j * col.length, (j + 1) * col.length), col), `column ${j}`).toBeLessThan(1e-6);
    });
  });
});

describe('dominant frequency, centroid and spectrogram', () => {
  it('a 5 Hz tone has its dominant bin at 5 Hz; excluded bands are skipped', () => {
    const fs = 128;
    const x = Float64Array.from({ length: 8192 }, (_, i) => Math.sin((2 * Math.PI * 5 * i) / fs) + 3 * Math.sin((2 * Math.PI * 25 * i) / fs));
    const psd = welchPsd(x, fs, 1024);
    expect(spectralStats(psd.freqs, psd.values, 0.1).dominantFrequency).toBe(25);
    const s = spectralStats(psd.freqs, psd.values, 0.1, [{ fmin: 24.5, fmax: 25.5 }]);
    expect(s.dominantFrequency).toBe(5);
    expect(s.spectralCentroid).toBeGreaterThan(4.5);
    expect(s.spectralCentroid).toBeLessThan(6);
  });

  it('centroid is Σf·P/ΣP (hand-worked: P = 1 at 1 Hz and 3 at 3 Hz gives 2.5 Hz); bins under fmin ignored', () => {
    const s = spectralStats(Float64Array.from([0, 1, 2, 3]), Float64Array.from([100, 1, 0, 3]), 0.1);
    expect(s.spectralCentroid).toBe(2.5);
    expect(s.dominantFrequency).toBe(3);
  });

  it('spectrogram: columns × bins, tone in the right row', () => {
    const fs = 100;
    const x = Float64Array.from({ length: 6000 }, (_, i) => Math.sin((2 * Math.PI * 12.5 * i) / fs));
    const sg = spectrogram(x, fs, 256, 50);
    expect(sg.times.length).toBeLessThanOrEqual(50);
    expect(sg.db.length).toBe(sg.times.length * sg.freqs.length);
    const row = sg.db.slice(0, sg.freqs.length);
    const k = row.indexOf(Math.max(...row));
    expect(sg.freqs[k]).toBeCloseTo(12.5, 6);
  });
});

const signalFixture = readFixture(
  'signal-spectrum.json',
  z.object({
    cases: z.array(
      z.object({
        signal: signalSpecSchema,
        first: z.array(z.number()),
        signalSpectrum: z.object({
          signalFrom: z.number().int(),
          signalTo: z.number().int(),
          noiseFrom: z.number().int(),
          noiseTo: z.number().int(),
          nperseg: z.number().int(),
          freqs: z.array(z.number()),
          signalPsd: z.array(z.number()),
          noisePsd: z.array(z.number()),
          peakFrequency: z.number(),
          peakSnr: z.number(),
          centroid: z.number(),
          inBandSnr: z.number(),
          inBandShare: z.number(),
        }),
      }),
    ),
  }),
);

/**
 * The trace the signal spectrum is read from (pipeline.ts): the linearly detrended, UNtapered trace
 * with a cosine ramp ½(1 − cos(πi/a)) over its first a = round(0.75·fs) samples (the default staLta.startS).
 */
function rampedTrace(x: Float64Array, fs: number): Float64Array {
  const y = detrendLinear(x);
  const a = Math.round(0.75 * fs);
  for (let i = 0; i < a; i++) y[i] = (y[i] as number) * 0.5 * (1 - Math.cos((Math.PI * i) / a));
  return y;
}

describe('signal-to-noise spectrum: each part against scipy.signal.welch on the same part (fixtures/dsp/signal-spectrum.json)', () => {
  // The inputs are constructed test signals (0.2 Hz sine + white noise + a windowed burst), not
  // reference data; the check values are scipy's.
  for (const { signal, first, signalSpectrum: c } of signalFixture.cases) {
    it(`${signal.n} samples at ${signal.fs} Hz, parts [${c.signalFrom}, ${c.signalTo}) and [${c.noiseFrom}, ${c.noiseTo}), nperseg ${c.nperseg}: PSDs to 1e-6 of their max, peak, centroid, in-band SNR and share`, () => {
      const x = makeSignal(signal);
      expect(maxAbsDiff(x.slice(0, first.length), first)).toBeLessThan(1e-12);
      const fs = signal.fs;
      const plan = { signalFrom: c.signalFrom, signalTo: c.signalTo, noiseFrom: c.noiseFrom, noiseTo: c.noiseTo, nperseg: c.nperseg };
      const sp = snrSpectrum(rampedTrace(x, fs), fs, plan, 0.1, 0.45 * fs, [], 2, [2, 10]);
      // Source: scipy.signal.welch(base[a:b], fs, window='hann', nperseg=N, noverlap=N//2,
      // detrend='constant', scaling='density') on scipy's detrend(linear) with the same ramp, scipy 1.10.
      expect(maxAbsDiff(sp.freqs, c.freqs)).toBeLessThan(1e-9);
      expect(maxAbsDiff(sp.signalPsd, c.signalPsd) / Math.max(...c.signalPsd)).toBeLessThan(1e-6);
      expect(maxAbsDiff(sp.noisePsd, c.noisePsd) / Math.max(...c.noisePsd)).toBeLessThan(1e-6);
      // Peak, ratio, centroid and the in-band sums by the rule written in the script (numpy on scipy's PSDs).
      expect(sp.peakFrequency).toBeCloseTo(c.peakFrequency, 9);
      expect(Math.abs((sp.peakSnr as number) / c.peakSnr - 1)).toBeLessThan(1e-6);
      expect(sp.centroid as number).toBeCloseTo(c.centroid, 6);
      expect(Math.abs((sp.inBandSnr as number) / c.inBandSnr - 1)).toBeLessThan(1e-6);
      expect(sp.inBandShare).toBeCloseTo(c.inBandShare, 12);
    });
  }

  it('in-band sums hand-worked: without an in-band range they are null; a band between bins holds none', () => {
    // Constructed: a tone at 6.25 Hz only in the signal part (bin 16 of 256 at 100 Hz) over a weak chirp.
    const fs = 100;
    const x = Float64Array.from({ length: 4000 }, (_, i) => (i >= 3000 ? Math.sin((2 * Math.PI * 6.25 * i) / fs) : 0) + 1e-3 * Math.sin(i * i));
    const plan = { signalFrom: 3000, signalTo: 4000, noiseFrom: 0, noiseTo: 2900, nperseg: 256 };
    const none = snrSpectrum(x, fs, plan, 0.1, 45);
    expect(none.inBandSnr).toBeNull();
    expect(none.inBandShare).toBeNull();
    // [6.2, 6.3] Hz holds exactly bin 16 (6.25 Hz): Σ Ps/Σ Pn there is that bin's own ratio, and its share is 1.
    const one = snrSpectrum(x, fs, plan, 0.1, 45, [], 2, [6.2, 6.3]);
    expect(one.inBandSnr as number).toBeCloseTo(one.snr[16] as number, 6);
    expect(one.inBandShare).toBe(1);
    // no bin between 6.26 and 6.6 Hz (bins are 0.390625 Hz apart)
    expect(snrSpectrum(x, fs, plan, 0.1, 45, [], 2, [6.26, 6.6]).inBandSnr).toBeNull();
  });

  it('refuses parts outside the trace or shorter than the segment, naming them', () => {
    const x = new Float64Array(1000).fill(1);
    expect(() => snrSpectrum(x, 100, { signalFrom: 900, signalTo: 1100, noiseFrom: 0, noiseTo: 500, nperseg: 64 }, 0.1, 45)).toThrow(/signal part \[900, 1100\) must lie in the trace of 1000 samples/);
    expect(() => snrSpectrum(x, 100, { signalFrom: 600, signalTo: 800, noiseFrom: 0, noiseTo: 32, nperseg: 64 }, 0.1, 45)).toThrow(/noise part \[0, 32\) .* at least 64 samples/);
  });

  it('hand-worked ratio: a tone present in both parts at equal power is not counted; a tone only in the signal part is the peak', () => {
    // Constructed: 0.8·sin at 3.125 Hz everywhere (bin 8 of 256 at 100 Hz) + 1.0·sin at 6.25 Hz only in the signal part.
    const fs = 100;
    const x = Float64Array.from({ length: 4000 }, (_, i) => 0.8 * Math.sin((2 * Math.PI * 3.125 * i) / fs) + (i >= 3000 ? Math.sin((2 * Math.PI * 6.25 * i) / fs) : 0) + 1e-3 * Math.sin(i * i));
    const sp = snrSpectrum(x, fs, { signalFrom: 3000, signalTo: 4000, noiseFrom: 0, noiseTo: 2900, nperseg: 256 }, 0.1, 45);
    expect(sp.peakFrequency).toBe(6.25);
    expect(sp.snr[8] as number).toBeCloseTo(1, 1);
  });
});

describe('planSignalSegments (the documented rule, hand-worked at 100 Hz, taper 600 samples, guard 100)', () => {
  const opts = { minS: 2, maxS: 20, noiseMinS: 5, noiseMaxS: 30, segmentS: 2.56, guardSamples: 100, taperSamples: 600, maxNperseg: 1024 };
  it('signal = trigger duration bounded to [2 s, 20 s]; maxS when still on; noise = 30 s before on − 1 s, after the taper', () => {
    expect(planSignalSegments(12000, 100, { onIndex: 6000, offIndex: 6500 }, opts)).toEqual({ plan: { signalFrom: 6000, signalTo: 6500, noiseFrom: 2900, noiseTo: 5900, nperseg: 256 } });
    expect(planSignalSegments(12000, 100, { onIndex: 6000, offIndex: 6050 }, opts)).toEqual({ plan: { signalFrom: 6000, signalTo: 6200, noiseFrom: 2900, noiseTo: 5900, nperseg: 128 } });
    expect(planSignalSegments(12000, 100, { onIndex: 6000, offIndex: null }, opts)).toEqual({ plan: { signalFrom: 6000, signalTo: 8000, noiseFrom: 2900, noiseTo: 5900, nperseg: 256 } });
    expect(planSignalSegments(12000, 100, { onIndex: 3100, offIndex: 3600 }, opts)).toEqual({ plan: { signalFrom: 3100, signalTo: 3600, noiseFrom: 600, noiseTo: 3000, nperseg: 256 } });
  });
  it('too little signal before the end, or too little usable noise before the onset: a sentence instead of a plan', () => {
    expect(planSignalSegments(12000, 100, { onIndex: 11900, offIndex: null }, opts)).toEqual({ note: 'only 1.0 s of signal after the trigger at 119.0 s before the window ends (at least 2 s needed)' });
    // noise [max(600, 1000 − 100 − 3000), 1000 − 100) = [600, 900): 3.0 s < 5 s
    expect(planSignalSegments(12000, 100, { onIndex: 1000, offIndex: 1500 }, opts)).toEqual({ note: 'only 3.0 s of usable noise before the onset at 10.0 s (at least 5 s needed)' });
    // an onset inside the start ramp: no noise at all, said as 0.0 s
    expect(planSignalSegments(12000, 100, { onIndex: 650, offIndex: 1500 }, opts)).toEqual({ note: 'only 0.0 s of usable noise before the onset at 6.5 s (at least 5 s needed)' });
  });
  it('largest power of two at most n', () => {
    expect([1, 2, 3, 255, 256, 600].map(largestPowerOfTwoAtMost)).toEqual([1, 2, 2, 128, 256, 512]);
    expect(largestPowerOfTwoAtMost(0)).toBe(0);
  });
});
