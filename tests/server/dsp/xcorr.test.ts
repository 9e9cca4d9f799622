import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { decodeWaveform } from '@server/formats/decode';
import { matchBank, PreparedCache } from '@server/dsp/template-bank';
import { cutTemplate, matchingTraces } from '@server/dsp/templates';
import { normalizedXcorr, peakOfXcorr, xcorrAtLag } from '@server/dsp/xcorr';
import { processingProfileSchema } from '@shared/schemas/processing-profile';
import { lcgUniform } from './fixture-signal';

/**
 * Normalised multichannel cross-correlation (server/dsp/xcorr.ts) and the bank matcher
 * (template-bank.ts) against numpy/scipy: tests/fixtures/similar/xcorr.json, written by
 * tests/fixtures/similar/make-xcorr-fixtures.py (scipy.signal.correlate per component, norms summed
 * explicitly; real windows decoded by libmseed and band-passed with scipy.signal.butter + sosfilt).
 */

const here = import.meta.dirname;
const caseSchema = z.object({ name: z.string() }).loose();
const fixture = z.object({ scipy: z.string(), cases: z.array(caseSchema) }).parse(JSON.parse(readFileSync(join(here, '../../fixtures/similar/xcorr.json'), 'utf8')));
const byName = (name: string) => {
  const c = fixture.cases.find((k) => k.name === name || k.name.startsWith(name));
  if (!c) throw new Error(`fixture case ${name} missing`);
  return c;
};
const randomCase = z.object({ step: z.number(), values: z.array(z.number()), argmax: z.number(), max: z.number(), maxAbs: z.number() }).parse(byName('random'));
const delayedCase = z.object({ from: z.number(), m: z.number(), argmax: z.number(), max: z.number() }).parse(byName('delayed copy'));
const realCase = z.object({
  a: z.string(),
  b: z.string(),
  ids: z.array(z.string()),
  fs: z.number(),
  from: z.number(),
  m: z.number(),
  self: z.object({ argmax: z.number(), max: z.number() }),
  other: z.object({ argmax: z.number(), max: z.number(), step: z.number(), values: z.array(z.number()) }),
  templateFirst: z.array(z.number()),
});
const realCases = fixture.cases.filter((c) => c.name.startsWith('real ')).map((c) => ({ name: c.name, ...realCase.parse(c) }));

const noise = (seeds: number[], n: number) => seeds.map((s) => lcgUniform(s, n).map((v) => v - 0.5));
const profile = processingProfileSchema.parse({});

function realTraces(file: string) {
  const bytes = readFileSync(join(here, '../../fixtures/real-windows/windows', file));
  const streams = decodeWaveform(new Uint8Array(bytes), { filename: file }).sort((a, b) => a.id.localeCompare(b.id));
  return matchingTraces(streams.map((s) => ({ id: s.id, sampleRateHz: s.sampleRateHz, startTimeUs: s.startTimeUs, samples: s.samples })), profile);
}

