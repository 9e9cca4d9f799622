/**
 * Validation of the analysis bands against a channel's sample rate.
 */

/** The fraction of fs at or above which a band edge is refused (brief: 0.45·fs, common practice: stay clear of Nyquist). */
export const MAX_EDGE_FRACTION_OF_FS = 0.45;

/** A band error: names the band and the sample rate. */
export class BandError extends Error {
  override readonly name = 'BandError';
}

/**
 * Check a band `[fmin, fmax]` (Hz) for a channel sampled at fs (Hz):
 * requires 0 < fmin < fmax; an upper edge ≥ 0.45·fs is refused (`policy: 'refuse'`, throws
 * BandError naming the band and fs) or lowered to 0.45·fs with a warning (`policy: 'cap'`; refused
 * anyway when fmin is itself ≥ 0.45·fs, since nothing would be left).
 * Returns the band to use and an optional warning in words.
 */
export function validateBand(
  name: string,
  band: { fmin: number; fmax: number },
  sampleRateHz: number,
  policy: 'refuse' | 'cap',
): { fmin: number; fmax: number; warning?: string } {
  const { fmin, fmax } = band;
  if (!(fmin > 0) || !Number.isFinite(fmin)) throw new BandError(`${name} band: lower edge ${fmin} Hz must be above 0 Hz`);
  if (!(fmin < fmax) || !Number.isFinite(fmax)) throw new BandError(`${name} band: lower edge ${fmin} Hz must be below the upper edge ${fmax} Hz`);
  const limit = MAX_EDGE_FRACTION_OF_FS * sampleRateHz;
  if (fmax < limit) return { fmin, fmax };
  const what = `${name} band ${fmin}–${fmax} Hz reaches ${MAX_EDGE_FRACTION_OF_FS}·fs = ${round(limit)} Hz at a sample rate of ${sampleRateHz} Hz`;
  if (policy === 'refuse' || fmin >= limit) throw new BandError(`${what}: refused (choose a lower upper edge or a faster channel)`);
  return { fmin, fmax: limit, warning: `${what}: upper edge lowered to ${round(limit)} Hz` };
}

function round(v: number): number {
  return Math.round(v * 1000) / 1000;
}

/** The profile's default high band (the brief's table), Hz. */
export const DEFAULT_HIGH_BAND = { fmin: 2, fmax: 10 } as const;
/** Channels at or below this rate are long-period channels (LH, VH…): not for event triage, Hz. */
export const MIN_TRIAGE_RATE_HZ = 1;

/**
 * The high band to use on a channel: the profile's, except that the DEFAULT band (2–10 Hz) is fitted
 * to slower channels instead of refused, as the brief's table says ("on slower channels a default that
 * fits under 0.45·fs, e.g. 2–8 Hz at 20 sps"): its upper edge becomes the largest whole number of Hz
 * ≤ 0.4·fs (8 Hz at 20 sps, 4 Hz at 10 sps), with a warning. A band a station set itself is kept
 * and checked as before. Channels at or below 1 sps are refused (BandError) with the reason; so is a
 * rate too slow for any high band above 2 Hz.
 */
export function highBandForRate(
  band: { fmin: number; fmax: number },
  sampleRateHz: number,
): { band: { fmin: number; fmax: number }; warning?: string } {
  if (!(sampleRateHz > MIN_TRIAGE_RATE_HZ)) {
    throw new BandError(`a sample rate of ${sampleRateHz} Hz is a long-period channel (1 sps or slower): it cannot show a local event's 2–10 Hz energy and is not triaged`);
  }
  const isDefault = band.fmin === DEFAULT_HIGH_BAND.fmin && band.fmax === DEFAULT_HIGH_BAND.fmax;
  if (!isDefault || band.fmax < MAX_EDGE_FRACTION_OF_FS * sampleRateHz) return { band };
  const fmax = Math.floor(0.4 * sampleRateHz);
  if (!(fmax > band.fmin)) {
    throw new BandError(`a sample rate of ${sampleRateHz} Hz leaves no room for the default high band above ${band.fmin} Hz (its upper edge must stay below 0.45·fs = ${round(MAX_EDGE_FRACTION_OF_FS * sampleRateHz)} Hz)`);
  }
  return { band: { fmin: band.fmin, fmax }, warning: `default high band fitted to ${sampleRateHz} sps: ${band.fmin}–${fmax} Hz instead of ${band.fmin}–${band.fmax} Hz` };
}
