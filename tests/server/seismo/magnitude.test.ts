import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { distanceNote, localMagnitude, minusLogA0HuttonBoore, networkMagnitude, stationMagnitude } from '@server/seismo/magnitude';
import { WOOD_ANDERSON, peakAmplitude, simulateWoodAnderson, woodAndersonPoles, woodAndersonResponse } from '@server/seismo/wood-anderson';
import { readSeismoFixture } from './read-fixture';

const abs = (c: { re: number; im: number }): number => Math.hypot(c.re, c.im);

describe('Wood-Anderson constants (Uhrhammer & Collins 1990; the issue’s poles)', () => {
  it('T₀ = 0.8 s, h = 0.7, G = 2080 give poles −5.49779 ± 5.60886i rad/s', () => {
    expect(WOOD_ANDERSON).toEqual({ naturalPeriodS: 0.8, damping: 0.7, staticMagnification: 2080 });
    const [p1, p2] = woodAndersonPoles();
    expect(p1.re).toBeCloseTo(-5.49779, 5);
    expect(p1.im).toBeCloseTo(5.60886, 5);
    expect(p2.re).toBeCloseTo(-5.49779, 5);
    expect(p2.im).toBeCloseTo(-5.60886, 5);
  });
  it('displacement magnification: → 2080 well above the natural frequency, G/(2h) = 1485.71 at it, ∝ f² well below', () => {
    expect(abs(woodAndersonResponse(200, 'displacement'))).toBeCloseTo(2080, 0);
    expect(abs(woodAndersonResponse(1.25, 'displacement'))).toBeCloseTo(2080 / 1.4, 9);
    // At f ≪ f₀: |H_d| ≈ G (f/f₀)².
    expect(abs(woodAndersonResponse(0.01, 'displacement')) / (2080 * (0.01 / 1.25) ** 2)).toBeCloseTo(1, 3);
    // Velocity input: H_v = H_d / (iω).
    const f = 3.3;
    expect(abs(woodAndersonResponse(f, 'velocity'))).toBeCloseTo(abs(woodAndersonResponse(f, 'displacement')) / (2 * Math.PI * f), 12);
  });
});

const wa = readSeismoFixture(
  'wood-anderson.json',
  z.object({
    source: z.string(),
    poles: z.array(z.tuple([z.number(), z.number()])),
    response: z.array(z.object({ frequencyHz: z.number(), displacementAbs: z.number(), displacementPhaseRad: z.number(), velocityAbsSPerM: z.number() })),
    lsim: z.object({ sampleRateHz: z.number(), n: z.number(), input: z.string(), outputMm: z.array(z.number()) }),
  }),
);

describe(`Wood-Anderson response against scipy (fixtures/seismo/wood-anderson.json: ${wa.source})`, () => {
  it('poles equal scipy’s to 1e-12', () => {
    const [p1, p2] = woodAndersonPoles();
    expect(Math.abs(p1.re - (wa.poles[0]?.[0] as number))).toBeLessThan(1e-12);
    expect(Math.abs(p1.im - (wa.poles[0]?.[1] as number))).toBeLessThan(1e-12);
    expect(Math.abs(p2.im - (wa.poles[1]?.[1] as number))).toBeLessThan(1e-12);
  });
  for (const r of wa.response) {
    it(`${r.frequencyHz} Hz: |H_d|, phase and |H_v| as freqs_zpk, to 1e-10 relative`, () => {
      const d = woodAndersonResponse(r.frequencyHz, 'displacement');
      const v = woodAndersonResponse(r.frequencyHz, 'velocity');
      expect(Math.abs(abs(d) / r.displacementAbs - 1)).toBeLessThan(1e-10);
      expect(Math.abs(Math.atan2(d.im, d.re) - r.displacementPhaseRad)).toBeLessThan(1e-10);
      expect(Math.abs(abs(v) / r.velocityAbsSPerM - 1)).toBeLessThan(1e-10);
    });
  }

  it('a simulated burst matches scipy.signal.lsim of the same instrument within 0.15 % of its peak (lsim holds the input linear between samples; this method treats it as band-limited)', () => {
    const fs = wa.lsim.sampleRateHz;
    const input = Float64Array.from({ length: wa.lsim.n }, (_, i) => {
      const t = i / fs;
      return 2e-6 * Math.exp(-(((t - 6) / 0.8) ** 2)) * Math.sin(2 * Math.PI * 3 * t) + 0.8e-6 * Math.exp(-(((t - 11) / 1.5) ** 2)) * Math.sin(2 * Math.PI * 0.7 * t + 0.4);
    });
    const out = simulateWoodAnderson(input, fs, 'velocity');
    const ref = wa.lsim.outputMm;
    const peak = Math.max(...ref.map(Math.abs));
    let worst = 0;
    for (let i = 0; i < ref.length; i++) worst = Math.max(worst, Math.abs((out[i] as number) - (ref[i] as number)));
    expect(peak).toBeGreaterThan(1e-3);
    expect(worst / peak).toBeLessThan(1.5e-3);
    // The peak amplitude the magnitude reads agrees more closely still.
    expect(Math.abs(peakAmplitude(out, fs).amplitude / peak - 1)).toBeLessThan(1e-3);
  });
});

