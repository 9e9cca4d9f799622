/**
 * Linear filtering of a real trace by a transfer function given bin by bin, in the frequency domain:
 * the one spectral step that the Wood-Anderson simulation (wood-anderson.ts) and the removal of an
 * instrument response (instrument-response.ts) share. One forward and one inverse FFT per trace
 * (fft.js, radix-4, power-of-two sizes; one plan per size, built once: its twiddle tables are the
 * costly part).
 */
import FFT from 'fft.js';

const plans = new Map<number, FFT>();

function planFor(size: number): FFT {
  let plan = plans.get(size);
  if (!plan) {
    plan = new FFT(size);
    plans.set(size, plan);
  }
  return plan;
}

/**
 * The smallest power of two N ≥ max(4, n + tailS·fs): padding a trace of n samples with zeros to N
 * makes the product of spectra a linear, not circular, convolution for a filter whose memory has
 * decayed after `tailS` seconds.
 */
export function paddedSize(n: number, sampleRateHz: number, tailS: number): number {
  let size = 4;
  while (size < n + Math.ceil(tailS * sampleRateHz)) size *= 2;
  return size;
}

/**
 * y = IDFT(DFT(x) · H) cut to the first n samples: `padded` holds the trace in its first n samples
 * and zeros after (its length N a power of two), H(f_k) = hr[k] + i·hi[k] for the bins k = 0 … N/2
 * (f_k = k·fs/N) and the conjugate at the negative frequencies −f_k (a real filter). `padded` is not
 * modified. Convention of fft.js: forward X_k = Σ x_n e^(−2πikn/N), inverse with the 1/N factor.
 * @throws RangeError when N is not a power of two ≥ 4, or hr, hi do not hold N/2 + 1 bins.
 */
export function filterBySpectrum(padded: Float64Array, n: number, hr: Float64Array, hi: Float64Array): Float64Array {
  const size = padded.length;
  if (size < 4 || (size & (size - 1)) !== 0) throw new RangeError(`spectral filter: the padded length ${size} is not a power of two ≥ 4`);
  const half = size / 2;
  if (hr.length !== half + 1 || hi.length !== half + 1) throw new RangeError(`spectral filter: ${half + 1} bins needed, got ${hr.length} and ${hi.length}`);
  const fft = planFor(size);
  const spec = new Float64Array(2 * size);
  fft.realTransform(spec, padded);
  fft.completeSpectrum(spec);
  for (let k = 0; k <= half; k++) {
    const fr = hr[k] as number;
    const fi = hi[k] as number;
    let re = spec[2 * k] as number;
    let im = spec[2 * k + 1] as number;
    spec[2 * k] = re * fr - im * fi;
    spec[2 * k + 1] = re * fi + im * fr;
    if (k > 0 && k < half) {
      // Negative frequency −f_k: H(−f) = conj H(f).
      const m = size - k;
      re = spec[2 * m] as number;
      im = spec[2 * m + 1] as number;
      spec[2 * m] = re * fr + im * fi;
      spec[2 * m + 1] = im * fr - re * fi;
    }
  }
  const back = new Float64Array(2 * size);
  fft.inverseTransform(back, spec);
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = back[2 * i] as number;
  return out;
}
