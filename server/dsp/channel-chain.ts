import type { ProcessingProfile } from '../../shared/schemas/processing-profile';
import { highBandForRate, validateBand } from './bands';
import { butterworthSos, type Sos } from './butterworth';
import { detrendLinear, taperInPlace } from './preprocess';
import { sosfiltInto } from './sosfilt';
import { triggerChain, type TriggerChain } from './trigger';

/** Butterworth sections by order, edges, type and rate (a cache may stand behind it). */
export type SosDesign = (order: number, edges: [number, number], type: 'bandpass' | 'bandstop', fs: number) => Sos;

/** The filtered traces of one channel, as the engine computes them and the trace view shows them. */
export interface ChannelChain {
  /** Pre-processed: linear detrend, Tukey taper, ÷ the flat sensitivity (m/s then; else counts). */
  pre: Float64Array;
  /** `pre` after the profile's band-reject filters (`pre` itself when none applies). */
  rejected: Float64Array;
  /** The band edges used, Hz (the high band fitted to slow channels, capped when the profile says so). */
  low: { fmin: number; fmax: number };
  high: { fmin: number; fmax: number };
  lowSos: Sos;
  highSos: Sos;
  /** The causal low and high band-passes of `rejected`. */
  lowY: Float64Array;
  highY: Float64Array;
  /** Each band-reject filter of the profile and whether it applied (only below Nyquist). */
  bandReject: Array<{ fmin: number; fmax: number; applied: boolean }>;
  /** What the processing changed or skipped, in words (fitted or capped bands, skipped band-rejects). */
  warnings: string[];
  /** The STA/LTA trigger's own chain (server/dsp/trigger.ts): characteristic function and triggers. */
  trigger: TriggerChain;
}

/**
 * The engine's per-channel chain, in one place so the analysis (`analyzeWindow`) and the trace view
 * (server/features/queue/queue-traces.ts) cannot differ: linear detrend → Tukey taper
 * (`taperAlpha`) → ÷ flat sensitivity (counts per m/s; 1 leaves counts) → the bands checked against
 * the rate (`highBandForRate`, `validateBand` with the profile's Nyquist policy) → band-reject
 * filters below Nyquist → causal Butterworth low and high band-passes from zero state →
 * `triggerChain` on the untapered samples. Pure; `samples` is not changed.
 * @param sampleRateHz fs, Hz
 * @param flatSensitivity counts per (m/s), or 1 for counts
 * @throws BandError when a band does not fit the rate under the profile's policy
 */
export function channelChain(samples: Float64Array, sampleRateHz: number, profile: ProcessingProfile, flatSensitivity: number, design: SosDesign = butterworthSos): ChannelChain {
  const fs = sampleRateHz;
  const n = samples.length;
  const warnings: string[] = [];
  // Detrend once: the pre-processed trace is a tapered copy (= preprocessTrace), the trigger's trace
  // (below) the detrended samples themselves with a start ramp instead of the taper.
  const detrended = detrendLinear(samples);
  const pre = detrended.slice();
  taperInPlace(pre, profile.preprocess.taperAlpha);
  if (flatSensitivity !== 1) for (let i = 0; i < n; i++) pre[i] = (pre[i] as number) / flatSensitivity;

  const fitted = highBandForRate(profile.bands.high, fs);
  const low = validateBand('low', profile.bands.low, fs, profile.bands.nyquistPolicy);
  if (fitted.warning) warnings.push(fitted.warning);
  const high = validateBand('high', fitted.band, fs, profile.bands.nyquistPolicy);
  if (low.warning) warnings.push(low.warning);
  if (high.warning) warnings.push(high.warning);

  // Band-reject first (one shared trace: `pre` itself until a filter applies), then both band-passes
  // on it, each filtered straight into its own array (`rejected` is not changed after this).
  let rejected: Float64Array = pre;
  const bandReject: ChannelChain['bandReject'] = [];
  for (const br of profile.bandReject) {
    const ok = br.fmax < fs / 2;
    bandReject.push({ fmin: br.fmin, fmax: br.fmax, applied: ok });
    if (!ok) {
      warnings.push(`band-reject ${br.fmin}–${br.fmax} Hz${br.label ? ` (${br.label})` : ''} is not below the Nyquist frequency ${fs / 2} Hz: not applied`);
      continue;
    }
    rejected = sosfiltInto(design(br.order, [br.fmin, br.fmax], 'bandstop', fs), rejected, rejected === pre ? new Float64Array(n) : rejected);
  }
  const lowSos = design(profile.bands.order, [low.fmin, low.fmax], 'bandpass', fs);
  const highSos = design(profile.bands.order, [high.fmin, high.fmax], 'bandpass', fs);
  const lowY = sosfiltInto(lowSos, rejected, new Float64Array(n));
  const highY = sosfiltInto(highSos, rejected, new Float64Array(n));

  // The trigger reads its own chain (untapered, ramped, band-rejected high band; see triggerChain).
  const trigger = triggerChain(samples, fs, profile, highSos, design, flatSensitivity, detrended);
  return { pre, rejected, low: { fmin: low.fmin, fmax: low.fmax }, high: { fmin: high.fmin, fmax: high.fmax }, lowSos, highSos, lowY, highY, bandReject, warnings, trigger };
}
