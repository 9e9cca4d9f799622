/**
 * Local magnitude ML from Wood-Anderson amplitudes (wood-anderson.ts): the −log A0 distance law,
 * channel, station and network magnitudes.
 *
 * Richter's definition (Richter 1935, BSSA 25(1), 1–32; common practice): ML = log10 A − log10 A0(r),
 * A the zero-to-peak Wood-Anderson amplitude in mm, with −log10 A0(100 km) = 3, so that 1 mm at
 * 100 km is ML 3.0.
 */
import { median } from '@shared/math/median';

/**
 * −log10 A0(r) of Hutton & Boore (1987), BSSA 77(6), 2074–2094, for southern California (the
 * default law of the issue):
 *   −log A0 = 1.110·log10(r/100) + 0.00189·(r − 100) + 3.0,
 * r the hypocentral distance in km. It is 3.0 at 100 km by construction (Richter's anchor). Their
 * data spanned roughly 10 to 700 km (from memory); outside that the law is extrapolated
 * (`distanceNote` says so).
 * @throws RangeError when r is not a finite number > 0 km.
 */
export function minusLogA0HuttonBoore(hypocentralDistanceKm: number): number {
  const r = hypocentralDistanceKm;
  if (!(r > 0) || !Number.isFinite(r)) throw new RangeError(`ML: hypocentral distance must be a finite number > 0 km, got ${r}`);
  return 1.11 * Math.log10(r / 100) + 0.00189 * (r - 100) + 3.0;
}

/** Distances over which the Hutton & Boore (1987) law was derived, km (from memory). */
export const HUTTON_BOORE_RANGE_KM = Object.freeze({ min: 10, max: 700 });

/** A note when r lies outside the law's range of derivation, else null. */
export function distanceNote(hypocentralDistanceKm: number): string | null {
  const { min, max } = HUTTON_BOORE_RANGE_KM;
  if (hypocentralDistanceKm < min || hypocentralDistanceKm > max) {
    return `hypocentral distance ${hypocentralDistanceKm.toFixed(1)} km lies outside ${min}–${max} km, where the −log A0 law was derived: the magnitude is extrapolated`;
  }
  return null;
}

/** A −log10 A0 law: hypocentral distance (km) → correction (magnitude units). */
export type MinusLogA0 = (hypocentralDistanceKm: number) => number;

/** Options of the ML functions. */
export interface MagnitudeOptions {
  /** The distance law (default Hutton & Boore 1987). */
  minusLogA0?: MinusLogA0;
  /** The station's correction, added to each channel's ML (default 0), magnitude units. */
  stationCorrection?: number;
}

/**
 * ML of one channel: log10(A) + (−log10 A0(r)) + station correction, A in mm (Wood-Anderson,
 * zero-to-peak), r the hypocentral distance in km.
 * @throws RangeError when A is not a finite number > 0 mm, or from the distance law.
 */
export function localMagnitude(amplitudeMm: number, hypocentralDistanceKm: number, options: MagnitudeOptions = {}): number {
  if (!(amplitudeMm > 0) || !Number.isFinite(amplitudeMm)) throw new RangeError(`ML: amplitude must be a finite number > 0 mm, got ${amplitudeMm}`);
  const correction = options.stationCorrection ?? 0;
  if (!Number.isFinite(correction)) throw new RangeError(`ML: station correction must be a finite number, got ${correction}`);
  const law = options.minusLogA0 ?? minusLogA0HuttonBoore;
  return Math.log10(amplitudeMm) + law(hypocentralDistanceKm) + correction;
}

/** A station's ML from its horizontal channels. */
export interface StationMagnitude {
  /** Mean of the channel MLs. */
  value: number;
  /** ML of each horizontal channel, in the order given. */
  channelValues: number[];
}

/**
 * Station ML: the mean of the ML of each horizontal channel (the rule; equal to the ML of the
 * geometric mean of the amplitudes), from one or two (or more) horizontal amplitudes in mm.
 * @throws RangeError when no amplitude is given, or from `localMagnitude`.
 */
export function stationMagnitude(horizontalAmplitudesMm: readonly number[], hypocentralDistanceKm: number, options: MagnitudeOptions = {}): StationMagnitude {
  if (horizontalAmplitudesMm.length === 0) throw new RangeError('ML: a station magnitude needs at least one horizontal amplitude');
  const channelValues = horizontalAmplitudesMm.map((a) => localMagnitude(a, hypocentralDistanceKm, options));
  return { value: channelValues.reduce((s, v) => s + v, 0) / channelValues.length, channelValues };
}

/** The event's ML from its station magnitudes. */
export interface NetworkMagnitude {
  type: 'ML';
  /** Median of the station MLs. */
  value: number;
  /** 1.4826 × the median absolute deviation from the median (a robust σ); null for one station. */
  uncertainty: number | null;
  /** Sample standard deviation of the station MLs (n − 1); null for one station. */
  standardDeviation: number | null;
  stationCount: number;
  /** How the value and the uncertainty were formed, in words. */
  method: string;
}

/**
 * Network ML: the median of the station MLs (robust to one bad station; the rule), with
 * 1.4826·MAD as its uncertainty (1.4826 makes the MAD estimate σ for normally distributed values;
 * common practice) and the plain sample standard deviation beside it.
 * @throws RangeError when there is no station magnitude or one is not finite.
 */
export function networkMagnitude(stationMagnitudes: readonly number[]): NetworkMagnitude {
  const n = stationMagnitudes.length;
  if (n === 0) throw new RangeError('ML: no station magnitudes to combine');
  stationMagnitudes.forEach((v, i) => {
    if (!Number.isFinite(v)) throw new RangeError(`ML: station magnitude ${i + 1} is not a finite number`);
  });
  const sorted = [...stationMagnitudes].sort((a, b) => a - b);
  const value = median(sorted);
  const mad = median(sorted.map((v) => Math.abs(v - value)).sort((a, b) => a - b));
  const mean = sorted.reduce((s, v) => s + v, 0) / n;
  const sd = n > 1 ? Math.sqrt(sorted.reduce((s, v) => s + (v - mean) ** 2, 0) / (n - 1)) : null;
  return {
    type: 'ML',
    value,
    uncertainty: n > 1 ? 1.4826 * mad : null,
    standardDeviation: sd,
    stationCount: n,
    method: `median of ${n} station ML${n === 1 ? '' : 's'}; uncertainty 1.4826 × median absolute deviation`,
  };
}
