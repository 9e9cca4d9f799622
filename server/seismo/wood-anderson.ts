/**
 * The Wood-Anderson torsion seismometer, simulated from a ground-motion trace, and the peak amplitude
 * that local magnitude reads from it.
 *
 * Constants: natural period T₀ = 0.8 s, damping h = 0.7 (critical = 1), static magnification
 * G = 2080 (Uhrhammer & Collins 1990, BSSA 80(3), 702–716, who measured 2080 ± 60 in place of the
 * nominal 2800 of Anderson & Wood 1925). Displacement response (Laplace, s in rad/s):
 *   H_d(s) = G·s² / (s² + 2hω₀·s + ω₀²),  ω₀ = 2π/T₀,
 * i.e. two zeros at 0 and poles −hω₀ ± iω₀√(1 − h²) = −5.49779 ± 5.60886i rad/s (common practice;
 * the issue quotes the same poles). For a velocity input the instrument is H_v(s) = H_d(s)/s
 * = G·s/(s² + 2hω₀·s + ω₀²) in m per (m/s).
 */
import { filterBySpectrum, paddedSize } from './spectral-filter';

/** Wood-Anderson constants (Uhrhammer & Collins 1990). */
export const WOOD_ANDERSON = Object.freeze({
  /** Natural period, s. */
  naturalPeriodS: 0.8,
  /** Damping as a fraction of critical. */
  damping: 0.7,
  /** Static magnification (trace displacement per ground displacement at high frequency). */
  staticMagnification: 2080,
});

/** A complex number. */
export interface Complex {
  re: number;
  im: number;
}

/** What the input trace measures: ground velocity in m/s or ground displacement in m. */
export type GroundMotion = 'velocity' | 'displacement';

/** The two poles −hω₀ ± iω₀√(1 − h²), rad/s, upper one first. */
export function woodAndersonPoles(): [Complex, Complex] {
  const w0 = (2 * Math.PI) / WOOD_ANDERSON.naturalPeriodS;
  const h = WOOD_ANDERSON.damping;
  const re = -h * w0;
  const im = w0 * Math.sqrt(1 - h * h);
  return [{ re, im }, { re, im: -im }];
}

/**
 * Complex response of the Wood-Anderson instrument at frequency f (Hz), s = i·2πf:
 * H_d = G s²/(s² + 2hω₀ s + ω₀²) (dimensionless, trace m per ground m) for displacement input,
 * H_v = H_d/s (trace m per ground m/s, i.e. s) for velocity input. Negative f gives the conjugate.
 */
export function woodAndersonResponse(frequencyHz: number, input: GroundMotion): Complex {
  const w = 2 * Math.PI * frequencyHz;
  const w0 = (2 * Math.PI) / WOOD_ANDERSON.naturalPeriodS;
  const h = WOOD_ANDERSON.damping;
  const g = WOOD_ANDERSON.staticMagnification;
  // Denominator D = (iω)² + 2hω₀(iω) + ω₀² = (ω₀² − ω²) + i·2hω₀ω.
  const dr = w0 * w0 - w * w;
  const di = 2 * h * w0 * w;
  const den = dr * dr + di * di;
  // Numerator: G(iω)² = −Gω² (displacement) or G(iω) (velocity).
  const nr = input === 'displacement' ? -g * w * w : 0;
  const ni = input === 'displacement' ? 0 : g * w;
  return { re: (nr * dr + ni * di) / den, im: (ni * dr - nr * di) / den };
}

/** Seconds of decay padded after the trace: e^(−hω₀·5 s) ≈ 10⁻¹² of the response is left. */
const TAIL_S = 5;

/**
 * Wood-Anderson trace, mm, simulated from ground velocity (m/s) or displacement (m) sampled at fs, in
 * the frequency domain: the mean is removed (a constant offset would otherwise start a step transient
 * at the first sample), the trace zero-padded to a power of two N ≥ n + 5 s·fs so the product of
 * spectra is a linear, not circular, convolution (the instrument's memory decays as e^(−hω₀t), below
 * 10⁻¹² after 5 s), its DFT multiplied bin by bin by H(f_k) (f_k = k·fs/N, conjugate for the negative
 * frequencies), transformed back, cut to n samples and scaled m → mm. The result is the instrument's
 * output from rest at the first sample (causal); it is exact for band-limited input, unlike a bilinear
 * transform, whose frequency warping grows towards Nyquist.
 * The caller chooses the window (a taper, a detrend) before; the input is not modified.
 * @throws RangeError for an empty trace, a sample rate that is not > 0, or a non-finite sample.
 */
