import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { butterworthSos } from '../../../server/dsp/butterworth';
import { sosfilt } from '../../../server/dsp/sosfilt';
import { classicStaLta, delayedStaLta, detectTriggers, peakOf, recursiveStaLta, snrAroundTrigger } from '../../../server/dsp/sta-lta';
import { makeSignal, maxAbsDiff, readFixture, signalSpecSchema } from './fixture-signal';

const trig = z.array(z.tuple([z.number(), z.number().nullable()]));
const hand = z.object({
  y: z.array(z.number()),
  fs: z.number(),
  staS: z.number(),
  ltaS: z.number(),
  startIndex: z.number().int(),
  minLtaSamples: z.number().int(),
  classic: z.array(z.number()),
  recursive: z.array(z.number()),
});
const fixture = readFixture(
  'sta-lta.json',
  z.object({
    cases: z.array(
      z.object({
        signal: signalSpecSchema,
        first: z.array(z.number()),
        staS: z.number(),
        ltaS: z.number(),
        on: z.number(),
        off: z.number(),
        stride: z.number(),
        classic: z.array(z.number()),
        recursive: z.array(z.number()),
        classicPeak: z.number(),
        classicPeakTime: z.number(),
        recursivePeak: z.number(),
        classicTriggers: trig,
        recursiveTriggers: trig,
      }),
    ),
    delayedHand: hand,
    delayedStep: hand,
    delayed: z.array(
      z.object({
        signal: signalSpecSchema,
        first: z.array(z.number()),
        staS: z.number(),
        ltaS: z.number(),
        startIndex: z.number().int(),
        minLtaSamples: z.number().int(),
        on: z.number(),
        off: z.number(),
        stride: z.number().int(),
        classic: z.array(z.number()),
        recursive: z.array(z.number()),
        classicPeak: z.number(),
        classicPeakTime: z.number(),
        recursivePeak: z.number(),
        recursivePeakTime: z.number(),
        classicTriggers: trig,
        recursiveTriggers: trig,
      }),
    ),
  }),
);

describe('STA/LTA against the numpy reference in fixtures/dsp/make-scipy-fixtures.py', () => {
  for (const c of fixture.cases) {
    const fs = c.signal.fs;
    const x = makeSignal(c.signal);
    const y = sosfilt(butterworthSos(4, [2, 10], 'bandpass', fs), x);
    it(`classic (the brief's definition, numpy cumsum) at ${fs} Hz: ratio to 1e-9, same peak and triggers`, () => {
      expect(maxAbsDiff(x.slice(0, c.first.length), c.first)).toBeLessThan(1e-12);
      const r = classicStaLta(y, fs, c.staS, c.ltaS);
      expect(maxAbsDiff(c.classic.map((_, k) => r[k * c.stride] as number), c.classic)).toBeLessThan(1e-9);
      const p = peakOf(r, fs);
      expect(p.peak).toBeCloseTo(c.classicPeak, 9);
      expect(p.peakTime).toBe(c.classicPeakTime);
      const t = detectTriggers(r, fs, c.on, c.off).map((g) => [g.on, g.off]);
      expect(t).toEqual(c.classicTriggers);
      expect(c.classicTriggers.length).toBeGreaterThan(0); // the burst must trigger: a check that can fail
      // zero until the LTA window is full (index nlta − 1)
      const nlta = Math.round(c.ltaS * fs);
      expect(Math.max(...r.slice(0, nlta - 1))).toBe(0);
      expect(r[nlta - 1]).toBeGreaterThan(0);
    });
    it(`recursive (Withers et al. 1998 recurrence, numpy loop) at ${fs} Hz: ratio to 1e-9, same triggers`, () => {
      const r = recursiveStaLta(y, fs, c.staS, c.ltaS);
      expect(maxAbsDiff(c.recursive.map((_, k) => r[k * c.stride] as number), c.recursive)).toBeLessThan(1e-9);
      expect(peakOf(r, fs).peak).toBeCloseTo(c.recursivePeak, 9);
      expect(detectTriggers(r, fs, c.on, c.off).map((g) => [g.on, g.off])).toEqual(c.recursiveTriggers);
    });
  }
});

