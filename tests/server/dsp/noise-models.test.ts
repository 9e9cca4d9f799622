import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { nhnmDb, nlnmDb, noiseModelBreakpoints, noiseModelPosition } from '@server/dsp/noise-models';

/**
 * The published copy the table is checked against: Peterson's models as tabulated by ObsPy
 * (obspy/signal/data/noise_models.npz, LGPL-3.0), 101 of its 1001 periods copied into
 * tests/fixtures/dsp/peterson-models.json by make-peterson-fixture.py (source and commit inside).
 */
const publishedSchema = z.object({
  source: z.string(),
  commit: z.string().regex(/^[0-9a-f]{40}$/u),
  values: z.array(z.object({ periodS: z.number(), nlnmDb: z.number(), nhnmDb: z.number() })).min(20),
});
const published = publishedSchema.parse(JSON.parse(readFileSync(join(import.meta.dirname, '../../fixtures/dsp/peterson-models.json'), 'utf8')));

describe('Peterson (1993) NLNM / NHNM (USGS OFR 93-322) against a published tabulation (ObsPy noise_models.npz)', () => {
  it('matches the published values at 101 periods from 0.1 s to 100 000 s within 0.001 dB (they are stored to 6 significant digits)', () => {
    let worst = 0;
    for (const v of published.values) {
      const lo = nlnmDb(v.periodS);
      const hi = nhnmDb(v.periodS);
      expect(lo, `NLNM at ${v.periodS} s`).not.toBeNull();
      expect(hi, `NHNM at ${v.periodS} s`).not.toBeNull();
      expect(Math.abs((lo as number) - v.nlnmDb), `NLNM at ${v.periodS} s: ${lo} vs ${v.nlnmDb}`).toBeLessThan(1e-3);
      expect(Math.abs((hi as number) - v.nhnmDb), `NHNM at ${v.periodS} s: ${hi} vs ${v.nhnmDb}`).toBeLessThan(1e-3);
      worst = Math.max(worst, Math.abs((lo as number) - v.nlnmDb), Math.abs((hi as number) - v.nhnmDb));
    }
    // Both ends and the microseism band are among the checked periods.
    const periods = published.values.map((v) => v.periodS);
    expect(Math.min(...periods)).toBe(0.1);
    expect(Math.max(...periods)).toBe(100000);
    expect(periods.some((p) => p > 4 && p < 10)).toBe(true);
    console.log(`Peterson models vs ${published.source} @ ${published.commit.slice(0, 10)}: worst difference ${worst.toFixed(5)} dB over ${published.values.length} periods`);
  });
  it('every segment of both tables holds at least one published period, so a mistyped A or B anywhere fails the check above', () => {
    for (const [name, bps] of [
      ['NLNM', noiseModelBreakpoints.nlnm],
      ['NHNM', noiseModelBreakpoints.nhnm],
    ] as const) {
      const ends = [...bps, Number.POSITIVE_INFINITY];
      bps.forEach((p, k) => {
        const next = ends[k + 1] as number;
        expect(published.values.some((v) => v.periodS >= p && v.periodS < next), `${name} segment from ${p} s`).toBe(true);
      });
    }
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
