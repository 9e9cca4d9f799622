/**
 * Digital Butterworth filter design in second-order sections, following the published design path
 * used by `scipy.signal.butter(N, Wn, btype, fs=fs, output='sos')` (scipy 1.10):
 * analog prototype (poles on the unit circle) → frequency transform (lowpass/highpass/bandpass/
 * bandstop, after pre-warping the edges) → bilinear transform → zeros/poles/gain → second-order
 * sections with scipy's `zpk2sos` "nearest" pairing and ordering, so coefficients compare
 * one-to-one with scipy.
 *
 * References: Oppenheim & Schafer, Discrete-Time Signal Processing (3rd ed.), §7.1 (bilinear
 * transform and pre-warping); scipy.signal source (iirfilter, buttap, lp2bp_zpk, lp2bs_zpk,
 * bilinear_zpk, zpk2sos, _cplxreal), whose algorithm is re-implemented here.
 */

/** A complex number. */
export interface Complex {
  re: number;
  im: number;
}

/** Zeros, poles and gain of a digital filter (z-plane). */
export interface Zpk {
  zeros: Complex[];
  poles: Complex[];
  gain: number;
}

/**
 * Second-order sections, row-major, 6 numbers per section `[b0, b1, b2, a0, a1, a2]` with a0 = 1,
 * exactly scipy's `sos` array layout.
 */
export interface Sos {
  sections: number;
  coefficients: Float64Array;
}

/** Filter type, as scipy's `btype`. */
export type FilterType = 'lowpass' | 'highpass' | 'bandpass' | 'bandstop';

const c = (re: number, im = 0): Complex => ({ re, im });
const add = (a: Complex, b: Complex): Complex => c(a.re + b.re, a.im + b.im);
const sub = (a: Complex, b: Complex): Complex => c(a.re - b.re, a.im - b.im);
const mul = (a: Complex, b: Complex): Complex => c(a.re * b.re - a.im * b.im, a.re * b.im + a.im * b.re);
const scale = (a: Complex, s: number): Complex => c(a.re * s, a.im * s);
const abs = (a: Complex): number => Math.hypot(a.re, a.im);
function div(a: Complex, b: Complex): Complex {
  const d = b.re * b.re + b.im * b.im;
  return c((a.re * b.re + a.im * b.im) / d, (a.im * b.re - a.re * b.im) / d);
}
/** Principal square root (branch cut on the negative real axis, as numpy). */
function csqrt(a: Complex): Complex {
  if (a.re === 0 && a.im === 0) return c(0, a.im);
  const r = abs(a);
  const re = Math.sqrt((r + a.re) / 2);
  const im = Math.sqrt(Math.max(0, (r - a.re) / 2));
  return c(re, a.im < 0 || (a.im === 0 && Object.is(a.im, -0)) ? -im : im);
}
function prod(xs: Complex[]): Complex {
  let p = c(1);
  for (const x of xs) p = mul(p, x);
  return p;
}
const isReal = (a: Complex): boolean => a.im === 0;

/** Butterworth analog low-pass prototype of order N: p_k = −exp(iπm/(2N)), m = −N+1, −N+3, …, N−1. */
function buttap(order: number): Complex[] {
  const poles: Complex[] = [];
  for (let m = -order + 1; m < order; m += 2) {
    const theta = (Math.PI * m) / (2 * order);
    // Middle value m = 0 gives an exactly real pole, as scipy.
    poles.push(m === 0 ? c(-1, -0) : c(-Math.cos(theta), -Math.sin(theta)));
  }
  return poles;
}

/**
 * Design a digital Butterworth filter as zeros, poles and gain.
 *
 * @param order prototype order N (≥ 1); band-pass and band-stop have 2N poles, as scipy.
 * @param edgesHz one edge (lowpass/highpass) or two `[f1, f2]` (bandpass/bandstop), Hz, the −3.01 dB
 *   points of the digital filter (|H|² = ½ there).
 * @param type filter type.
 * @param sampleRateHz sampling frequency, Hz.
 * @throws RangeError when the order is not a whole number ≥ 1, an edge is not in (0, fs/2), or f1 ≥ f2.
 */