describe('STA/LTA hand-worked cases', () => {
  it('constant squares give ratio 1 once the LTA is full (fs 1 Hz, STA 2 s, LTA 4 s)', () => {
    const r = classicStaLta(Float64Array.from([1, -1, 1, -1, 1, -1]), 1, 2, 4);
    expect(Array.from(r)).toEqual([0, 0, 0, 1, 1, 1]);
  });
  it('a step: STA over the last 2 of [0,0,0,2,2] = 4, LTA over last 4 = 2 → ratio 2 at the end', () => {
    const r = classicStaLta(Float64Array.from([0, 0, 0, 2, 2]), 1, 2, 4);
    expect(r[4]).toBe(2);
  });
  it('triggers: on above 3.5, off below 1.5, times from the first sample; still on at the end gives off null', () => {
    const r = Float64Array.from([0, 1, 4, 5, 2, 1, 0, 4, 4]);
    expect(detectTriggers(r, 2, 3.5, 1.5).map((t) => [t.on, t.off])).toEqual([
      [1, 2.5],
      [3.5, null],
    ]);
    expect(() => detectTriggers(r, 2, 1.5, 3.5)).toThrow(/below the trigger-on/);
  });
  it('running sums do not drift after a huge burst: equals a direct windowed mean on a long trace', () => {
    const fs = 20;
    const n = 40_000;
    const y = Float64Array.from({ length: n }, (_, i) => Math.sin(i * 0.7) * (i > 5000 && i < 5200 ? 1e7 : 1));
    const r = classicStaLta(y, fs, 1, 30);
    const nsta = 20;
    const nlta = 600;
    for (const i of [nlta - 1, 5100, 5900, 20_000, 32_768, n - 1]) {
      let s = 0;
      let l = 0;
      for (let j = i - nlta + 1; j <= i; j++) {
        l += (y[j] as number) ** 2;
        if (j > i - nsta) s += (y[j] as number) ** 2;
      }
      expect(Math.abs((r[i] as number) - (s / nsta) / (l / nlta)), `at ${i}`).toBeLessThan(1e-6 * Math.max(1, (s / nsta) / (l / nlta)));
    }
  });

  it('refuses an STA window not shorter than the LTA', () => {
    expect(() => classicStaLta(new Float64Array(10), 1, 4, 4)).toThrow(/shorter than the LTA/);
  });
  it('SNR = RMS after the trigger ÷ RMS before (hand-worked: noise 1, signal 3 → 3)', () => {
    const y = Float64Array.from([1, -1, 1, -1, 3, -3, 3, -3]);
    expect(snrAroundTrigger(y, 1, 4, 4, 4)).toBe(3);
    expect(snrAroundTrigger(y, 1, null, 4, 4)).toBeNull();
  });
});

