import { describe, expect, it } from 'vitest';
import { BandError, validateBand } from '@server/dsp/bands';
import { processingProfileSchema } from '@shared/schemas/processing-profile';

describe('band validation (0.45·fs rule of the brief)', () => {
  it('accepts a band below 0.45·fs unchanged', () => {
    expect(validateBand('high', { fmin: 2, fmax: 10 }, 40, 'refuse')).toEqual({ fmin: 2, fmax: 10 });
  });
  it('refuses at or above 0.45·fs, naming band and fs', () => {
    expect(() => validateBand('high', { fmin: 2, fmax: 9 }, 20, 'refuse')).toThrow(BandError);
    expect(() => validateBand('high', { fmin: 2, fmax: 9 }, 20, 'refuse')).toThrow('high band 2–9 Hz reaches 0.45·fs = 9 Hz at a sample rate of 20 Hz');
  });
  it('caps with a warning when asked; still refuses when nothing would be left', () => {
    const r = validateBand('high', { fmin: 2, fmax: 10 }, 20, 'cap');
    expect(r.fmax).toBe(9);
    expect(r.warning).toMatch(/lowered to 9 Hz/);
    expect(() => validateBand('high', { fmin: 9.5, fmax: 10 }, 20, 'cap')).toThrow(/refused/);
  });
  it('requires 0 < f1 < f2', () => {
    expect(() => validateBand('low', { fmin: 0, fmax: 2 }, 100, 'refuse')).toThrow(/above 0 Hz/);
    expect(() => validateBand('low', { fmin: 3, fmax: 2 }, 100, 'refuse')).toThrow(/below the upper edge/);
  });
  it('the profile schema has the brief defaults and rejects inverted bands', () => {
    const p = processingProfileSchema.parse({});
    expect(p.bands.low).toEqual({ fmin: 0.5, fmax: 2 });
    expect(p.staLta).toMatchObject({ staS: 1, ltaS: 30, on: 3.5, off: 1.5 });
    expect(p.psd.nperseg).toBe(1024);
    expect(processingProfileSchema.safeParse({ bands: { high: { fmin: 10, fmax: 2 } } }).success).toBe(false);
    expect(processingProfileSchema.safeParse({ psd: { nperseg: 1000 } }).success).toBe(false);
  });
});