export function butterworthZpk(order: number, edgesHz: readonly number[], type: FilterType, sampleRateHz: number): Zpk {
  if (!Number.isInteger(order) || order < 1 || order > 24) {
    throw new RangeError(`Butterworth order must be a whole number from 1 to 24, got ${order}`);
  }
  if (!(sampleRateHz > 0) || !Number.isFinite(sampleRateHz)) {
    throw new RangeError(`sample rate must be a positive number of Hz, got ${sampleRateHz}`);
  }
  const nyq = sampleRateHz / 2;
  const needed = type === 'bandpass' || type === 'bandstop' ? 2 : 1;
  if (edgesHz.length !== needed) {
    throw new RangeError(`a ${type} filter needs ${needed} edge frequenc${needed === 1 ? 'y' : 'ies'}, got ${edgesHz.length}`);
  }
  for (const f of edgesHz) {
    if (!(f > 0 && f < nyq)) {
      throw new RangeError(`filter edge ${f} Hz must lie strictly between 0 and the Nyquist frequency ${nyq} Hz (fs ${sampleRateHz} Hz)`);
    }
  }
  if (needed === 2 && !((edgesHz[0] as number) < (edgesHz[1] as number))) {
    throw new RangeError(`band edges must satisfy f1 < f2, got ${edgesHz[0]}–${edgesHz[1]} Hz`);
  }
  // Normalised to Nyquist, then pre-warped for a bilinear transform at "fs = 2" (scipy's convention).
  const fsDesign = 2;
  const warped = edgesHz.map((f) => 2 * fsDesign * Math.tan((Math.PI * ((2 * f) / sampleRateHz)) / fsDesign));
  const proto = buttap(order);
  let zeros: Complex[] = [];
  let poles: Complex[];
  let gain = 1;
  const degree = proto.length; // prototype has no zeros
  if (type === 'lowpass') {
    const wo = warped[0] as number;
    poles = proto.map((p) => scale(p, wo));
    gain = wo ** degree;
  } else if (type === 'highpass') {
    const wo = warped[0] as number;
    poles = proto.map((p) => div(c(wo), p));
    zeros = Array.from({ length: degree }, () => c(0));
    gain = div(c(1), prod(proto.map((p) => scale(p, -1)))).re;
  } else {
    const w1 = warped[0] as number;
    const w2 = warped[1] as number;
    const bw = w2 - w1;
    const wo = Math.sqrt(w1 * w2);
    const wo2 = c(wo * wo);
    if (type === 'bandpass') {
      const pl = proto.map((p) => scale(p, bw / 2));
      const plus = pl.map((p) => add(p, csqrt(sub(mul(p, p), wo2))));
      const minus = pl.map((p) => sub(p, csqrt(sub(mul(p, p), wo2))));
      poles = [...plus, ...minus];
      zeros = Array.from({ length: degree }, () => c(0));
      gain = bw ** degree;
    } else {
      const ph = proto.map((p) => div(c(bw / 2), p));
      const plus = ph.map((p) => add(p, csqrt(sub(mul(p, p), wo2))));
      const minus = ph.map((p) => sub(p, csqrt(sub(mul(p, p), wo2))));
      poles = [...plus, ...minus];
      zeros = [
        ...Array.from({ length: degree }, () => c(0, wo)),
        ...Array.from({ length: degree }, () => c(0, -wo)),
      ];
      gain = div(c(1), prod(proto.map((p) => scale(p, -1)))).re;
    }
  }
  // Bilinear transform at fs = 2: z = (2fs + s)/(2fs − s); zeros at infinity go to z = −1.
  const fs2 = c(2 * fsDesign);
  const rel = poles.length - zeros.length;
  const gz = prod(zeros.map((z) => sub(fs2, z)));
  const gp = prod(poles.map((p) => sub(fs2, p)));
  const kz = gain * div(gz, gp).re;
  const zz = zeros.map((z) => div(add(fs2, z), sub(fs2, z)));
  for (let i = 0; i < rel; i++) zz.push(c(-1));
  const pz = poles.map((p) => div(add(fs2, p), sub(fs2, p)));
  return { zeros: zz, poles: pz, gain: kz };
}