describe('normalizedXcorr (FFT) against scipy.signal.correlate with explicit norms', () => {
  it(`random 3-component noise: every lag within 1e-9 of scipy ${fixture.scipy}`, () => {
    const x = noise([11, 12, 13], 3000);
    const w = noise([21, 22, 23], 400);
    const c = normalizedXcorr(w, x);
    expect(c.length).toBe(3000 - 400 + 1);
    randomCase.values.forEach((v, i) => expect(Math.abs((c[i * randomCase.step] as number) - v)).toBeLessThan(1e-9));
    const pk = peakOfXcorr(c);
    expect(pk.lag).toBe(randomCase.argmax);
    expect(pk.value).toBeCloseTo(randomCase.max, 9);
  });

  it('the FFT values equal the direct sums (the definition) at spot lags', () => {
    const x = noise([5, 6, 7], 1500);
    const w = noise([8, 9, 10], 300);
    const c = normalizedXcorr(w, x);
    for (const lag of [0, 1, 77, 600, 1200]) expect(Math.abs((c[lag] as number) - xcorrAtLag(w, x, lag))).toBeLessThan(1e-12);
  });

  it('a template correlated with itself gives 1.0 at lag 0 (and its own length: one lag)', () => {
    const w = noise([31, 32, 33], 500);
    const c = normalizedXcorr(w, w);
    expect(c.length).toBe(1);
    expect(c[0]).toBeCloseTo(1, 12);
  });

  it('a delayed copy gives its delay to the sample (scipy: lag 1234, C = 1)', () => {
    const x = noise([11, 12, 13], 3000);
    const w = x.map((xc) => xc.slice(delayedCase.from, delayedCase.from + delayedCase.m));
    const pk = peakOfXcorr(normalizedXcorr(w, x));
    expect(pk.lag).toBe(delayedCase.argmax);
    expect(pk.lag).toBe(1234);
    expect(pk.value).toBeCloseTo(delayedCase.max, 12);
  });

  it('white noise: C has a standard deviation near 1/√N and |C| stays under 3/√N at ≥ 99 % of lags (N = 3 × 400 samples; common practice)', () => {
    // For independent white noise the normalised correlation of N samples is ≈ normal with σ = 1/√N,
    // so |C| > 3/√N at about 0.27 % of lags (common practice for matched-filter thresholds).
    const c = normalizedXcorr(noise([41, 42, 43], 400), noise([51, 52, 53], 20000));
    const n = 1200;
    let ss = 0;
    let over = 0;
    for (const v of c) {
      ss += v * v;
      if (Math.abs(v) > 3 / Math.sqrt(n)) over++;
    }
    const sd = Math.sqrt(ss / c.length);
    expect(sd).toBeGreaterThan(0.8 / Math.sqrt(n));
    expect(sd).toBeLessThan(1.2 / Math.sqrt(n));
    expect(over / c.length).toBeLessThan(0.01);
    expect(randomCase.maxAbs).toBeLessThan(4 / Math.sqrt(n)); // scipy's own run of the random case
  });

  it('refuses mismatched inputs with a message naming the problem', () => {
    expect(() => normalizedXcorr([new Float64Array(10)], [new Float64Array(5)])).toThrow(/longer than the trace/);
    expect(() => normalizedXcorr([new Float64Array(3)], [new Float64Array(5), new Float64Array(5)])).toThrow(/1 template components against 2/);
  });

  it('a dead segment gives 0, not a division by zero', () => {
    const x = [new Float64Array(1000)];
    x[0]?.set(lcgUniform(3, 500), 500);
    const c = normalizedXcorr([lcgUniform(4, 100)], x);
    expect(c[0]).toBe(0);
    expect(c.every((v) => Number.isFinite(v))).toBe(true);
  });
});

describe('real windows (tests/fixtures/real-windows, decoded by libmseed for scipy and by Seisift here)', () => {
  for (const rc of realCases) {
    it(`${rc.name}: band-passed template of 10 s from P − 1 s; self 1.0 at ${rc.self.argmax}, other window as scipy`, () => {
      const a = realTraces(rc.a);
      const b = realTraces(rc.b);
      expect(a.ids.map((id) => id.split('.').pop())).toEqual(rc.ids.map((id) => id.split('.').pop()));
      const t = cutTemplate(a, (rc.from + a.sampleRateHz * 1) / a.sampleRateHz, { preS: 1, lengthS: rc.m / a.sampleRateHz, minLengthS: 4 });
      expect(t).not.toBeNull();
      const w = t?.samples ?? [];
      // The same input on both sides: the band-passed template's first samples (unit energy).
      rc.templateFirst.forEach((v, i) => expect(Math.abs((w[0]?.[i] as number) - v)).toBeLessThan(1e-9));
      const self = peakOfXcorr(normalizedXcorr(w, a.traces));
      expect(self.lag).toBe(rc.self.argmax);
      expect(self.value).toBeCloseTo(1, 9);
      const other = normalizedXcorr(w, b.traces);
      rc.other.values.forEach((v, i) => expect(Math.abs((other[i * rc.other.step] as number) - v)).toBeLessThan(1e-7));
      const pk = peakOfXcorr(other);
      expect(pk.lag).toBe(rc.other.argmax);
      expect(pk.value).toBeCloseTo(rc.other.max, 7);
      // The bank matcher (coarse FFT pass, exact refinement): its value is the exact C at its lag
      // (float32 template), never above scipy's maximum; for a real resemblance (C ≥ 0.3) it is that
      // maximum at the same lag. Below that the coarse pass may settle on another, similar peak.
      const bank = matchBank(b, [{ id: 1, sampleRateHz: b.sampleRateHz, ids: t?.ids ?? [], samples: w.map((s) => Float32Array.from(s)) }], { fminHz: 2, fmaxHz: 10, topK: 1, minValue: -1 });
      const got = bank[0];
      expect(got).toBeDefined();
      expect(Math.abs((got?.value ?? 0) - (other[got?.lag ?? 0] as number))).toBeLessThan(1e-5);
      expect(got?.value ?? 0).toBeLessThanOrEqual(rc.other.max + 1e-5);
      if (rc.other.max >= 0.3) {
        expect(got?.lag).toBe(rc.other.argmax);
        expect(got?.value).toBeCloseTo(rc.other.max, 5);
      }
    });
  }
});

