import { describe, expect, it } from 'vitest';
import { nhnmDb, nlnmDb, noiseModelBreakpoints, noiseModelPosition } from '@server/dsp/noise-models';

describe('Peterson (1993) NLNM / NHNM (USGS OFR 93-322; values from memory of the published tables)', () => {
  it('known values at a few periods (from memory)', () => {
    // T = 1 s lies in the NLNM segment from 0.8 s (A = −166.40, B = 28.90): −166.4 dB.
    expect(nlnmDb(1)).toBeCloseTo(-166.4, 6);
    // T = 10 s: −132.18 − 31.57·1 = −163.75 dB (NLNM microseism region).
    expect(nlnmDb(10)).toBeCloseTo(-163.75, 6);
    // T = 100 s: −216.47 + 15.70·2 = −185.07 dB.
    expect(nlnmDb(100)).toBeCloseTo(-185.07, 6);
    // NHNM at T = 1 s: −116.85 + 32.51·0 = −116.85 dB; at 0.1 s: −108.73 + 17.23 = −91.50 dB.
    expect(nhnmDb(1)).toBeCloseTo(-116.85, 6);
    expect(nhnmDb(0.1)).toBeCloseTo(-91.5, 6);
  });
  it('both models are continuous at their breakpoints (within 0.3 dB): a mistyped coefficient would break this', () => {
    for (const [model, bps] of [
      [nlnmDb, noiseModelBreakpoints.nlnm],
      [nhnmDb, noiseModelBreakpoints.nhnm],
    ] as const) {
      for (const p of bps.slice(1)) {
        const left = model(p * (1 - 1e-9)) as number;
        const right = model(p) as number;
        expect(Math.abs(left - right), `at ${p} s`).toBeLessThan(0.3);
      }
    }
  });
  it('NHNM lies above NLNM everywhere in 0.1 … 100 000 s, and both are null outside', () => {
    for (let lt = -1; lt <= 5; lt += 0.01) {
      const t = 10 ** lt;
      expect(nhnmDb(t) as number).toBeGreaterThan(nlnmDb(t) as number);
    }
    expect(nlnmDb(0.05)).toBeNull();
    expect(nhnmDb(2e5)).toBeNull();
  });
  it('position: at the NLNM → 0, at the NHNM → 1, halfway → 0.5', () => {
    const f = [0.5, 1, 2];
    const lo = f.map((x) => nlnmDb(1 / x) as number);
    const hi = f.map((x) => nhnmDb(1 / x) as number);
    expect(noiseModelPosition(f, lo).median).toBeCloseTo(0, 12);
    expect(noiseModelPosition(f, hi).median).toBeCloseTo(1, 12);
    const mid = noiseModelPosition(f, lo.map((v, i) => (v + (hi[i] as number)) / 2));
    expect(mid.median).toBeCloseTo(0.5, 12);
    expect(noiseModelPosition(f, lo.map((v) => v - 10)).belowLow).toBe(1);
  });
});