describe('simulated steady-state sines have the analytic amplitude response (common practice check)', () => {
  const fs = 100;
  const n = 6000;
  for (const f of [0.3, 0.8, 1.25, 2, 4.7, 10, 20]) {
    it(`${f} Hz at 100 sps: fitted output amplitude = |H_v(f)|·A to 1e-4`, () => {
      const a = 1e-5;
      const x = Float64Array.from({ length: n }, (_, i) => a * Math.sin(2 * Math.PI * f * (i / fs) + 0.3));
      const y = simulateWoodAnderson(x, fs, 'velocity');
      // Least-squares fit of sin and cos at f over the middle third (transients of both ends gone).
      let ss = 0;
      let cc = 0;
      let sc = 0;
      let ys = 0;
      let yc = 0;
      for (let i = 2000; i < 4000; i++) {
        const s = Math.sin(2 * Math.PI * f * (i / fs));
        const c = Math.cos(2 * Math.PI * f * (i / fs));
        ss += s * s;
        cc += c * c;
        sc += s * c;
        ys += (y[i] as number) * s;
        yc += (y[i] as number) * c;
      }
      const det = ss * cc - sc * sc;
      const bs = (ys * cc - yc * sc) / det;
      const bc = (yc * ss - ys * sc) / det;
      const expected = abs(woodAndersonResponse(f, 'velocity')) * a * 1000;
      expect(Math.abs(Math.hypot(bs, bc) / expected - 1)).toBeLessThan(1e-4);
    });
  }
  it('displacement input uses H_d: a 2 Hz, 1 µm sine gives |H_d(2 Hz)|·1 µm on the drum', () => {
    const x = Float64Array.from({ length: n }, (_, i) => 1e-6 * Math.cos(2 * Math.PI * 2 * (i / fs)));
    const y = simulateWoodAnderson(x, fs, 'displacement');
    const amp = peakAmplitude(y, fs, 2000, 4000);
    expect(Math.abs(amp.amplitude / (abs(woodAndersonResponse(2, 'displacement')) * 1e-3) - 1)).toBeLessThan(2e-3);
  });
  it('the period read at the peak of a 2 Hz burst is 0.5 s', () => {
    const x = Float64Array.from({ length: n }, (_, i) => 1e-6 * Math.exp(-(((i / fs - 30) / 6) ** 2)) * Math.cos(2 * Math.PI * 2 * (i / fs)));
    const amp = peakAmplitude(simulateWoodAnderson(x, fs, 'displacement'), fs);
    expect(Math.abs(amp.timeS - 30)).toBeLessThan(0.3);
    expect(amp.periodS).toBeCloseTo(0.5, 3);
  });
  it('does not modify its input, and refuses an empty trace, a bad rate or a NaN sample', () => {
    const x = Float64Array.from([1, 2, 3, 4]);
    simulateWoodAnderson(x, 100);
    expect(Array.from(x)).toEqual([1, 2, 3, 4]);
    expect(() => simulateWoodAnderson(new Float64Array(0), 100)).toThrow('the trace has no samples');
    expect(() => simulateWoodAnderson(x, 0)).toThrow('sample rate must be > 0 Hz, got 0');
    expect(() => simulateWoodAnderson(Float64Array.from([1, Number.NaN]), 100)).toThrow('sample 1 is not a finite number');
  });
});

describe('peak amplitude and its period (hand-worked)', () => {
  it('largest |x| wins whatever its sign; period from the zero crossings around it', () => {
    // Half-cycle from index 3 to 7 (crossings at 2.5 and 7.5 by linear interpolation) → period 10 samples.
    const x = Float64Array.from([0.1, 0.2, 0.1, -1, -3, -5, -2, -1, 1, 0.5]);
    const p = peakAmplitude(x, 10);
    expect(p.amplitude).toBe(5);
    expect(p.index).toBe(5);
    expect(p.timeS).toBeCloseTo(0.5, 12);
    // Crossing before: between 0.1 (i=2) and −1 (i=3): 2 + 0.1/1.1; after: between −1 (i=7) and 1 (i=8): 7.5.
    expect(p.periodS).toBeCloseTo((2 * (7.5 - (2 + 0.1 / 1.1))) / 10, 12);
  });
  it('a window restricts the search; no crossing on a side gives no period; bad windows throw', () => {
    const x = Float64Array.from([9, 1, 2, 3, 2, 1]);
    expect(peakAmplitude(x, 1, 1).amplitude).toBe(3);
    expect(peakAmplitude(x, 1, 1).periodS).toBeNull();
    expect(() => peakAmplitude(x, 1, 4, 4)).toThrow('window [4, 4) is empty or outside the trace of 6 samples');
    expect(() => peakAmplitude(x, 1, 0, 7)).toThrow('outside the trace');
  });
});

