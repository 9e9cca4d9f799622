import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { aicOnsetIndex } from '@server/dsp/aic-picker';
import { makeSignal, maxAbsDiff, readFixture, signalSpecSchema } from './fixture-signal';

/**
 * Onset by the Akaike information criterion on the trace (Maeda 1985, Zisin 38: 365–379):
 * AIC(k) = k·ln var(x[f, f+k)) + (N − k)·ln var(x[f+k, t)); the onset is f + argmin.
 * Check values: hand-worked below, and numpy (make-scipy-fixtures.py `aic_onset`, np.var per split).
 */
const fixture = readFixture(
  'sta-lta.json',
  z.object({
    aic: z.array(z.object({ x: z.array(z.number()), from: z.number().int(), to: z.number().int(), onset: z.number().int().nullable() })),
    aicNoise: z.object({ signal: signalSpecSchema, first: z.array(z.number()), from: z.number().int(), to: z.number().int(), onset: z.number().int() }),
  }),
);

/** ±1 for i < step, ±10 from step on (alternating sign): a variance step at `step`. */
const varianceStep = (n: number, step: number): Float64Array => Float64Array.from({ length: n }, (_, i) => (i < step ? 1 : 10) * (i % 2 ? -1 : 1));

describe('aicOnsetIndex (Maeda 1985)', () => {
  it('a variance step at a known index is found exactly, in any span holding it', () => {
    // Hand-worked for the span [100, 200) with the step at 137: at k = 37 both parts are pure
    // (variances 1 − 1/37² and 100): AIC = 37·ln(0.99927) + 63·ln 100 = 290.08; one sample either way
    // mixes a ±10 into the first part (k = 38: var 3.55, AIC ≈ 333.7) or a ±1 into the second (k = 36: ≈ 293.7).
    const x = varianceStep(260, 137);
    expect(aicOnsetIndex(x, 100, 200)).toBe(137);
    expect(aicOnsetIndex(x, 0, 260)).toBe(137);
    expect(aicOnsetIndex(x, 87, 187)).toBe(137);
    for (const c of fixture.aic) {
      expect(maxAbsDiff(c.x, x)).toBe(0);
      expect(aicOnsetIndex(Float64Array.from(c.x), c.from, c.to)).toBe(c.onset);
    }
  });

  it('a burst in seeded noise (constructed): the same onset as numpy', () => {
    const c = fixture.aicNoise;
    const x = makeSignal(c.signal);
    expect(maxAbsDiff(x.slice(0, c.first.length), c.first)).toBeLessThan(1e-12);
    expect(aicOnsetIndex(x, c.from, c.to)).toBe(c.onset);
    // the burst starts at 5 s = sample 500 with a sin² rise: the onset is within its first 0.5 s
    expect(c.onset).toBeGreaterThanOrEqual(500);
    expect(c.onset).toBeLessThan(550);
  });

  it('a large offset does not change the onset (prefix sums about the span mean)', () => {
    const x = varianceStep(260, 137).map((v) => v + 1e9);
    expect(aicOnsetIndex(x, 100, 200)).toBe(137);
  });

  it('a constant span, or one shorter than 2·minPart, gives null', () => {
    expect(aicOnsetIndex(new Float64Array(100).fill(3), 0, 100)).toBeNull();
    expect(aicOnsetIndex(varianceStep(100, 50), 40, 59)).toBeNull();
    expect(aicOnsetIndex(varianceStep(100, 50), 40, 60, 10)).toBe(50);
  });

  it('a span outside the trace throws, naming it', () => {
    const x = new Float64Array(50);
    expect(() => aicOnsetIndex(x, 0, 51)).toThrow(/AIC span \[0, 51\) must lie in the trace of 50 samples/);
    expect(() => aicOnsetIndex(x, -1, 20)).toThrow(RangeError);
    expect(() => aicOnsetIndex(x, 30, 20)).toThrow(RangeError);
    expect(() => aicOnsetIndex(x, 0.5, 20)).toThrow(RangeError);
  });
});
