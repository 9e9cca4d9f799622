import { describe, expect, it } from 'vitest';
import { bucketFor, decodeSamples, minMaxDecimate } from '@server/features/queue/queue-traces';

describe('display decimation (min/max per bucket)', () => {
  it('hand-worked: each bucket gives its min and max in time order, one point when they coincide', () => {
    const y = Float64Array.from([3, 1, 4, 1, 5, 9, 2, 6]);
    // Buckets of 3: [3,1,4] → min 1 @1, max 4 @2; [1,5,9] → min 1 @3, max 9 @5; [2,6] → min 2 @6, max 6 @7.
    expect(minMaxDecimate(y, 0, 8, 3)).toEqual({ index: [1, 2, 3, 5, 6, 7], values: [1, 4, 1, 9, 2, 6] });
    // A constant bucket: min and max are the first sample, one point.
    expect(minMaxDecimate(Float64Array.from([7, 7, 7, 7]), 0, 4, 4)).toEqual({ index: [0], values: [7] });
    // A span inside the array, bucket 1: every sample (full resolution).
    expect(minMaxDecimate(y, 2, 5, 1)).toEqual({ index: [2, 3, 4], values: [4, 1, 5] });
  });

  it('keeps every bucket extreme: the global min and max always survive (random trace, naive check)', () => {
    let s = 7;
    const y = Float64Array.from({ length: 10_001 }, () => {
      s = (s * 16807) % 2147483647;
      return s / 2147483647 - 0.5;
    });
    const bucket = bucketFor(y.length, 1000);
    expect(bucket).toBe(21); // ceil(2 · 10001 / 1000)
    const d = minMaxDecimate(y, 0, y.length, bucket);
    expect(d.values.length).toBeLessThanOrEqual(1000);
    expect(Math.max(...d.values)).toBe(Math.max(...y));
    expect(Math.min(...d.values)).toBe(Math.min(...y));
    for (let b = 0; b < y.length; b += bucket) {
      const seg = Array.from(y.subarray(b, b + bucket));
      const inBucket = d.index.filter((i) => i >= b && i < b + bucket).map((i) => y[i] ?? NaN);
      expect(Math.max(...inBucket)).toBe(Math.max(...seg));
      expect(Math.min(...inBucket)).toBe(Math.min(...seg));
    }
    expect([...d.index].sort((a, b) => a - b)).toEqual(d.index);
  });

  it('refuses bad spans and buckets with a message naming the problem', () => {
    const y = new Float64Array(4);
    expect(() => minMaxDecimate(y, 0, 4, 0)).toThrow(/bucket must be a positive whole number/);
    expect(() => minMaxDecimate(y, 3, 3, 1)).toThrow(/sample span \[3, 3\) is empty/);
    expect(() => minMaxDecimate(y, 0, 5, 1)).toThrow(/outside 0\.\.4/);
  });

  it('decodes little-endian float64 blobs and refuses a wrong length', () => {
    const b = Buffer.alloc(16);
    b.writeDoubleLE(1.5, 0);
    b.writeDoubleLE(-2.25, 8);
    expect(Array.from(decodeSamples(b, 2))).toEqual([1.5, -2.25]);
    expect(Array.from(decodeSamples(b.subarray(1, 9), 1))).toEqual([b.subarray(1, 9).readDoubleLE(0)]);
    expect(() => decodeSamples(b, 3)).toThrow(/16 bytes, expected 3 × 8/);
  });
});