describe('−log A0 of Hutton & Boore (1987): the published formula evaluated at tabulated distances', () => {
  // 1.110·log10(r/100) + 0.00189·(r − 100) + 3.0, worked out by hand (e.g. r = 10: −1.110 − 0.1701 + 3 = 1.7199).
  const table: Array<[number, number]> = [
    [10, 1.7199], [17, 1.98892830], [50, 2.57135670], [100, 3.0], [200, 3.52314330], [300, 3.90760459], [500, 4.53185670], [700, 5.07205882],
  ];
  for (const [r, v] of table) {
    it(`r = ${r} km → ${v}`, () => {
      expect(minusLogA0HuttonBoore(r)).toBeCloseTo(v, 7);
    });
  }
  it('Richter’s definition: 1 mm on a Wood-Anderson at 100 km is ML 3.0 (Richter 1935)', () => {
    expect(localMagnitude(1, 100)).toBe(3);
    expect(localMagnitude(10, 100)).toBeCloseTo(4, 12);
    expect(localMagnitude(0.01, 100)).toBeCloseTo(1, 12);
  });
  it('station corrections add; another distance law can be given', () => {
    expect(localMagnitude(1, 100, { stationCorrection: -0.15 })).toBeCloseTo(2.85, 12);
    expect(localMagnitude(1, 100, { minusLogA0: () => 2.5 })).toBe(2.5);
  });
  it('refuses a zero amplitude or a non-positive distance; notes extrapolated distances', () => {
    expect(() => localMagnitude(0, 50)).toThrow('amplitude must be a finite number > 0 mm, got 0');
    expect(() => minusLogA0HuttonBoore(0)).toThrow('hypocentral distance must be a finite number > 0 km, got 0');
    expect(() => localMagnitude(1, 50, { stationCorrection: Number.NaN })).toThrow('station correction must be a finite number');
    expect(distanceNote(5)).toMatch(/outside 10–700 km/);
    expect(distanceNote(50)).toBeNull();
  });
});

describe('station and network ML (the issue’s rules; hand-worked)', () => {
  it('station ML is the mean of its horizontals', () => {
    const s = stationMagnitude([1, 100], 100);
    expect(s.channelValues).toEqual([3, 5]);
    expect(s.value).toBe(4);
    expect(() => stationMagnitude([], 100)).toThrow('at least one horizontal amplitude');
  });
  it('network ML is the median with 1.4826·MAD; one wild station barely moves it', () => {
    // Values 2.0, 2.1, 2.2, 2.3, 4.0: median 2.2; deviations 0.2, 0.1, 0, 0.1, 1.8 → MAD 0.1.
    const m = networkMagnitude([2.3, 2.0, 4.0, 2.2, 2.1]);
    expect(m.type).toBe('ML');
    expect(m.value).toBeCloseTo(2.2, 12);
    expect(m.uncertainty).toBeCloseTo(0.14826, 12);
    expect(m.stationCount).toBe(5);
    // Sample standard deviation: mean 2.52; Σ(v − mean)² = 0.2704 + 0.1764 + 0.1024 + 0.0484 + 2.1904
    // = 2.788 → √(2.788/4) = 0.83487.
    expect(m.standardDeviation).toBeCloseTo(Math.sqrt(2.788 / 4), 12);
    expect(m.method).toBe('median of 5 station MLs; uncertainty 1.4826 × median absolute deviation');
  });
  it('two stations: the mean and half their difference × 1.4826; one station: no spread', () => {
    const two = networkMagnitude([1.0, 1.6]);
    expect(two.value).toBeCloseTo(1.3, 12);
    expect(two.uncertainty).toBeCloseTo(0.3 * 1.4826, 12);
    const one = networkMagnitude([2.5]);
    expect(one).toEqual({ type: 'ML', value: 2.5, uncertainty: null, standardDeviation: null, stationCount: 1, method: 'median of 1 station ML; uncertainty 1.4826 × median absolute deviation' });
    expect(() => networkMagnitude([])).toThrow('no station magnitudes');
    expect(() => networkMagnitude([1, Number.NaN])).toThrow('station magnitude 2 is not a finite number');
  });
});

describe('end to end: a velocity trace whose Wood-Anderson amplitude is 1 mm, 100 km away, is ML 3.0', () => {
  it('2 Hz sine of amplitude 1 mm / |H_v(2 Hz)| m/s on both horizontals → ML 3.00 ± 0.005', () => {
    const fs = 100;
    const v = 1e-3 / abs(woodAndersonResponse(2, 'velocity'));
    const trace = Float64Array.from({ length: 6000 }, (_, i) => v * Math.sin(2 * Math.PI * 2 * (i / fs)));
    const waN = simulateWoodAnderson(trace, fs);
    const amp = peakAmplitude(waN, fs, 1000, 5000);
    expect(amp.amplitude).toBeCloseTo(1, 2);
    const st = stationMagnitude([amp.amplitude, amp.amplitude], 100);
    expect(Math.abs(st.value - 3)).toBeLessThan(0.005);
  });
});
