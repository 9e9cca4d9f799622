/**
 * Where the spectrogram image sits on the traces' time axis and the frequency axis.
 *
 * Column j of the spectrogram is the spectrum of one segment centred at `times[j]` (s from the
 * window start); columns are `step` apart, so column j is drawn over [times[j] − step/2,
 * times[j] + step/2] and the image spans [times[0] − step/2, times[n−1] + step/2]. The window's
 * first and last half segment have no column of their own (no full segment fits), which shows as
 * an empty strip rather than an image stretched over the whole window. Likewise bin k at
 * `freqs[k]` covers [freqs[k] − df/2, freqs[k] + df/2].
 * A lone column is one segment wide: a segment of N samples at fs has bins fs/N apart, so its
 * length is 1/df s (the DFT's bin spacing, common practice).
 * @param times column centres, s, evenly spaced and increasing (at least one)
 * @param freqs bin frequencies, Hz, evenly spaced from 0 (at least two)
 * @returns image edges: fromS..toS (s) and fromHz..toHz (Hz)
 */
export function spectrogramExtent(times: readonly number[], freqs: readonly number[]): { fromS: number; toS: number; fromHz: number; toHz: number } {
  const t0 = times[0];
  const t1 = times[times.length - 1];
  const f1 = freqs[freqs.length - 1];
  if (t0 === undefined || t1 === undefined || f1 === undefined || freqs.length < 2 || !(f1 > 0)) throw new RangeError('spectrogramExtent: needs at least one column and two frequencies from 0 up');
  const df = f1 / (freqs.length - 1);
  const stepS = times.length > 1 ? (t1 - t0) / (times.length - 1) : 1 / df;
  return { fromS: t0 - stepS / 2, toS: t1 + stepS / 2, fromHz: -df / 2, toHz: f1 + df / 2 };
}
