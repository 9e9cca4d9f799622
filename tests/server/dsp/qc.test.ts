import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { median5OfWholeNumbers, medianAbsoluteDeviation, medianOfWholeNumbersInPlace, qualityChecks, type QcOptions } from '@server/dsp/qc';
import { lcgUniform } from './fixture-signal';

const opts: QcOptions = { flatTopSamples: 3, spikeK: 20 };
const noise = (n: number, seed = 1): Float64Array => lcgUniform(seed, n).map((u) => 1000 * (u - 0.5));
const codes = (f: { code: string }[]): string[] => f.map((q) => q.code);

describe('quality checks (definitions in server/dsp/qc.ts)', () => {
  it('clean noise gives no finding', () => {
    expect(qualityChecks(noise(5000), 100, [], opts)).toEqual([]);
  });

  it('gaps and overlaps come from the decoder discontinuities, with time and words', () => {
    const f = qualityChecks(noise(5000), 100, [
      { expectedTimeUs: 0, actualTimeUs: 2_500_000, durationS: 2.5, sampleIndex: 1200 },
      { expectedTimeUs: 0, actualTimeUs: -10_000, durationS: -0.01, sampleIndex: 3000 },
    ], opts);
    expect(codes(f)).toEqual(['gap', 'overlap']);
    expect(f[0]).toMatchObject({ severity: 'warning', sampleIndex: 1200, time: 12 });
    expect(f[0]?.message).toMatch(/gap of 2\.5 s .* nothing is filled in/);
  });

  it('the decoder\'s notes (repeats dropped, empty records) become info findings at their sample', () => {
    const f = qualityChecks(noise(5000), 100, [], {
      ...opts,
      decodeNotes: [
        { code: 'duplicate-record', message: 'record 3 at byte 1024 repeats 182 samples already placed from … with identical values: dropped', sampleIndex: 413, count: 182 },
        { code: 'empty-record', message: 'record 9 at byte 4096 claims 0 samples at …: nothing placed from it', sampleIndex: 595, count: 0 },
      ],
    });
    expect(f.map((q) => [q.code, q.severity, q.sampleIndex, q.time, q.count])).toEqual([
      ['duplicate-record', 'info', 413, 4.13, 182],
      ['empty-record', 'info', 595, 5.95, 0],
    ]);
    expect(f[0]?.message).toMatch(/^record 3 at byte 1024 repeats 182 samples/u);
  });

  it('clipping at a given full scale: runs at ±full scale are an error with the first sample', () => {
    const x = noise(5000);
    for (let i = 2000; i < 2010; i++) x[i] = 8_388_607;
    const f = qualityChecks(x, 100, [], { ...opts, fullScaleCounts: 8_388_607 });
    const c = f.find((q) => q.code === 'clipped');
    expect(c).toMatchObject({ severity: 'error', sampleIndex: 2000, count: 10 });
  });

  it('flat tops at max|x| without a full scale are a warning', () => {
    const x = noise(5000);
    for (let i = 100; i < 104; i++) x[i] = -4000;
    const f = qualityChecks(x, 100, [], opts);
    expect(f.find((q) => q.code === 'flat-top')).toMatchObject({ severity: 'warning', sampleIndex: 100, count: 4 });
  });

  it('a dead channel (all equal) is an error and stops further checks', () => {
    const f = qualityChecks(new Float64Array(3000).fill(17), 100, [], opts);
    expect(codes(f)).toEqual(['flat-line']);
    expect(f[0]?.severity).toBe('error');
    expect(f[0]?.message).toMatch(/every sample is 17/);
  });

  it('isolated spikes are found (robust MAD rule); a strong tone near fs/4 is not a spike', () => {
    const x = noise(5000);
    x[1234] = (x[1234] as number) + 200_000;
    x[4000] = (x[4000] as number) - 150_000;
    const f = qualityChecks(x, 100, [], opts);
    expect(f.find((q) => q.code === 'spikes')).toMatchObject({ count: 2, sampleIndex: 1234 });
    const tone = noise(5000).map((v, i) => v + (i > 2000 && i < 2800 ? 100_000 * Math.sin((2 * Math.PI * 24 * i) / 100) : 0));
    expect(codes(qualityChecks(tone, 100, [], opts))).not.toContain('spikes');
  });

  it('spikes are found in quiet quantised data whose residual MAD is 0 (mean-absolute fallback)', () => {
    const x = Float64Array.from({ length: 3000 }, (_, i) => (i % 10 === 0 ? 1 : 0));
    x[1500] = 500;
    expect(qualityChecks(x, 100, [], opts).find((q) => q.code === 'spikes')).toMatchObject({ count: 1, sampleIndex: 1500 });
  });

  it('a DC offset large against the signal is reported; an expected sample rate mismatch is an error', () => {
    const x = noise(5000).map((v) => v + 1e6);
    const f = qualityChecks(x, 100, [], { ...opts, expectedSampleRateHz: 200 });
    expect(f.find((q) => q.code === 'dc-offset')?.severity).toBe('info');
    expect(f.find((q) => q.code === 'sample-rate')).toMatchObject({ severity: 'error' });
    expect(f.find((q) => q.code === 'sample-rate')?.message).toMatch(/100 Hz differs from the 200 Hz in the station registry/);
  });

  it('a window shorter than the LTA is flagged', () => {
    const f = qualityChecks(noise(1000), 100, [], { ...opts, minSamples: 3000 });
    expect(f.find((q) => q.code === 'short-window')?.message).toMatch(/shorter than the 30 s LTA window/);
  });
});

