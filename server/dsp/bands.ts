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
