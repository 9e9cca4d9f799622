import type { Sos } from './butterworth';

/**
 * Apply second-order sections causally from zero initial state, as `scipy.signal.sosfilt(sos, x)`:
 * each section is run in transposed direct form II,
 *   y[n] = b0·x[n] + s1;  s1 = b1·x[n] − a1·y[n] + s2;  s2 = b2·x[n] − a2·y[n]
 * (coefficients normalised so a0 = 1), sections in order. Units: those of `x`. `x` is not mutated.
 * Throws when a section has a0 = 0.
 */
export function sosfilt(sos: Sos, x: Float64Array): Float64Array {
  return sosfiltInto(sos, x, new Float64Array(x.length));
}

/**
 * `sosfilt` overwriting `y` with the filtered trace (no allocation). Sections run four per pass over
 * the trace (then two, then one for the rest): each sample goes through section s, s+1, s+2, s+3 with
 * all states in locals — the same arithmetic in the same order as one section per pass, so the output
 * is bit-identical, but the sections' dependency chains overlap (about 1.4× faster than two per pass
 * for a 4-section band-pass, measured with `npm run bench:engine`).
 * Throws when a section has a0 = 0.
 */
export function sosfiltInPlace(sos: Sos, y: Float64Array): void {
  sosfiltInto(sos, y, y);
}

/**
 * `sosfilt` of `x` written into `y` (same length; may be `x` itself): the first pass reads `x`, the
 * others work in place on `y`, so filtering a trace into a fresh array needs no copy first. Same
 * arithmetic as `sosfiltInPlace`. Returns `y`. Throws when a section has a0 = 0 or the lengths differ.
 */
export function sosfiltInto(sos: Sos, x: Float64Array, y: Float64Array): Float64Array {
  const cf = sos.coefficients;
  const n = y.length;
  if (x.length !== n) throw new RangeError(`sosfiltInto: input of ${x.length} samples, output of ${n}`);
  if (sos.sections === 0 && x !== y) y.set(x);
  let src = x;
  const coef = (s: number): [number, number, number, number, number] => {
    const o = s * 6;
    const a0 = cf[o + 3] as number;
    if (a0 === 0) throw new RangeError(`second-order section ${s} has a0 = 0`);
    return [(cf[o] as number) / a0, (cf[o + 1] as number) / a0, (cf[o + 2] as number) / a0, (cf[o + 4] as number) / a0, (cf[o + 5] as number) / a0];
  };
  let s = 0;
  for (; s + 3 < sos.sections; s += 4) {
    const [b0, b1, b2, a1, a2] = coef(s);
    const [c0, c1, c2, d1, d2] = coef(s + 1);
    const [e0, e1, e2, f1, f2] = coef(s + 2);
    const [g0, g1, g2, h1, h2] = coef(s + 3);
    let s1 = 0;
    let s2 = 0;
    let t1 = 0;
    let t2 = 0;
    let u1 = 0;
    let u2 = 0;
    let v1 = 0;
    let v2 = 0;
    for (let i = 0; i < n; i++) {
      const xi = src[i] as number;
      const yi = b0 * xi + s1;
      s1 = b1 * xi - a1 * yi + s2;
      s2 = b2 * xi - a2 * yi;
      const zi = c0 * yi + t1;
      t1 = c1 * yi - d1 * zi + t2;
      t2 = c2 * yi - d2 * zi;
      const wi = e0 * zi + u1;
      u1 = e1 * zi - f1 * wi + u2;
      u2 = e2 * zi - f2 * wi;
      const qi = g0 * wi + v1;
      v1 = g1 * wi - h1 * qi + v2;
      v2 = g2 * wi - h2 * qi;
      y[i] = qi;
    }
    src = y;
  }
  for (; s + 1 < sos.sections; s += 2) {
    const [b0, b1, b2, a1, a2] = coef(s);
    const [c0, c1, c2, d1, d2] = coef(s + 1);
    let s1 = 0;
    let s2 = 0;
    let t1 = 0;
    let t2 = 0;
    for (let i = 0; i < n; i++) {
      const xi = src[i] as number;
      const yi = b0 * xi + s1;
      s1 = b1 * xi - a1 * yi + s2;
      s2 = b2 * xi - a2 * yi;
      const zi = c0 * yi + t1;
      t1 = c1 * yi - d1 * zi + t2;
      t2 = c2 * yi - d2 * zi;
      y[i] = zi;
    }
    src = y;
  }
  if (s < sos.sections) {
    const [b0, b1, b2, a1, a2] = coef(s);
    let s1 = 0;
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      const xi = src[i] as number;
      const yi = b0 * xi + s1;
      s1 = b1 * xi - a1 * yi + s2;
      s2 = b2 * xi - a2 * yi;
      y[i] = yi;
    }
  }
  return y;
}

