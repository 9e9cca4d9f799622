import { describe, expect, it } from 'vitest';
import { delayedStaLta } from '@server/dsp/sta-lta';

/**
 * The running sums of `delayedStaLta` (its warm-up loop, its steady-state loop, the exact re-sums after
 * a huge burst and every 65 536 samples) against the formula in its doc comment evaluated directly:
 * STA_i = mean(y² over [max(a, i − nsta + 1), i]), LTA_i = mean(y² over [max(a, i − nsta − nlta + 1),
 * i − nsta]) — the STA/LTA ratio of Allen (1978) with the LTA window ending where the STA window begins
 * (the "delayed" arrangement; Trnkoczy 2012, IASPEI NMSOP-2 IS 8.1 — from memory).
 */
function direct(y: Float64Array, nsta: number, nlta: number, a: number, minLta: number, i: number): number {
  const mean = (from: number, to: number): number => {
    let s = 0;
    for (let j = from; j <= to; j++) s += (y[j] as number) ** 2;
    return s / (to - from + 1);
  };
  const ltaTo = i - nsta;
  const ltaFrom = Math.max(a, ltaTo - nlta + 1);
  if (ltaTo - ltaFrom + 1 < minLta) return 0;
  const lta = mean(ltaFrom, ltaTo);
  return lta > 0 ? mean(Math.max(a, i - nsta + 1), i) / lta : 0;
}

describe('delayedStaLta (classic) equals its formula evaluated directly', () => {
  it('on a 70 000-sample trace with a burst 10⁶ × the noise, through the warm-up, the steady state and the 65 536-sample re-sum', () => {
    const fs = 100;
    const n = 70_000;
    const y = new Float64Array(n);
    let s = 12345;
    for (let i = 0; i < n; i++) {
      s = (1664525 * s + 1013904223) % 4294967296;
      y[i] = s / 4294967296 - 0.5;
      if (i >= 20_000 && i < 20_300) y[i] = (y[i] as number) * 1e6;
    }
    const a = 75;
    const minLta = 125;
    const cf = delayedStaLta(y, fs, 1, 30, 'classic', { startIndex: a, minLtaSamples: minLta });
    const check = [0, a, a + 99, a + 100, a + 224, a + 225, 1000, 3174, 3175, 3176, 20_050, 20_400, 23_500, 23_700, 40_000, 65_610, 65_611, 65_612, 69_999];
    for (const i of check) {
      const want = direct(y, 100, 3000, a, minLta, i);
      if (i < a + 100 + minLta - 1) expect(cf[i]).toBe(0);
      else expect(Math.abs((cf[i] as number) - want)).toBeLessThanOrEqual(1e-9 * Math.max(1, want));
    }
    // Every sample of the steady state in a stretch right after the burst leaves the windows (where
    // cancellation in a running sum would show first).
    for (let i = 23_380; i < 23_420; i++) {
      const want = direct(y, 100, 3000, a, minLta, i);
      expect(Math.abs((cf[i] as number) - want)).toBeLessThanOrEqual(1e-9 * Math.max(1, want));
    }
  });
});
