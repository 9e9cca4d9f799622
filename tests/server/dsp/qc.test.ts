import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { medianAbsoluteDeviation, qualityChecks, type QcOptions } from '@server/dsp/qc';
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