describe('median absolute deviation (selection-based)', () => {
  const sortedMedian = (v: number[]): number => {
    const s = [...v].sort((a, b) => a - b);
    const n = s.length;
    return n % 2 ? (s[(n - 1) / 2] as number) : ((s[n / 2 - 1] as number) + (s[n / 2] as number)) / 2;
  };
  it('hand-worked: [1, 2, 3, 4, 100] → 1; [1, 2, 3, 4] → 1', () => {
    expect(medianAbsoluteDeviation(Float64Array.from([1, 2, 3, 4, 100]))).toBe(1);
    expect(medianAbsoluteDeviation(Float64Array.from([1, 2, 3, 4]))).toBe(1);
  });
  it('equals the sort-based definition for any input, and leaves the input alone', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: -50, max: 50 }), { minLength: 1, maxLength: 200 }), (v) => {
        const x = Float64Array.from(v);
        const med = sortedMedian(v);
        expect(medianAbsoluteDeviation(x)).toBe(sortedMedian(v.map((a) => Math.abs(a - med))));
        expect(Array.from(x)).toEqual(v);
      }),
      { numRuns: 300 },
    );
  });
});

describe('median of whole numbers (branch-free selection used for the DC-step block medians)', () => {
  const sortedMedian = (v: number[]): number => {
    const s = [...v].sort((a, b) => a - b);
    const n = s.length;
    return n % 2 ? (s[(n - 1) / 2] as number) : ((s[n / 2 - 1] as number) + (s[n / 2] as number)) / 2;
  };
  it('hand-worked: [5, 1, 4, 2, 3] → 3; [7, 7, 7, 1] → 7; [−3, 10] → 3.5', () => {
    expect(medianOfWholeNumbersInPlace(Float64Array.from([5, 1, 4, 2, 3]))).toBe(3);
    expect(medianOfWholeNumbersInPlace(Float64Array.from([7, 7, 7, 1]))).toBe(7);
    expect(medianOfWholeNumbersInPlace(Float64Array.from([-3, 10]))).toBe(3.5);
  });
  it('equals the sort-based median for whole numbers of any spread below 2³¹, with many or no repeats', () => {
    const wide = fc.integer({ min: -(2 ** 30), max: 2 ** 30 - 1 });
    const narrow = fc.integer({ min: -3, max: 3 });
    for (const values of [wide, narrow, fc.oneof(narrow, wide)]) {
      fc.assert(
        fc.property(fc.array(values, { minLength: 1, maxLength: 400 }), (v) => {
          expect(medianOfWholeNumbersInPlace(Float64Array.from(v))).toBe(sortedMedian(v));
        }),
        { numRuns: 300 },
      );
    }
    // A spread of exactly 2³¹ − 1 (the most the caller lets through), ends included.
    const lo = -(2 ** 30);
    const hi = lo + 2 ** 31 - 1;
    fc.assert(
      fc.property(fc.array(fc.oneof(fc.constantFrom(lo, hi), fc.integer({ min: lo, max: hi })), { minLength: 1, maxLength: 50 }), (v) => {
        expect(medianOfWholeNumbersInPlace(Float64Array.from(v))).toBe(sortedMedian(v));
      }),
      { numRuns: 200 },
    );
  });
});