describe('matchBank: coarse FFT pass then exact values', () => {
  const fs = 100;
  const raw = noise([61, 62, 63], 12000);
  const window = matchingTraces(raw.map((s, i) => ({ id: `XX.KV02.00.HH${'ZNE'[i]}`, sampleRateHz: fs, startTimeUs: 0, samples: s })), profile);
  const cut = (from: number, m = 1000) => window.traces.map((x) => Float32Array.from(x.subarray(from, from + m)));
  const other = matchingTraces(noise([71, 72, 73], 12000).map((s, i) => ({ id: `XX.KV02.00.HH${'ZNE'[i]}`, sampleRateHz: fs, startTimeUs: 0, samples: s })), profile);
  const unrelated = (k: number) => other.traces.map((x) => Float32Array.from(x.subarray(100 * k, 100 * k + 1000)));

  it('finds every hidden copy among unrelated templates, at its lag, with C = 1; the rest stay under the threshold', () => {
    const templates = [
      ...Array.from({ length: 60 }, (_, k) => ({ id: 100 + k, sampleRateHz: fs, ids: window.ids, samples: unrelated(k) })),
      { id: 1, sampleRateHz: fs, ids: window.ids, samples: cut(4321) },
      { id: 2, sampleRateHz: fs, ids: window.ids, samples: cut(17) },
      { id: 3, sampleRateHz: fs, ids: window.ids, samples: cut(10999) },
    ];
    const cache = new PreparedCache();
    const res = matchBank(window, templates, { fminHz: 2, fmaxHz: 10, topK: 5, minValue: 0.5, cache });
    expect(res.map((r) => [r.templateId, r.lag])).toEqual(
      expect.arrayContaining([
        [1, 4321],
        [2, 17],
        [3, 10999],
      ]),
    );
    expect(res).toHaveLength(3);
    for (const r of res) {
      expect(r.value).toBeCloseTo(1, 5);
      expect(r.perChannel.every((v) => v !== null && v > 0.99999)).toBe(true);
    }
    expect(cache.size).toBe(63);
    // A second call reuses the prepared spectra and answers the same.
    expect(matchBank(window, templates, { fminHz: 2, fmaxHz: 10, topK: 5, minValue: 0.5, cache })).toEqual(res);
  });

  it('a half-amplitude copy buried in noise: value and lag as the exact FFT correlation', () => {
    const w = cut(6000).map((s) => Float64Array.from(s));
    const mixed = window.traces.map((x, c) => {
      const y = Float64Array.from(other.traces[c] as Float64Array);
      for (let i = 0; i < 1000; i++) y[3000 + i] = (y[3000 + i] as number) + 0.5 * (x[6000 + i] as number);
      return y;
    });
    const exact = peakOfXcorr(normalizedXcorr(w, mixed));
    const res = matchBank({ ids: window.ids, sampleRateHz: fs, traces: mixed }, [{ id: 9, sampleRateHz: fs, ids: window.ids, samples: w }], { fminHz: 2, fmaxHz: 10, topK: 1, minValue: 0 });
    expect(exact.lag).toBe(3000);
    expect(res[0]?.lag).toBe(exact.lag);
    expect(res[0]?.value).toBeCloseTo(exact.value, 9);
  });

  it('skips templates at another rate, with no shared component, or longer than the window', () => {
    const t = { sampleRateHz: fs, samples: cut(100) };
    const res = matchBank(window, [
      { ...t, id: 1, ids: window.ids, sampleRateHz: 50 },
      { ...t, id: 2, ids: ['XX.KV09.00.HHZ', 'XX.KV09.00.HHN', 'XX.KV09.00.HHE'] },
      { id: 3, sampleRateHz: fs, ids: window.ids, samples: window.traces.map((x) => Float32Array.from([...x, ...x])) },
    ], { fminHz: 2, fmaxHz: 10, topK: 3, minValue: -1 });
    expect(res).toEqual([]);
  });
});
