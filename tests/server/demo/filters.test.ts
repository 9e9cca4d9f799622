import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { bandpass, filterInPlace, highpass1, highpass2, lowpass1, lowpass2, type Biquad } from '@server/demo/filters';

/**
 * scipy.signal.butter(N, fc, btype, fs=fs) for N = 1, 2 (Debian python3-scipy): the bilinear
 * Butterworth designs the cookbook biquads with Q = 1/√2 and the pre-warped first-order sections
 * must equal (b, a normalised to a0 = 1).
 */
function scipyButter(cases: readonly (readonly [number, number, 'low' | 'high'])[], fsHz: number): { b: number[]; a: number[] }[] {
  const script = [
    'import json, sys',
    'from scipy.signal import butter',
    'out = []',
    'for n, fc, t in json.load(sys.stdin):',
    `    b, a = butter(n, fc, t, fs=${fsHz})`,
    "    out.append({'b': list(b), 'a': list(a)})",
    'print(json.dumps(out))',
  ].join('\n');
  const out = execFileSync('/usr/bin/python3', ['-c', script], { input: JSON.stringify(cases), encoding: 'utf8' });
  return z.array(z.object({ b: z.array(z.number()), a: z.array(z.number()) })).parse(JSON.parse(out));
}

const coeffs = (f: Biquad, order: number): { b: number[]; a: number[] } =>
  order === 1 ? { b: [f.b0, f.b1], a: [1, f.a1] } : { b: [f.b0, f.b1, f.b2], a: [1, f.a1, f.a2] };

describe('demo noise filters', () => {
  it('equal scipy.signal.butter of order 1 and 2 (low and high) to 1e-12', () => {
    const cases: [number, number, 'low' | 'high', (fc: number, fs: number) => Biquad][] = [
      [1, 0.8, 'low', lowpass1],
      [1, 0.05, 'high', highpass1],
      [2, 2, 'low', lowpass2],
      [2, 20, 'low', lowpass2],
      [2, 3, 'high', highpass2],
      [2, 0.1, 'high', highpass2],
    ];
    const refs = scipyButter(cases.map(([n, fc, t]) => [n, fc, t] as const), 100);
    for (const [k, [order, fc, type, design]] of cases.entries()) {
      const ref = refs[k] ?? { b: [], a: [] };
      const ours = coeffs(design(fc, 100), order);
      ours.b.forEach((v, i) => expect(Math.abs(v - (ref.b[i] ?? NaN)), `${type} ${fc} Hz b${i}`).toBeLessThan(1e-12));
      ours.a.forEach((v, i) => expect(Math.abs(v - (ref.a[i] ?? NaN)), `${type} ${fc} Hz a${i}`).toBeLessThan(1e-12));
    }
  });

  it('runs a section as the difference equation: the impulse response of a first-order low-pass', () => {
    const f = lowpass1(10, 100);
    const y = new Float64Array(4);
    y[0] = 1;
    filterInPlace([f], y);
    // Hand-worked: h0 = b0, h1 = b1 − a1·h0, h2 = −a1·h1, h3 = −a1·h2.
    const h0 = f.b0;
    const h1 = f.b1 - f.a1 * h0;
    [h0, h1, -f.a1 * h1, f.a1 * f.a1 * h1].forEach((v, i) => expect(Math.abs((y[i] ?? NaN) - v)).toBeLessThan(1e-15));
  });

  it('refuses edges outside (0, fs/2) and a band that is not increasing, naming them', () => {
    expect(() => lowpass2(60, 100)).toThrow('filter edge 60 Hz must lie between 0 and 50 Hz (fs/2)');
    expect(() => bandpass(2, 5, 3, 100)).toThrow('band-pass edges must be increasing, got 5 and 3 Hz');
  });
});
