/**
 * Instrument response: from counts to ground velocity, and acceleration PSD in dB.
 */

/** A poles-and-zeros response (StationXML PolesZeros stage, Laplace in rad/s) with its overall sensitivity. */
export interface PolesZerosResponse {
  /** Zeros, rad/s. */
  zeros: ReadonlyArray<{ re: number; im: number }>;
  /** Poles, rad/s. */
  poles: ReadonlyArray<{ re: number; im: number }>;
  /** Normalisation factor A0 (makes |A0·Π(s−z)/Π(s−p)| = 1 at the normalisation frequency). */
  normalizationFactor: number;
  /** Overall sensitivity, counts per (m/s), at `sensitivityFrequencyHz`. */
  sensitivity: number;
  /** Frequency at which `sensitivity` holds, Hz. */
  sensitivityFrequencyHz: number;
}

/**
 * |A0 · Π(jω − z) / Π(jω − p)| at frequency f (ω = 2πf), dimensionless (Laplace transform in rad/s,
 * FDSN StationXML "LAPLACE (RADIANS/SECOND)" convention).
 */
export function pazMagnitude(paz: Pick<PolesZerosResponse, 'zeros' | 'poles' | 'normalizationFactor'>, frequencyHz: number): number {
  const w = 2 * Math.PI * frequencyHz;
  let num = Math.abs(paz.normalizationFactor);
  for (const z of paz.zeros) num *= Math.hypot(-z.re, w - z.im);
  let den = 1;
  for (const p of paz.poles) den *= Math.hypot(-p.re, w - p.im);
  return den === 0 ? Infinity : num / den;
}

/**
 * The full response magnitude |H(f)| in counts per (m/s):
 * |H(f)| = S · |PAZ(f)| / |PAZ(f_s)|, S the overall sensitivity at f_s. Dividing by |PAZ(f_s)| keeps
 * the result right even when A0 is stated for another frequency.
 * @throws RangeError when the sensitivity is not > 0 or the PAZ is zero at f_s.
 */
export function responseMagnitude(paz: PolesZerosResponse, frequencyHz: number): number {
  if (!(paz.sensitivity > 0)) throw new RangeError(`sensitivity must be > 0 counts per m/s, got ${paz.sensitivity}`);
  const ref = pazMagnitude(paz, paz.sensitivityFrequencyHz);
  if (!(ref > 0) || !Number.isFinite(ref)) {
    throw new RangeError(`the poles and zeros give no response at the sensitivity frequency ${paz.sensitivityFrequencyHz} Hz`);
  }
  return (paz.sensitivity * pazMagnitude(paz, frequencyHz)) / ref;
}

/**
 * Velocity PSD in (m/s)²/Hz from a counts PSD in counts²/Hz: P_v(f) = P_c(f)/|H(f)|², with |H| the flat
 * sensitivity (a number, counts per m/s) or the full poles-and-zeros response. Bins where |H| = 0 or
 * is not finite become NaN.
 */
export function countsPsdToVelocity(freqsHz: ArrayLike<number>, countsPsd: ArrayLike<number>, response: number | PolesZerosResponse): Float64Array {
  const out = new Float64Array(countsPsd.length);
  for (let k = 0; k < countsPsd.length; k++) {
    const h = typeof response === 'number' ? response : responseMagnitude(response, freqsHz[k] as number);
    out[k] = h > 0 && Number.isFinite(h) ? (countsPsd[k] as number) / (h * h) : NaN;
  }
  return out;
}

/**
 * Acceleration PSD in dB rel 1 (m/s²)²/Hz from a velocity PSD in (m/s)²/Hz:
 * 10·log10(P_v(f)·(2πf)²) (differentiation multiplies the PSD by ω², common practice).
 * f = 0 and non-positive values give −Infinity.
 */
export function velocityPsdToAccelerationDb(freqsHz: ArrayLike<number>, velocityPsd: ArrayLike<number>): Float64Array {
  const out = new Float64Array(velocityPsd.length);
  for (let k = 0; k < velocityPsd.length; k++) {
    const w = 2 * Math.PI * (freqsHz[k] as number);
    const a = (velocityPsd[k] as number) * w * w;
    out[k] = a > 0 ? 10 * Math.log10(a) : -Infinity;
  }
  return out;
}