/**
 * Split complex-conjugate pairs and reals as scipy's `_cplxreal`: sort by real part then |imag|,
 * a value is real when |imag| ≤ 100·eps·|z|; of each pair keep the one with positive imaginary part
 * (averaged with the conjugate of its partner). Returns `[complexHalves, reals]`.
 * Throws when a complex value has no matching conjugate.
 */
function cplxreal(values: Complex[]): [Complex[], Complex[]] {
  const tol = 100 * Number.EPSILON;
  const sorted = [...values].sort((a, b) => a.re - b.re || Math.abs(a.im) - Math.abs(b.im));
  const reals: Complex[] = [];
  const rest: Complex[] = [];
  for (const z of sorted) {
    if (Math.abs(z.im) <= tol * abs(z)) reals.push(c(z.re));
    else rest.push(z);
  }
  const zp = rest.filter((z) => z.im > 0);
  const zn = rest.filter((z) => z.im < 0);
  if (zp.length !== zn.length) throw new RangeError('zeros or poles contain a complex value with no matching conjugate');
  // Runs of (nearly) equal real part are sorted by |imag|.
  let start = 0;
  while (start < zp.length) {
    let stop = start;
    while (stop + 1 < zp.length && (zp[stop + 1] as Complex).re - (zp[stop] as Complex).re <= tol * abs(zp[stop] as Complex)) stop++;
    if (stop > start) {
      const byImag = (a: Complex, b: Complex): number => Math.abs(a.im) - Math.abs(b.im);
      zp.splice(start, stop - start + 1, ...zp.slice(start, stop + 1).sort(byImag));
      zn.splice(start, stop - start + 1, ...zn.slice(start, stop + 1).sort(byImag));
    }
    start = stop + 1;
  }
  const halves = zp.map((p, i) => {
    const n = zn[i] as Complex;
    if (abs(sub(p, c(n.re, -n.im))) > tol * abs(n)) throw new RangeError('zeros or poles contain a complex value with no matching conjugate');
    return c((p.re + n.re) / 2, (p.im - n.im) / 2);
  });
  return [halves, reals];
}

/** Index of the element nearest to `to` among those of the given kind (scipy _nearest_real_complex_idx). */
function nearestIndex(from: Complex[], to: Complex, which: 'real' | 'complex' | 'any'): number {
  let best = -1;
  let bestD = Infinity;
  for (let i = 0; i < from.length; i++) {
    const z = from[i] as Complex;
    if (which === 'real' && !isReal(z)) continue;
    if (which === 'complex' && isReal(z)) continue;
    const d = abs(sub(z, to));
    if (d < bestD) {
      bestD = d;
      best = i;
    }
  }
  if (best < 0) throw new RangeError(`no ${which} zero left to pair with a pole`);
  return best;
}

/** Index of the "worst" pole: closest to the unit circle (scipy idx_worst for digital filters). */
function worstIndex(ps: Complex[], only?: (p: Complex) => boolean): number {
  let best = -1;
  let bestD = Infinity;
  for (let i = 0; i < ps.length; i++) {
    const p = ps[i] as Complex;
    if (only && !only(p)) continue;
    const d = Math.abs(1 - abs(p));
    if (d < bestD) {
      bestD = d;
      best = i;
    }
  }
  return best;
}

/** Real polynomial coefficients of Π(x − r) for one or two roots (a conjugate pair gives real coefficients). */
function poly(roots: Complex[]): number[] {
  if (roots.length === 0) return [1];
  if (roots.length === 1) return [1, -(roots[0] as Complex).re];
  const [r1, r2] = roots as [Complex, Complex];
  return [1, -(r1.re + r2.re), mul(r1, r2).re];
}

