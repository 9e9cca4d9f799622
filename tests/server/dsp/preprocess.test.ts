import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { demean, detrendLinear, preprocessTrace, tukeyWindow } from '@server/dsp/preprocess';
import { makeSignal, maxAbsDiff, readFixture, signalSpecSchema } from './fixture-signal';

const fixture = readFixture(
  'preprocess.json',
  z.object({
    tukey: z.array(z.object({ n: z.number(), alpha: z.number(), indices: z.array(z.number()).optional(), w: z.array(z.number()) })),
    detrend: z.object({
      signal: signalSpecSchema,
      first: z.array(z.number()),
      stride: z.number(),
      linear: z.array(z.number()),
      constant: z.array(z.number()),
    }),
  }),
);

describe('Tukey taper against scipy.signal.windows.tukey (fixtures/dsp/preprocess.json)', () => {
  for (const t of fixture.tukey) {
    it(`tukey(${t.n}, ${t.alpha}) to 1e-12`, () => {
      const w = tukeyWindow(t.n, t.alpha);
      const got = t.indices ? t.indices.map((i) => w[i] as number) : Array.from(w);
      expect(maxAbsDiff(got, t.w)).toBeLessThan(1e-12);
    });
  }
  it('refuses a negative length', () => {
    expect(() => tukeyWindow(-1, 0.1)).toThrow(/whole number/);
  });
});

describe('detrend against scipy.signal.detrend (fixtures/dsp/preprocess.json)', () => {
  const d = fixture.detrend;
  const x = makeSignal(d.signal);
  it('builds the same input', () => {
    expect(maxAbsDiff(x.slice(0, d.first.length), d.first)).toBeLessThan(1e-12);
  });
  it("linear: least squares line removed, to 1e-9 (scipy detrend(type='linear'))", () => {
    const y = detrendLinear(x);
    expect(maxAbsDiff(d.linear.map((_, k) => y[k * d.stride] as number), d.linear)).toBeLessThan(1e-9);
  });
  it("constant: mean removed, to 1e-9 (scipy detrend(type='constant'))", () => {
    const y = demean(x);
    expect(maxAbsDiff(d.constant.map((_, k) => y[k * d.stride] as number), d.constant)).toBeLessThan(1e-9);
  });
  it('preprocessTrace = linear detrend × tukey(n, α), and leaves its input alone', () => {
    const copy = Float64Array.from(x);
    const y = preprocessTrace(x, 0.1);
    const w = tukeyWindow(x.length, 0.1);
    const ref = detrendLinear(x).map((v, i) => v * (w[i] as number));
    expect(maxAbsDiff(y, ref)).toBeLessThan(1e-12);
    expect(maxAbsDiff(x, copy)).toBe(0);
  });
  it('hand-worked: a straight line detrends to zero; empty input is refused', () => {
    expect(maxAbsDiff(detrendLinear(Float64Array.from([3, 5, 7, 9])), [0, 0, 0, 0])).toBeLessThan(1e-15);
    expect(() => detrendLinear(new Float64Array(0))).toThrow(/no samples/);
    expect(() => preprocessTrace(new Float64Array(0), 0.1)).toThrow(/no samples/);
  });
});
