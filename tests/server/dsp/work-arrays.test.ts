import { describe, expect, it } from 'vitest';
import { analyzeWindow } from '@server/dsp/pipeline';
import { WORK_SLOTS, workArray } from '@server/dsp/work-arrays';
import { defaultProcessingProfile, processingProfileSchema } from '@shared/schemas/processing-profile';
import { makeSignal, stream, type SignalSpec } from './fixture-signal';

/**
 * The engine reuses its long intermediate traces between windows (server/dsp/work-arrays.ts). These
 * checks make sure nothing of one window leaks into the next: the reused arrays are not zeroed, so a
 * step that read an element it had not written would give a different answer after a longer window
 * had filled the buffer with other numbers.
 */

describe('workArray', () => {
  it('gives exactly n elements, keeps one buffer per slot and grows it when a longer trace comes', () => {
    const a = workArray('qc-block', 100);
    expect(a.length).toBe(100);
    a[0] = 42;
    const b = workArray('qc-block', 50);
    expect(b.length).toBe(50);
    expect(b[0]).toBe(42); // the same memory: not zeroed, not reallocated
    const c = workArray('qc-block', 1000);
    expect(c.length).toBe(1000);
    expect(workArray('qc-residual', 10).buffer).not.toBe(c.buffer);
    expect(workArray('qc-block', 0).length).toBe(0);
  });

  it('refuses a length that is not a whole number ≥ 0', () => {
    expect(() => workArray('qc-block', -1)).toThrow(/whole number ≥ 0, got -1/);
    expect(() => workArray('qc-block', 2.5)).toThrow(/whole number ≥ 0, got 2.5/);
  });
});

describe('analyzeWindow gives the same answer whatever ran before it', () => {
  // Invented test signals (deterministic): noise, a microseism-like swell, an in-band burst, a spike.
  const spec = (n: number, fs: number, seed: number): SignalSpec => ({
    n,
    fs,
    offset: 2000,
    slope: 0.4,
    sines: [[300, 0.2, 0.1]],
    bursts: [[(0.6 * n) / fs, 5, 6000, 6]],
    noise: 400,
    seed,
  });
  const win = (n: number, fs: number, seed: number) => {
    const chans = ['XX.KV01.00.HHZ', 'XX.KV01.00.HHN', 'XX.KV01.00.HHE'].map((id, c) => stream(id, makeSignal(spec(n, fs, seed + c)), fs));
    for (const s of chans) s.samples[Math.floor(n / 3)] = (s.samples[Math.floor(n / 3)] as number) + 60000;
    return chans;
  };
  const profiles = [defaultProcessingProfile, processingProfileSchema.parse({ bandReject: [{ fmin: 24.5, fmax: 25.5, order: 4 }] })];

  it('a short window after a long one (and the long one again) equals each analysed first in the thread', () => {
    const short = win(6000, 100, 3);
    const long = win(60_000, 200, 9);
    for (const profile of profiles) {
      const shortFirst = JSON.stringify(analyzeWindow(short, profile, { display: true }));
      const longAfter = JSON.stringify(analyzeWindow(long, profile, { display: true }));
      expect(JSON.stringify(analyzeWindow(short, profile, { display: true }))).toBe(shortFirst);
      expect(JSON.stringify(analyzeWindow(long, profile, { display: true }))).toBe(longAfter);
    }
  });

  it('with every work array filled with zeros, NaN or 10³⁰⁰ beforehand, the result is the same', () => {
    // A step that read an element it had not written would carry the NaN or the huge value into the
    // result (a huge value where a maximum is taken, NaN where a sum is).
    const w = win(12_000, 100, 7);
    const fill = (v: number): void => {
      for (const slot of WORK_SLOTS) workArray(slot, 12_000).fill(v);
    };
    for (const profile of profiles) {
      for (const opts of [{}, { display: true }, { display: true, displayFiltering: 'zero-phase' as const }]) {
        fill(0);
        const zeros = JSON.stringify(analyzeWindow(w, profile, opts));
        for (const junk of [NaN, 1e300]) {
          fill(junk);
          expect(JSON.stringify(analyzeWindow(w, profile, opts))).toBe(zeros);
        }
      }
    }
  });

  it('leaves the input samples untouched', () => {
    const w = win(6000, 100, 5);
    const copies = w.map((s) => Float64Array.from(s.samples));
    analyzeWindow(w, defaultProcessingProfile);
    w.forEach((s, i) => expect(s.samples).toEqual(copies[i]));
  });
});
