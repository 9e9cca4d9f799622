/**
 * Peterson (1993) New Low / New High Noise Models (NLNM / NHNM): ground-acceleration PSD in
 * dB rel 1 (m/s²)²/Hz, valid for periods 0.1 … 100 000 s.
 *
 * Source: J. Peterson, "Observations and modeling of seismic background noise", USGS Open-File
 * Report 93-322 (1993), tables of the piecewise-linear models: for period T in [P_k, P_{k+1}),
 * value = A_k + B_k·log10(T); the last segment runs to 100 000 s.
 *
 * Checked against a published copy: the models as tabulated by ObsPy (github.com/obspy/obspy,
 * LGPL-3.0, file obspy/signal/data/noise_models.npz, 1001 periods 0.1 … 100 000 s, commit
 * 0fd195ee4c37): tests/server/dsp/noise-models.test.ts compares 101 of its periods, at least one
 * in every segment of both models (copied into tests/fixtures/dsp/peterson-models.json), within
 * 0.001 dB (the npz keeps 6 significant digits); the test prints the worst difference.
 */

/** One segment [P, A, B]: from period P (s), value A + B·log10(T) dB. */
type Segment = readonly [number, number, number];

const NLNM: readonly Segment[] = [
  [0.1, -162.36, 5.64],
  [0.17, -166.7, 0],
  [0.4, -170.0, -8.3],
  [0.8, -166.4, 28.9],
  [1.24, -168.6, 52.48],
  [2.4, -159.98, 29.81],
  [4.3, -141.1, 0],
  [5.0, -71.36, -99.77],
  [6.0, -97.26, -66.49],
  [10.0, -132.18, -31.57],
  [12.0, -205.27, 36.16],
  [15.6, -37.65, -104.33],
  [21.9, -114.37, -47.1],
  [31.6, -160.58, -16.28],
  [45.0, -187.5, 0],
  [70.0, -216.47, 15.7],
  [101.0, -185.0, 0],
  [154.0, -168.34, -7.61],
  [328.0, -217.43, 11.9],
  [600.0, -258.28, 26.6],
  [10000.0, -346.88, 48.75],
];

const NHNM: readonly Segment[] = [
  [0.1, -108.73, -17.23],
  [0.22, -150.34, -80.5],
  [0.32, -122.31, -23.87],
  [0.8, -116.85, 32.51],
  [3.8, -108.48, 18.08],
  [4.6, -74.66, -32.95],
  [6.3, 0.66, -127.18],
  [7.9, -93.37, -22.42],
  [15.4, 73.54, -162.98],
  [20.0, -151.52, 10.01],
  [354.8, -206.66, 31.63],
];

/** Shortest and longest period of both models, s. */
export const NOISE_MODEL_PERIOD_RANGE_S = { min: 0.1, max: 100000 } as const;

/** Breakpoint periods of the NLNM and NHNM, s (for tests and plots). */
export const noiseModelBreakpoints = {
  nlnm: NLNM.map((s) => s[0]),
  nhnm: NHNM.map((s) => s[0]),
};

function evaluate(model: readonly Segment[], periodS: number): number | null {
  if (!(periodS >= NOISE_MODEL_PERIOD_RANGE_S.min && periodS <= NOISE_MODEL_PERIOD_RANGE_S.max)) return null;
  let seg = model[0] as Segment;
  for (const s of model) {
    if (periodS >= s[0]) seg = s;
    else break;
  }
  return seg[1] + seg[2] * Math.log10(periodS);
}

/** NLNM at period T (s), dB rel 1 (m/s²)²/Hz; null outside 0.1 … 100 000 s. */
export function nlnmDb(periodS: number): number | null {
  return evaluate(NLNM, periodS);
}

/** NHNM at period T (s), dB rel 1 (m/s²)²/Hz; null outside 0.1 … 100 000 s. */
export function nhnmDb(periodS: number): number | null {
  return evaluate(NHNM, periodS);
}

/** Where an acceleration PSD sits between the models. */
export interface NoiseModelPosition {
  /** Per PSD bin: (P − NLNM)/(NHNM − NLNM) (0 at the low model, 1 at the high model); null outside the models' periods. */
  fractions: (number | null)[];
  /** Median of the defined fractions; null when no bin falls in the models' range. */
  median: number | null;
  /** Share of defined bins below the NLNM and above the NHNM (0…1). */
  belowLow: number;
  aboveHigh: number;
}

/**
 * Position of an acceleration PSD (dB rel 1 (m/s²)²/Hz per frequency in Hz) against the NLNM/NHNM:
 * per bin the fraction (P − NLNM)/(NHNM − NLNM), its median, and the share of bins outside the models
 * (a dead channel sits far below the NLNM; a noisy site above the NHNM). Bins at f = 0 or with
 * non-finite dB are skipped.
 */
export function noiseModelPosition(freqsHz: ArrayLike<number>, accelDb: ArrayLike<number>): NoiseModelPosition {
  const fractions: (number | null)[] = [];
  const defined: number[] = [];
  let below = 0;
  let above = 0;
  for (let k = 0; k < freqsHz.length; k++) {
    const f = freqsHz[k] as number;
    const p = accelDb[k] as number;
    if (!(f > 0) || !Number.isFinite(p)) {
      fractions.push(null);
      continue;
    }
    const lo = nlnmDb(1 / f);
    const hi = nhnmDb(1 / f);
    if (lo === null || hi === null) {
      fractions.push(null);
      continue;
    }
    const fr = (p - lo) / (hi - lo);
    fractions.push(fr);
    defined.push(fr);
    if (p < lo) below++;
    if (p > hi) above++;
  }
  defined.sort((a, b) => a - b);
  const n = defined.length;
  const median = n === 0 ? null : n % 2 ? (defined[(n - 1) / 2] as number) : ((defined[n / 2 - 1] as number) + (defined[n / 2] as number)) / 2;
  return { fractions, median, belowLow: n ? below / n : 0, aboveHigh: n ? above / n : 0 };
}