/**
 * Zero-phase filtering for DISPLAY only: filter forward, reverse, filter again, reverse
 * (|H|² magnitude, no phase shift), from zero state and without scipy's edge padding — so it is
 * not `scipy.signal.sosfiltfilt` near the ends. No number of the analysis uses it.
 * Units: those of `x`. `x` is not mutated.
 */
export function sosfiltZeroPhase(sos: Sos, x: Float64Array): Float64Array {
  const y = sosfilt(sos, x);
  y.reverse();
  sosfiltInPlace(sos, y);
  y.reverse();
  return y;
}

/**
 * Complex frequency response of second-order sections at the given frequencies, as
 * `scipy.signal.sosfreqz(sos, worN=freqsHz, fs=sampleRateHz)`:
 * H(e^{jω}) = Π_s (b0 + b1 e^{−jω} + b2 e^{−2jω}) / (a0 + a1 e^{−jω} + a2 e^{−2jω}), ω = 2πf/fs.
 * Returns real and imaginary parts and the magnitude |H| (dimensionless).
 */
export function sosfreqz(
  sos: Sos,
  freqsHz: ArrayLike<number>,
  sampleRateHz: number,
): { re: Float64Array; im: Float64Array; magnitude: Float64Array } {
  const m = freqsHz.length;
  const re = new Float64Array(m);
  const im = new Float64Array(m);
  const mag = new Float64Array(m);
  const cf = sos.coefficients;
  for (let k = 0; k < m; k++) {
    const w = (2 * Math.PI * (freqsHz[k] as number)) / sampleRateHz;
    const c1 = Math.cos(w);
    const s1 = -Math.sin(w);
    const c2 = Math.cos(2 * w);
    const s2 = -Math.sin(2 * w);
    let hr = 1;
    let hi = 0;
    for (let s = 0; s < sos.sections; s++) {
      const o = s * 6;
      const nr = (cf[o] as number) + (cf[o + 1] as number) * c1 + (cf[o + 2] as number) * c2;
      const ni = (cf[o + 1] as number) * s1 + (cf[o + 2] as number) * s2;
      const dr = (cf[o + 3] as number) + (cf[o + 4] as number) * c1 + (cf[o + 5] as number) * c2;
      const di = (cf[o + 4] as number) * s1 + (cf[o + 5] as number) * s2;
      const d = dr * dr + di * di;
      const qr = (nr * dr + ni * di) / d;
      const qi = (ni * dr - nr * di) / d;
      const tr = hr * qr - hi * qi;
      hi = hr * qi + hi * qr;
      hr = tr;
    }
    re[k] = hr;
    im[k] = hi;
    mag[k] = Math.hypot(hr, hi);
  }
  return { re, im, magnitude: mag };
}

/**
 * Band energy E = Σ y² / fs over the whole trace (BRIEF "band energy").
 * Units: (units of y)²·s, e.g. counts²·s or (m/s)²·s. Throws when fs ≤ 0.
 */
export function bandEnergy(y: Float64Array, sampleRateHz: number): number {
  if (!(sampleRateHz > 0)) throw new RangeError(`sample rate must be > 0 Hz, got ${sampleRateHz}`);
  let e = 0;
  for (let i = 0; i < y.length; i++) {
    const v = y[i] as number;
    e += v * v;
  }
  return e / sampleRateHz;
}
