import type { PlotSeries } from './plot-frame';

/** The style index (colour and dash, see PlotFrame) of each noise model. */
export const noiseModelStyle = { nlnm: 1, nhnm: 2 } as const;

/**
 * Peterson's (1993) low and high noise models as plot series, drawn alike on every plot that shows
 * them (station health and the review spectrum): the measured PSD goes first in style 0 (solid),
 * then NLNM in style 1 and NHNM in style 2 (their own colours and dash patterns, see plotDashes),
 * always in that order, so one look means one model wherever it appears.
 * @param nlnmDb NLNM on the plot's frequencies, dB rel 1 (m/s²)²/Hz (null outside its periods)
 * @param nhnmDb NHNM on the same frequencies, dB rel 1 (m/s²)²/Hz
 */
export function noiseModelSeries(nlnmDb: Array<number | null>, nhnmDb: Array<number | null>): PlotSeries[] {
  return [
    { label: 'NLNM (Peterson 1993)', values: nlnmDb, styleIndex: noiseModelStyle.nlnm },
    { label: 'NHNM (Peterson 1993)', values: nhnmDb, styleIndex: noiseModelStyle.nhnm },
  ];
}
