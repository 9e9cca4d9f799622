/**
 * Display precision of the traces the API sends for drawing (the event screen's record section, the
 * review screen's window traces: server/features/queue/queue-traces.ts `tracesForDisplay`).
 *
 * A trace is drawn a few hundred pixels high at most, so one part in a thousand of its peak is
 * below one pixel; the engine's 17 significant digits per value only make the JSON large (about
 * 2 MB for a 10-station event at 2400 points). Each value is rounded to a multiple of one decimal
 * step per trace, `step = 10^(floor(log10(peak)) − (DISPLAY_DIGITS − 1))`, where `peak` is the
 * trace's largest |value|: the peak keeps DISPLAY_DIGITS significant digits, and every value is
 * within step/2 ≤ peak × DISPLAY_TOLERANCE of the engine's (step ≤ peak × 10^−(DISPLAY_DIGITS−1)).
 */

/** Significant digits the peak of a trace keeps. */
export const DISPLAY_DIGITS = 4;

/** The largest error of a rounded value, as a fraction of its trace's peak |value| (0.05 %). */
export const DISPLAY_TOLERANCE = 0.5 * 10 ** -(DISPLAY_DIGITS - 1);

/**
 * The values rounded for display, relative to their peak (see the module note): the output
 * prints with at most DISPLAY_DIGITS significant digits in JSON. All zero, empty or non-finite
 * peaks: returned unchanged (a copy).
 * @param values any unit (m/s, counts); not mutated
 * @returns a new array, each value within peak × DISPLAY_TOLERANCE of the input
 */
export function roundForDisplay(values: readonly number[]): number[] {
  let peak = 0;
  for (const v of values) peak = Math.max(peak, Math.abs(v));
  if (!(peak > 0) || !Number.isFinite(peak)) return [...values];
  const exp = Math.floor(Math.log10(peak)) - (DISPLAY_DIGITS - 1);
  // Integer multiples of 10^exp written out as decimal text and parsed: the nearest double to the
  // rounded decimal, so JSON.stringify prints it short (q × 10^exp in floating point would not).
  return values.map((v) => {
    const q = Math.round(v / 10 ** exp);
    return q === 0 ? 0 : Number(`${q}e${exp}`);
  });
}

/**
 * `roundForDisplay`, except that the peak sample (the first of largest |value|) keeps its exact
 * value: a curve whose peak is also read as a number (the review screen's "peak 1.23 µm/s", three
 * significant digits) then reads the engine's peak, not a rounding of a rounding.
 * @param values any unit; not mutated
 * @returns a new array: the peak exact, every other value within peak × DISPLAY_TOLERANCE of the input
 */
export function roundCurveForDisplay(values: readonly number[]): number[] {
  const out = roundForDisplay(values);
  let at = -1;
  let peak = 0;
  for (let i = 0; i < values.length; i++) {
    const a = Math.abs(values[i] as number);
    if (a > peak) {
      peak = a;
      at = i;
    }
  }
  if (at >= 0) out[at] = values[at] as number;
  return out;
}

/**
 * Values rounded to `decimals` decimal places (times to the microsecond: 6; levels in dB: 2), each
 * the nearest double to its rounded decimal, so JSON prints it short. Non-finite values unchanged.
 * @param values not mutated
 * @param decimals places after the point, 0–15
 * @returns a new array, each value within 0.5 × 10^−decimals of the input
 */
export function roundToDecimals(values: readonly number[], decimals: number): number[] {
  if (!Number.isInteger(decimals) || decimals < 0 || decimals > 15) throw new RangeError(`decimals must be a whole number 0–15, got ${decimals}`);
  const scale = 10 ** decimals;
  return values.map((v) => {
    if (!Number.isFinite(v)) return v;
    const q = Math.round(v * scale);
    return q === 0 ? 0 : Number(`${q}e-${decimals}`);
  });
}
