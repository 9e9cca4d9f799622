import { describe, expect, it } from 'vitest';
import { DISPLAY_TOLERANCE, roundCurveForDisplay, roundForDisplay, roundToDecimals } from '@server/dsp/display-precision';

/**
 * The display rounding of traces sent for drawing (server/dsp/display-precision.ts). Reference:
 * decimal rounding as ECMA-262 defines it for Number.prototype.toPrecision and toFixed (the
 * language standard, not our code), and the stated bound |rounded − exact| ≤ peak × 0.05 %.
 */
describe('display precision', () => {
  // A curve with an irrational-looking spread of values around a peak of 3.14159265 (counts).
  const curve = Array.from({ length: 500 }, (_, i) => Math.sin(i * 0.37) * Math.PI * Math.exp(-((i - 250) ** 2) / 20_000));
  const peak = Math.max(...curve.map(Math.abs));

  it('roundForDisplay: 4 significant digits at the peak, each value within peak × DISPLAY_TOLERANCE', () => {
    const r = roundForDisplay(curve);
    // The peak near 3.14: steps of 10^(0 − 3) = 0.001, so every value prints with at most 3 decimals (toFixed(3)).
    r.forEach((v, i) => {
      expect(Number(v.toFixed(3))).toBe(v);
      expect(Math.abs(v - (curve[i] as number))).toBeLessThanOrEqual(peak * DISPLAY_TOLERANCE);
    });
  });

  it('roundCurveForDisplay: the same, except the peak sample keeps its exact value', () => {
    const r = roundCurveForDisplay(curve);
    const at = curve.findIndex((v) => Math.abs(v) === peak);
    expect(r[at]).toBe(curve[at]);
    // toPrecision(4) of the exact peak is what plain rounding would have sent instead.
    expect(roundForDisplay(curve)[at]).toBe(Number((curve[at] as number).toPrecision(4)));
    r.forEach((v, i) => {
      if (i !== at) expect(v).toBe(roundForDisplay(curve)[i]);
      expect(Math.abs(v - (curve[i] as number))).toBeLessThanOrEqual(peak * DISPLAY_TOLERANCE);
    });
    // The input is not mutated; an all-zero curve stays as it is.
    expect(curve[at]).toBe(peak * Math.sign(curve[at] as number));
    expect(roundCurveForDisplay([0, 0, 0])).toEqual([0, 0, 0]);
    expect(roundCurveForDisplay([])).toEqual([]);
  });

  it('roundToDecimals: as toFixed(decimals) for values clear of a tie, within half a step always', () => {
    const times = Array.from({ length: 300 }, (_, i) => 0.123 + i / 3);
    const r = roundToDecimals(times, 6);
    r.forEach((v, i) => {
      expect(v).toBe(Number((times[i] as number).toFixed(6)));
      expect(Math.abs(v - (times[i] as number))).toBeLessThanOrEqual(0.5e-6 + 1e-15);
    });
    // Levels in dB to 0.01 dB; the engine's −400 dB floor stays exactly −400.
    expect(roundToDecimals([-400, -123.456789, 12.3449], 2)).toEqual([-400, -123.46, 12.34]);
    expect(roundToDecimals([Number.NaN, 1.5], 0)[0]).toBeNaN();
    expect(() => roundToDecimals([1], 16)).toThrow(RangeError);
  });
});