export function simulateWoodAnderson(trace: Float64Array, sampleRateHz: number, input: GroundMotion = 'velocity'): Float64Array {
  const n = trace.length;
  if (n === 0) throw new RangeError('Wood-Anderson simulation: the trace has no samples');
  if (!(sampleRateHz > 0) || !Number.isFinite(sampleRateHz)) throw new RangeError(`Wood-Anderson simulation: sample rate must be > 0 Hz, got ${sampleRateHz}`);
  let mean = 0;
  for (let i = 0; i < n; i++) {
    const v = trace[i] as number;
    if (!Number.isFinite(v)) throw new RangeError(`Wood-Anderson simulation: sample ${i} is not a finite number`);
    mean += v;
  }
  mean /= n;
  const size = paddedSize(n, sampleRateHz, TAIL_S);
  const x = new Float64Array(size);
  for (let i = 0; i < n; i++) x[i] = (trace[i] as number) - mean;
  // H(f_k) inline (see woodAndersonResponse), with the m → mm factor: no allocation per bin.
  const w0 = (2 * Math.PI) / WOOD_ANDERSON.naturalPeriodS;
  const twoHw0 = 2 * WOOD_ANDERSON.damping * w0;
  const g = WOOD_ANDERSON.staticMagnification;
  const dw = (2 * Math.PI * sampleRateHz) / size;
  const half = size / 2;
  const hr = new Float64Array(half + 1);
  const hi = new Float64Array(half + 1);
  for (let k = 0; k <= half; k++) {
    const w = k * dw;
    const dr = w0 * w0 - w * w;
    const di = twoHw0 * w;
    const den = dr * dr + di * di;
    const nr = input === 'displacement' ? -g * w * w : 0;
    const ni = input === 'displacement' ? 0 : g * w;
    hr[k] = (1000 * (nr * dr + ni * di)) / den;
    hi[k] = (1000 * (ni * dr - nr * di)) / den;
  }
  return filterBySpectrum(x, n, hr, hi);
}

/** The largest zero-to-peak amplitude of a trace and where it is. */
export interface PeakAmplitude {
  /** max |x| over the window, in the trace's units (mm for a Wood-Anderson trace). */
  amplitude: number;
  /** Sample index of the peak. */
  index: number;
  /** Time of the peak from the first sample, s. */
  timeS: number;
  /**
   * Period of the peak's half-cycle, s: twice the time between the zero crossings around the peak
   * (linearly interpolated); null when the window holds no crossing on one side.
   */
  periodS: number | null;
}

/**
 * Zero-to-peak maximum |x| of `trace` over the samples [startIndex, endIndex) (common practice for
 * ML: the largest Wood-Anderson excursion from zero), with the half-cycle period around it.
 * @throws RangeError for an empty window, indices outside the trace, or a sample rate that is not > 0.
 */
export function peakAmplitude(trace: Float64Array, sampleRateHz: number, startIndex = 0, endIndex = trace.length): PeakAmplitude {
  if (!(sampleRateHz > 0)) throw new RangeError(`peak amplitude: sample rate must be > 0 Hz, got ${sampleRateHz}`);
  if (!Number.isInteger(startIndex) || !Number.isInteger(endIndex) || startIndex < 0 || endIndex > trace.length || endIndex <= startIndex) {
    throw new RangeError(`peak amplitude: window [${startIndex}, ${endIndex}) is empty or outside the trace of ${trace.length} samples`);
  }
  let index = startIndex;
  for (let i = startIndex + 1; i < endIndex; i++) if (Math.abs(trace[i] as number) > Math.abs(trace[index] as number)) index = i;
  const sign = Math.sign(trace[index] as number);
  const crossing = (i: number, j: number): number => {
    const a = trace[i] as number;
    const b = trace[j] as number;
    return i + (j - i) * (a / (a - b));
  };
  let before: number | null = null;
  for (let i = index - 1; i >= startIndex; i--) {
    if (Math.sign(trace[i] as number) !== sign) {
      before = crossing(i, i + 1);
      break;
    }
  }
  let after: number | null = null;
  for (let i = index + 1; i < endIndex; i++) {
    if (Math.sign(trace[i] as number) !== sign) {
      after = crossing(i - 1, i);
      break;
    }
  }
  return {
    amplitude: Math.abs(trace[index] as number),
    index,
    timeS: index / sampleRateHz,
    periodS: before !== null && after !== null && sign !== 0 ? (2 * (after - before)) / sampleRateHz : null,
  };
}
