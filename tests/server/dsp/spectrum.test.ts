import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { hannPeriodic, spectralStats, spectrogram, welchPsd } from '../../../server/dsp/spectrum';
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