describe('delayedStaLta (LTA before the STA, expanding from startIndex): hand-worked and against numpy', () => {
  const h = fixture.delayedHand;
  const y = Float64Array.from(h.y);
  const opts = { startIndex: h.startIndex, minLtaSamples: h.minLtaSamples };

  it('classic, hand-worked (fs 1 Hz, STA 2, LTA 4, start 1, minLta 2; squares 81 | 1 1 1 1 1 9 9 1 1)', () => {
    // i = 1…3: the LTA [1, i − 2] holds < 2 samples → 0 (and sample 0 is never read: before startIndex).
    // i = 4: STA mean(s3, s4) = 1, LTA mean(s1, s2) = 1 (expanding) → 1;  i = 5 → 1.
    // i = 6: STA (1 + 9)/2 = 5, LTA mean(s1…s4) = 1 → 5;  i = 7: STA 9, LTA mean(s2…s5) = 1 → 9.
    // i = 8: STA 5, LTA (1 + 1 + 1 + 9)/4 = 3 → 5/3;  i = 9: STA 1, LTA (1 + 1 + 9 + 9)/4 = 5 → 0.2.
    const want = [0, 0, 0, 0, 1, 1, 5, 9, 5 / 3, 0.2];
    const r = delayedStaLta(y, h.fs, h.staS, h.ltaS, 'classic', opts);
    expect(maxAbsDiff(r, want)).toBeLessThan(1e-12);
    // Independent numpy computation (make-scipy-fixtures.py `delayed_sta_lta`, direct window means):
    expect(maxAbsDiff(r, h.classic)).toBeLessThan(1e-12);
    // 9 > nlta/nsta = 2, the ceiling of the overlapping form on the same input:
    expect(Math.max(...classicStaLta(y, h.fs, h.staS, h.ltaS))).toBeLessThanOrEqual(h.ltaS / h.staS);
  });

  it('recursive, hand-worked (c = 1/min(k, N), the LTA fed s_{i−nsta})', () => {
    // STA: 1, 1, 1, 1, 1, 5, 7, 4, 2.5 (i = 1…9); LTA from i = 3: 1, 1, 1, 1, 1 (k = 4 from i = 6), 3, 4.5.
    // Ratio once the LTA holds ≥ 2 samples (i ≥ 4): 1, 1, 5, 7, 4/3, 2.5/4.5.
    const want = [0, 0, 0, 0, 1, 1, 5, 7, 4 / 3, 2.5 / 4.5];
    const r = delayedStaLta(y, h.fs, h.staS, h.ltaS, 'recursive', opts);
    expect(maxAbsDiff(r, want)).toBeLessThan(1e-12);
    expect(maxAbsDiff(r, h.recursive)).toBeLessThan(1e-12);
  });

  it('no ceiling: ±1 then ±10 from sample 30 gives 50.5 then 100 (= 10²) with STA 2 / LTA 10, far above nlta/nsta = 5', () => {
    const c = fixture.delayedStep;
    const x = Float64Array.from(c.y);
    const o = { startIndex: c.startIndex, minLtaSamples: c.minLtaSamples };
    const r = delayedStaLta(x, c.fs, c.staS, c.ltaS, 'classic', o);
    // i = 30: STA (1 + 100)/2 = 50.5 over an LTA of 1; i = 31: STA 100 → 100.
    expect(r[30]).toBe(50.5);
    expect(r[31]).toBe(100);
    expect(maxAbsDiff(r, c.classic)).toBeLessThan(1e-12);
    expect(maxAbsDiff(delayedStaLta(x, c.fs, c.staS, c.ltaS, 'recursive', o), c.recursive)).toBeLessThan(1e-12);
    expect(Math.max(...classicStaLta(x, c.fs, c.staS, c.ltaS))).toBeLessThanOrEqual(c.ltaS / c.staS);
  });

  it('0 before startIndex and until the LTA holds minLtaSamples; then non-zero on noise (the expanding start)', () => {
    const noise = makeSignal({ n: 400, fs: 100, noise: 1, seed: 3 });
    for (const method of ['classic', 'recursive'] as const) {
      const r = delayedStaLta(noise, 100, 0.1, 1, method, { startIndex: 50, minLtaSamples: 25 });
      // the LTA ends at i − 10 and starts at 50: it holds i − 59 samples, ≥ 25 from i = 84
      expect(Math.max(...r.slice(0, 84)), method).toBe(0);
      expect(r[84] as number, method).toBeGreaterThan(0);
      expect(Math.min(...r.slice(84)), method).toBeGreaterThan(0);
    }
  });

  it('refuses bad windows and options with a message', () => {
    const x = new Float64Array(20).fill(1);
    expect(() => delayedStaLta(x, 1, 4, 4, 'classic', { startIndex: 0, minLtaSamples: 1 })).toThrow(/shorter than the LTA/);
    expect(() => delayedStaLta(x, 1, 1, 4, 'classic', { startIndex: -1, minLtaSamples: 1 })).toThrow(/startIndex -1 must be a whole number/);
    expect(() => delayedStaLta(x, 1, 1, 4, 'recursive', { startIndex: 0, minLtaSamples: 0 })).toThrow(/minLtaSamples 0 must be a whole number/);
  });

  for (const c of fixture.delayed) {
    const fs = c.signal.fs;
    for (const method of ['classic', 'recursive'] as const) {
      it(`${method} at ${fs} Hz on a filtered constructed signal (bursts at 4 s and later) against numpy: ratio to 1e-9, same peak and triggers`, () => {
        const x = makeSignal(c.signal);
        expect(maxAbsDiff(x.slice(0, c.first.length), c.first)).toBeLessThan(1e-12);
        const yy = sosfilt(butterworthSos(4, [2, 10], 'bandpass', fs), x);
        const r = delayedStaLta(yy, fs, c.staS, c.ltaS, method, { startIndex: c.startIndex, minLtaSamples: c.minLtaSamples });
        const want = c[method];
        expect(maxAbsDiff(want.map((_, k) => r[k * c.stride] as number), want)).toBeLessThan(1e-9);
        const p = peakOf(r, fs);
        expect(p.peak).toBeCloseTo(method === 'classic' ? c.classicPeak : c.recursivePeak, 9);
        expect(p.peakTime).toBe(method === 'classic' ? c.classicPeakTime : c.recursivePeakTime);
        const t = detectTriggers(r, fs, c.on, c.off).map((g) => [g.on, g.off]);
        const wantT = method === 'classic' ? c.classicTriggers : c.recursiveTriggers;
        expect(t).toEqual(wantT);
        // the burst 4 s into the window triggers (a classic 30 s LTA is 0 until 30 s): a check that can fail
        expect((wantT[0]?.[0] as number) < 6).toBe(true);
      });
    }
  }
});
