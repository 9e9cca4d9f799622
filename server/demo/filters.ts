/**
 * Small recursive filters for colouring the demo's noise, kept apart from the engine's filters
 * (server/dsp) so that work on the engine never changes the demo files. Not a reference for anything.
 */

/** One second-order section, normalised so that a0 = 1: y = b0·x + b1·x₋₁ + b2·x₋₂ − a1·y₋₁ − a2·y₋₂. */
export interface Biquad {
  b0: number;
  b1: number;
  b2: number;
  a1: number;
  a2: number;
}

function checkEdge(fcHz: number, fsHz: number): void {
  if (!(fcHz > 0 && fcHz < fsHz / 2)) throw new RangeError(`filter edge ${fcHz} Hz must lie between 0 and ${fsHz / 2} Hz (fs/2)`);
}

/**
 * Second-order low-pass (R. Bristow-Johnson, "Cookbook formulae for audio EQ biquad filter
 * coefficients"): w0 = 2π·fc/fs, α = sin w0 / (2Q); b = [(1 − cos w0)/2, 1 − cos w0, (1 − cos w0)/2],
 * a = [1 + α, −2 cos w0, 1 − α]. Q = 1/√2 gives a Butterworth response (−3 dB at fc).
 * @throws RangeError when fc is not inside (0, fs/2)
 */
export function lowpass2(fcHz: number, fsHz: number, q = Math.SQRT1_2): Biquad {
  checkEdge(fcHz, fsHz);
  const w0 = (2 * Math.PI * fcHz) / fsHz;
  const c = Math.cos(w0);
  const alpha = Math.sin(w0) / (2 * q);
  const a0 = 1 + alpha;
  return { b0: (1 - c) / 2 / a0, b1: (1 - c) / a0, b2: (1 - c) / 2 / a0, a1: (-2 * c) / a0, a2: (1 - alpha) / a0 };
}

/**
 * Second-order high-pass (same cookbook): b = [(1 + cos w0)/2, −(1 + cos w0), (1 + cos w0)/2],
 * a = [1 + α, −2 cos w0, 1 − α].
 * @throws RangeError when fc is not inside (0, fs/2)
 */
export function highpass2(fcHz: number, fsHz: number, q = Math.SQRT1_2): Biquad {
  checkEdge(fcHz, fsHz);
  const w0 = (2 * Math.PI * fcHz) / fsHz;
  const c = Math.cos(w0);
  const alpha = Math.sin(w0) / (2 * q);
  const a0 = 1 + alpha;
  return { b0: (1 + c) / 2 / a0, b1: -(1 + c) / a0, b2: (1 + c) / 2 / a0, a1: (-2 * c) / a0, a2: (1 - alpha) / a0 };
}

/**
 * First-order low-pass by the bilinear transform of 1/(1 + s/ωc) with pre-warping:
 * K = tan(π·fc/fs), b = [K, K]/(1 + K), a1 = (K − 1)/(K + 1).
 * @throws RangeError when fc is not inside (0, fs/2)
 */
export function lowpass1(fcHz: number, fsHz: number): Biquad {
  checkEdge(fcHz, fsHz);
  const k = Math.tan((Math.PI * fcHz) / fsHz);
  return { b0: k / (1 + k), b1: k / (1 + k), b2: 0, a1: (k - 1) / (k + 1), a2: 0 };
}

/**
 * First-order high-pass by the bilinear transform of (s/ωc)/(1 + s/ωc): b = [1, −1]/(1 + K),
 * a1 = (K − 1)/(K + 1), K = tan(π·fc/fs).
 * @throws RangeError when fc is not inside (0, fs/2)
 */
export function highpass1(fcHz: number, fsHz: number): Biquad {
  checkEdge(fcHz, fsHz);
  const k = Math.tan((Math.PI * fcHz) / fsHz);
  return { b0: 1 / (1 + k), b1: -1 / (1 + k), b2: 0, a1: (k - 1) / (k + 1), a2: 0 };
}

/**
 * A band-pass f1 … f2 as a high-pass at f1 followed by a low-pass at f2, both of the given order
 * (1: 6 dB per octave on each side; 2: 12 dB per octave, Butterworth edges).
 * @throws RangeError for edges outside (0, fs/2) or f1 ≥ f2
 */
export function bandpass(order: 1 | 2, f1Hz: number, f2Hz: number, fsHz: number): Biquad[] {
  if (!(f1Hz < f2Hz)) throw new RangeError(`band-pass edges must be increasing, got ${f1Hz} and ${f2Hz} Hz`);
  return order === 1 ? [highpass1(f1Hz, fsHz), lowpass1(f2Hz, fsHz)] : [highpass2(f1Hz, fsHz), lowpass2(f2Hz, fsHz)];
}

/**
 * Runs the sections one after the other over `y` in place, from zero state (transposed direct
 * form II: y = b0·x + s1; s1 = b1·x − a1·y + s2; s2 = b2·x − a2·y).
 */
export function filterInPlace(chain: readonly Biquad[], y: Float64Array): void {
  for (const f of chain) {
    let s1 = 0;
    let s2 = 0;
    for (let i = 0; i < y.length; i++) {
      const x = y[i] ?? 0;
      const out = f.b0 * x + s1;
      s1 = f.b1 * x - f.a1 * out + s2;
      s2 = f.b2 * x - f.a2 * out;
      y[i] = out;
    }
  }
}
