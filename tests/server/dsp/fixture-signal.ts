import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { z } from 'zod';
import type { DecodedStream } from '@server/formats/types';

/**
 * Rebuilds the deterministic test inputs described in the scipy fixtures, exactly as
 * tests/fixtures/dsp/make-scipy-fixtures.py's `make_signal` (same operation order; a 32-bit LCG with
 * integer arithmetic that is exact in IEEE doubles: 1664525·x < 2^53).
 */

/** The signal spec stored in the fixtures. */
export const signalSpecSchema = z.object({
  n: z.number().int().positive(),
  fs: z.number().positive(),
  offset: z.number().optional(),
  slope: z.number().optional(),
  sines: z.array(z.tuple([z.number(), z.number(), z.number()])).optional(),
  bursts: z.array(z.tuple([z.number(), z.number(), z.number(), z.number()])).optional(),
  noise: z.number().optional(),
  seed: z.number().int().optional(),
});

/** A signal spec. */
export type SignalSpec = z.infer<typeof signalSpecSchema>;

/** Numerical Recipes LCG: x ← (1664525·x + 1013904223) mod 2^32; u = x/2^32. */
export function lcgUniform(seed: number, n: number): Float64Array {
  const out = new Float64Array(n);
  let x = seed % 4294967296;
  for (let i = 0; i < n; i++) {
    x = (1664525 * x + 1013904223) % 4294967296;
    out[i] = x / 4294967296;
  }
  return out;
}

/** Build the signal of a spec. */
export function makeSignal(spec: SignalSpec): Float64Array {
  const { n, fs } = spec;
  const x = new Float64Array(n);
  const slope = spec.slope ?? 0;
  for (let i = 0; i < n; i++) x[i] = (spec.offset ?? 0) + slope * (i / fs);
  for (const [amp, f, ph] of spec.sines ?? []) {
    for (let i = 0; i < n; i++) x[i] = (x[i] as number) + amp * Math.sin(2 * Math.PI * f * (i / fs) + ph);
  }
  for (const [t0, dur, amp, f] of spec.bursts ?? []) {
    for (let i = 0; i < n; i++) {
      const t = i / fs;
      if (t >= t0 && t < t0 + dur) {
        const env = Math.sin((Math.PI * (t - t0)) / dur) ** 2;
        x[i] = (x[i] as number) + amp * env * Math.sin(2 * Math.PI * f * (t - t0));
      }
    }
  }
  if (spec.noise) {
    const u = lcgUniform(spec.seed ?? 0, n);
    for (let i = 0; i < n; i++) x[i] = (x[i] as number) + spec.noise * ((u[i] as number) - 0.5);
  }
  return x;
}

/** Read and validate a fixture JSON from tests/fixtures/dsp/. */
export function readFixture<T>(name: string, schema: z.ZodType<T>): T {
  const path = join(import.meta.dirname, '../../fixtures/dsp', name);
  return schema.parse(JSON.parse(readFileSync(path, 'utf8')));
}

/** max|a − b| over the arrays, throws on a length mismatch. */
export function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  if (a.length !== b.length) throw new Error(`length ${a.length} ≠ ${b.length}`);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs((a[i] as number) - (b[i] as number)));
  return m;
}

/** A stream around given samples (test input; the checks come from scipy or from definitions). */
export function stream(id: string, samples: Float64Array, fs: number, extra: Partial<DecodedStream> = {}): DecodedStream {
  const [network = '', station = '', location = '', channel = ''] = id.split('.');
  return {
    id,
    network,
    station,
    location,
    channel,
    sampleRateHz: fs,
    startTimeUs: Date.UTC(2026, 2, 14, 9, 26, 53) * 1000 + 589_123,
    samples,
    discontinuities: [],
    encoding: 'float64',
    format: 'mseed2',
    ...extra,
  };
}
