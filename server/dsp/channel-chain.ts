import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import { highBandForRate, validateBand } from './bands';
import { butterworthSos, type Sos } from './butterworth';
import { detrendLinearInto, taperInPlace, taperTailStart } from './preprocess';
import { bandEnergy, bandEnergyBeside, filteredEnergy, sosfiltInto } from './sosfilt';
import { triggerChain, type TriggerChain } from './trigger';
import { workArray, type WorkSlot } from './work-arrays';

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
  /** The causal low and high band-passes of `rejected`; null when only their energies were asked for. */
  lowY: Float64Array | null;
  highY: Float64Array | null;
  /** Energies of the causal low and high band-passes of `rejected`, (units of `pre`)²·s (`bandEnergy`). */
  energy: { low: number; high: number };
  /** Each band-reject filter of the profile and whether it applied (only below Nyquist). */
  bandReject: Array<{ fmin: number; fmax: number; applied: boolean }>;
  /** What the processing changed or skipped, in words (fitted or capped bands, skipped band-rejects). */
  warnings: string[];
  /** The STA/LTA trigger's own chain (server/dsp/trigger.ts): characteristic function and triggers. */
  trigger: TriggerChain;
}

/** The band traces kept (the trace view's and the display's chain). */
export interface BandTraces {
  lowY: Float64Array;
  highY: Float64Array;
}

/** How `channelChain` keeps its traces. */
export interface ChainOptions {
  /**
   * `traces` (default): the low and high band traces are kept (`lowY`, `highY`). `energies`: only
   * their energies are needed (analysis without display), so no trace-long band array is written:
   * the low band is summed chunk by chunk (`filteredEnergy`) and the high band taken from the
   * trigger's own high band, the same filter on the same samples except at the ends (start ramp
   * against taper), so only the ends are filtered again (`bandEnergyBeside`). Same numbers either way.
   */
  bands?: 'traces' | 'energies';
  /**
   * Put the long intermediate traces in this thread's reused work arrays (work-arrays.ts) instead of
   * fresh ones (default false). Every array in the result is then valid only until the next chain
   * on this thread: the caller must copy out what it keeps (the engine does; see analyzeWindow).
   */
  workArrays?: boolean;
}

/**
 * The engine's per-channel chain, in one place so the analysis (`analyzeWindow`) and the trace view
 * (server/features/queue/queue-traces.ts) cannot differ: linear detrend → Tukey taper
 * (`taperAlpha`) → ÷ flat sensitivity (counts per m/s; 1 leaves counts) → the bands checked against
 * the rate (`highBandForRate`, `validateBand` with the profile's Nyquist policy) → band-reject
 * filters below Nyquist → causal Butterworth low and high band-passes from zero state →
 * `triggerChain` on the untapered samples → both band energies. Pure; `samples` is not changed
 * (with `workArrays`, the result's arrays are the thread's work arrays; see ChainOptions).
 * @param sampleRateHz fs, Hz
 * @param flatSensitivity counts per (m/s), or 1 for counts
 * @throws BandError when a band does not fit the rate under the profile's policy
 */
export function channelChain(
  samples: Float64Array,
  sampleRateHz: number,
  profile: ProcessingProfile,
  flatSensitivity: number,
  design?: SosDesign,
  options?: ChainOptions & { bands?: 'traces' },
): ChannelChain & BandTraces;
export function channelChain(samples: Float64Array, sampleRateHz: number, profile: ProcessingProfile, flatSensitivity: number, design: SosDesign, options: ChainOptions): ChannelChain;
export function channelChain(
  samples: Float64Array,
  sampleRateHz: number,
  profile: ProcessingProfile,
  flatSensitivity: number,
  design: SosDesign = butterworthSos,
  options: ChainOptions = {},
): ChannelChain {
  const fs = sampleRateHz;
  const n = samples.length;
  const warnings: string[] = [];
  const useWork = options.workArrays === true;
  const traces = options.bands !== 'energies';
  // A long trace: the thread's work array for the slot, or a fresh array.
  const arr = (slot: WorkSlot): Float64Array => (useWork ? workArray(slot, n) : new Float64Array(n));
  // Detrend once: the pre-processed trace is a tapered copy (= preprocessTrace), the trigger's trace
  // (below) the detrended samples themselves with a start ramp instead of the taper.
  const detrended = arr('detrended');
  detrendLinearInto(samples, detrended);
  const pre = arr('preprocessed');
  pre.set(detrended);
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
    rejected = sosfiltInto(design(br.order, [br.fmin, br.fmax], 'bandstop', fs), rejected, rejected === pre ? arr('band-reject') : rejected);
  }
  const lowSos = design(profile.bands.order, [low.fmin, low.fmax], 'bandpass', fs);
  const highSos = design(profile.bands.order, [high.fmin, high.fmax], 'bandpass', fs);
  const lowY = traces ? sosfiltInto(lowSos, rejected, arr('low-band')) : null;
  const highY = traces ? sosfiltInto(highSos, rejected, arr('high-band')) : null;
  // Chunks for the energies without band traces (small: stays in the processor's cache).
  const scratch = traces ? null : useWork ? workArray('energy-chunks', 2048) : new Float64Array(2048);
  const eLow = lowY ? bandEnergy(lowY, fs) : filteredEnergy(lowSos, rejected, fs, scratch as Float64Array);

  // The trigger reads its own chain (untapered, ramped, band-rejected high band; see triggerChain);
  // `detrended` becomes its base trace. Without high band trace, the trigger's high band filter
  // state where the taper's tail starts lets `bandEnergyBeside` filter only the ends again.
  const tailStart = taperTailStart(n, profile.preprocess.taperAlpha);
  const trigger = triggerChain(samples, fs, profile, highSos, design, flatSensitivity, detrended, {
    highY: arr('trigger-band'),
    cf: arr('sta-lta'),
    ...(traces ? {} : { stateAt: tailStart }),
  });
  const eHigh = highY
    ? bandEnergy(highY, fs)
    : bandEnergyBeside(highSos, rejected, trigger.base, trigger.highY, trigger.highStateAt ?? new Float64Array(0), tailStart, fs, scratch as Float64Array);
  return {
    pre,
    rejected,
    low: { fmin: low.fmin, fmax: low.fmax },
    high: { fmin: high.fmin, fmax: high.fmax },
    lowSos,
    highSos,
    lowY,
    highY,
    energy: { low: eLow, high: eHigh },
    bandReject,
    warnings,
    trigger,
  };
}