describe('median of five whole numbers (branch-free, for the spike rule on digitiser counts)', () => {
  it('equals the middle of the five sorted, for values up to ±(2³⁰ − 1) and with ties', () => {
    const v = fc.oneof(fc.integer({ min: -(2 ** 30) + 1, max: 2 ** 30 - 1 }), fc.integer({ min: -2, max: 2 }), fc.constantFrom(-(2 ** 30) + 1, 2 ** 30 - 1));
    fc.assert(
      fc.property(fc.tuple(v, v, v, v, v), (t) => {
        expect(median5OfWholeNumbers(...t)).toBe([...t].sort((a, b) => a - b)[2]);
      }),
      { numRuns: 3000 },
    );
  });
});

describe('quality checks equal their rules applied literally', () => {
  // The rules as written in qc.ts, evaluated at every sample with no shortcut (the implementation
  // fuses the run checks into one pass and computes spike residuals only where they can matter).
  const median5 = (a: number[]): number => [...a].sort((p, q) => p - q)[2] as number;
  const literalSpikes = (x: Float64Array, k: number, reach: number): { count: number; first: number } => {
    const n = x.length;
    const r = new Float64Array(n);
    for (let i = 2; i < n - 2; i++) r[i] = (x[i] as number) - median5(Array.from(x.subarray(i - 2, i + 3)));
    const inner = r.subarray(2, n - 2);
    const stride = Math.max(1, Math.ceil(inner.length / 4096));
    const sample = Float64Array.from({ length: Math.ceil(inner.length / stride) }, (_, m) => inner[m * stride] as number);
    let sigma = 1.4826 * medianAbsoluteDeviation(sample);
    if (!(sigma > 0)) sigma = (1.2533 * sample.reduce((acc, v) => acc + Math.abs(v), 0)) / sample.length;
    if (!(sigma > 0)) return { count: 0, first: -1 };
    let count = 0;
    let first = -1;
    for (let i = 2; i < n - 2; i++) {
      const a = Math.abs(r[i] as number);
      if (a <= k * sigma) continue;
      let around = 0;
      for (let j = Math.max(2, i - reach); j <= Math.min(n - 3, i + reach); j++) if (Math.abs(j - i) >= 2) around = Math.max(around, Math.abs(r[j] as number));
      if (a > 4 * around) {
        count++;
        if (first < 0) first = i;
      }
    }
    return { count, first };
  };
  const literalRuns = (x: Float64Array, pred: (v: number, start: number) => boolean, minLen: number) => {
    let count = 0;
    let samples = 0;
    let first = -1;
    for (let i = 0; i < x.length; ) {
      let j = i + 1;
      while (j < x.length && x[j] === x[i]) j++;
      if (j - i >= minLen && pred(x[i] as number, i)) {
        count++;
        samples += j - i;
        if (first < 0) first = i;
      }
      i = j;
    }
    return { count, samples, first };
  };

  // Invented signals: noise (whole counts or not), plus spikes, pairs of spikes, sharp bursts, runs of
  // repeated values at ±max and elsewhere, quiet quantised stretches.
  const signal = fc.record({
    n: fc.integer({ min: 40, max: 9000 }),
    seed: fc.integer({ min: 1, max: 1e6 }),
    whole: fc.boolean(),
    scale: fc.constantFrom(0.4, 3, 1000),
    events: fc.array(fc.record({ at: fc.double({ min: 0, max: 1, noNaN: true }), kind: fc.constantFrom('spike', 'pair', 'burst', 'run', 'top'), size: fc.constantFrom(5, 50, 1e4, 1e6), len: fc.integer({ min: 1, max: 80 }) }), { maxLength: 8 }),
  });
  const build = (c: typeof signal extends fc.Arbitrary<infer T> ? T : never): Float64Array => {
    const u = lcgUniform(c.seed, c.n);
    const x = Float64Array.from(u, (v) => (c.whole ? Math.round(c.scale * (v - 0.5)) : c.scale * (v - 0.5)));
    let top = 0;
    for (const e of c.events) {
      const i = Math.min(c.n - 1, Math.floor(e.at * c.n));
      if (e.kind === 'spike') x[i] = (x[i] as number) + e.size;
      if (e.kind === 'pair') {
        x[i] = (x[i] as number) + e.size;
        if (i + 1 < c.n) x[i + 1] = (x[i + 1] as number) - e.size;
      }
      if (e.kind === 'burst') for (let j = i; j < Math.min(c.n, i + e.len); j++) x[j] = (x[j] as number) + e.size * Math.sin(j);
      if (e.kind === 'run') x.fill(x[i] as number, i, Math.min(c.n, i + e.len));
      if (e.kind === 'top') {
        top = Math.max(top, e.size + 2 * c.scale);
        x.fill(e.len % 2 ? top : -top, i, Math.min(c.n, i + e.len));
      }
    }
    return x;
  };
  it('spikes, flat tops, flat segments and clipped runs on random invented signals', () => {
    fc.assert(
      fc.property(signal, fc.constantFrom(100, 200, 40), (c, fs) => {
        const x = build(c);
        const findings = qualityChecks(x, fs, [], opts);
        if (findings.some((q) => q.code === 'flat-line')) return;
        const by = (code: string) => findings.find((q) => q.code === code);
        const sp = literalSpikes(x, opts.spikeK, Math.max(10, Math.round(0.25 * fs)));
        expect(by('spikes')?.count ?? 0).toBe(sp.count);
        if (sp.count > 0) expect(by('spikes')?.sampleIndex).toBe(sp.first);
        let maxAbs = 0;
        for (const v of x) maxAbs = Math.max(maxAbs, Math.abs(v));
        const tops = literalRuns(x, (v) => Math.abs(v) === maxAbs, opts.flatTopSamples);
        expect(by('flat-top')?.count ?? 0).toBe(tops.samples);
        if (tops.count > 0) expect(by('flat-top')).toMatchObject({ sampleIndex: tops.first, message: expect.stringMatching(new RegExp(`^${tops.count} flat top`)) });
        const flats = literalRuns(x, () => true, Math.max(2, Math.round(0.5 * fs)));
        expect(by('flat-segment')?.count ?? 0).toBe(flats.samples);
        if (flats.count > 0) expect(by('flat-segment')).toMatchObject({ sampleIndex: flats.first, message: expect.stringMatching(new RegExp(`^${flats.count} stretch`)) });
        const fullScale = maxAbs > 0 ? maxAbs * 0.999 : 1;
        const clipped = qualityChecks(x, fs, [], { ...opts, fullScaleCounts: fullScale }).find((q) => q.code === 'clipped');
        let runs = 0;
        let samples = 0;
        let first = -1;
        for (let i = 0; i < x.length; i++) {
          if (Math.abs(x[i] as number) < fullScale) continue;
          samples++;
          if (first < 0) first = i;
          if (i === 0 || Math.abs(x[i - 1] as number) < fullScale) runs++;
        }
        expect(clipped?.count ?? 0).toBe(samples);
        if (runs > 0) expect(clipped).toMatchObject({ sampleIndex: first, message: expect.stringMatching(new RegExp(`^${samples} samples in ${runs} run`)) });
      }),
      { numRuns: 150 },
    );
  });
});