/** One section [b0 b1 b2 1 a1 a2] from ≤ 2 zeros and ≤ 2 poles, right-aligned as scipy _single_zpksos. */
function section(zs: Complex[], ps: Complex[]): number[] {
  const s = [0, 0, 0, 0, 0, 0];
  const b = poly(zs);
  const a = poly(ps);
  for (let i = 0; i < b.length; i++) s[3 - b.length + i] = b[i] as number;
  for (let i = 0; i < a.length; i++) s[6 - a.length + i] = a[i] as number;
  return s;
}

/**
 * Zeros/poles/gain to second-order sections, re-implementing scipy's `zpk2sos(z, p, k,
 * pairing='nearest')` for digital filters: poles closest to the unit circle go to the last section;
 * each pole (pair) is paired with the nearest zero(s); the gain multiplies the first section's b.
 * Throws when zeros or poles are not in conjugate pairs.
 */
export function zpkToSos(zpk: Zpk): Sos {
  let z = [...zpk.zeros];
  let p = [...zpk.poles];
  while (p.length < z.length) p.push(c(0));
  while (z.length < p.length) z.push(c(0));
  const nSections = Math.floor((Math.max(p.length, z.length) + 1) / 2);
  if (p.length % 2 === 1) {
    p.push(c(0));
    z.push(c(0));
  }
  const [zc, zr] = cplxreal(z);
  const [pc, pr] = cplxreal(p);
  z = [...zc, ...zr];
  p = [...pc, ...pr];
  const out = new Float64Array(nSections * 6);
  const take = (arr: Complex[], i: number): Complex => arr.splice(i, 1)[0] as Complex;
  for (let si = nSections - 1; si >= 0; si--) {
    const p1 = take(p, worstIndex(p));
    const realPolesLeft = p.filter(isReal).length;
    let sec: number[];
    if (isReal(p1) && realPolesLeft === 0) {
      // Last remaining real pole: pair with the nearest real zero, as a first-order section.
      const z1 = take(z, nearestIndex(z, p1, 'real'));
      sec = section([z1, c(0)], [p1, c(0)]);
    } else if (p.length + 1 === z.length && !isReal(p1) && realPolesLeft === 1 && z.filter(isReal).length === 1) {
      // One real pole and one real zero left: this complex pole must take a complex zero.
      const z1 = take(z, nearestIndex(z, p1, 'complex'));
      sec = section([z1, c(z1.re, -z1.im)], [p1, c(p1.re, -p1.im)]);
    } else {
      let p2: Complex;
      if (isReal(p1)) p2 = take(p, worstIndex(p, isReal));
      else p2 = c(p1.re, -p1.im);
      if (z.length > 0) {
        const z1 = take(z, nearestIndex(z, p1, 'any'));
        if (!isReal(z1)) sec = section([z1, c(z1.re, -z1.im)], [p1, p2]);
        else if (z.length > 0) sec = section([z1, take(z, nearestIndex(z, p1, 'real'))], [p1, p2]);
        else sec = section([z1], [p1, p2]);
      } else {
        sec = section([], [p1, p2]);
      }
    }
    out.set(sec, si * 6);
  }
  for (let i = 0; i < 3; i++) out[i] = (out[i] as number) * zpk.gain;
  return { sections: nSections, coefficients: out };
}

/**
 * Butterworth design in second-order sections: `butterworthZpk` then `zpkToSos`; equals
 * `scipy.signal.butter(order, edgesHz, type, fs=sampleRateHz, output='sos')` to rounding.
 * @throws RangeError as `butterworthZpk`.
 */
export function butterworthSos(order: number, edgesHz: readonly number[], type: FilterType, sampleRateHz: number): Sos {
  return zpkToSos(butterworthZpk(order, edgesHz, type, sampleRateHz));
}
