import { describe, expect, it } from 'vitest';
import { countsPsdToVelocity, pazMagnitude, responseMagnitude, velocityPsdToAccelerationDb } from '@server/dsp/response';

// A 1 Hz, 0.707-damped velocity sensor: zeros {0, 0}, poles −ω0(h ± i√(1−h²)), ω0 = 2π rad/s
// (the textbook electrodynamic seismometer, common practice). Above ω0 its response is flat.
const w0 = 2 * Math.PI;
const h = 1 / Math.SQRT2;
const geophone = {
  zeros: [
    { re: 0, im: 0 },
    { re: 0, im: 0 },
  ],
  poles: [
    { re: -w0 * h, im: w0 * Math.sqrt(1 - h * h) },
    { re: -w0 * h, im: -w0 * Math.sqrt(1 - h * h) },
  ],
  normalizationFactor: 1,
  sensitivity: 1e9,
  sensitivityFrequencyHz: 10,
};

describe('instrument response', () => {
  it('|PAZ| of the 1 Hz sensor at its corner: |s²/(s² + 2hω0 s + ω0²)| at s = iω0 is 1/(2h)', () => {
    expect(pazMagnitude(geophone, 1)).toBeCloseTo(1 / (2 * h), 12);
  });
  it('full response equals the sensitivity at its frequency and falls as f² well below the corner', () => {
    expect(responseMagnitude(geophone, 10)).toBeCloseTo(1e9, 0);
    const r01 = responseMagnitude(geophone, 0.1) / responseMagnitude(geophone, 10);
    expect(r01).toBeCloseTo(0.01, 3); // (0.1/1)² with the flat part ≈ 1 at 10 Hz
  });
  it('counts PSD → velocity PSD divides by |H|²; acceleration multiplies by (2πf)² in dB', () => {
    const v = countsPsdToVelocity([1, 2], [4e18, 4e18], 2e9);
    expect(Array.from(v)).toEqual([1, 1]);
    const db = velocityPsdToAccelerationDb([0, 1 / (2 * Math.PI)], [1, 1e-12]);
    expect(db[0]).toBe(-Infinity);
    expect(db[1]).toBeCloseTo(-120, 9);
  });
  it('refuses a non-positive sensitivity', () => {
    expect(() => responseMagnitude({ ...geophone, sensitivity: 0 }, 1)).toThrow(/sensitivity must be > 0/);
  });
});
