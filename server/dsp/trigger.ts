import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import { aicOnsetIndex } from './aic-picker';
import type { Sos } from './butterworth';
import { detrendLinear } from './preprocess';
import { sosfiltInPlace, sosfiltInto, sosfiltIntoWithState } from './sosfilt';
import { delayedStaLta, detectTriggers, type Trigger } from './sta-lta';

/** A trigger with its AIC onset and its own peak. */
export interface ChainTrigger extends Trigger {
  /** AIC onset, sample index (≤ onIndex). */
  onsetIndex: number;
  /** Largest ratio between on and off (or the end). */
  peak: number;
}

/** What the trigger chain gives for one channel. */
export interface TriggerChain {
  /** The untapered, ramped, band-rejected trace (units of the input ÷ sensitivity). */
  base: Float64Array;
  /** Its causal high band: the trace the characteristic function reads. */
  highY: Float64Array;
  /** The STA/LTA ratio per sample (0 where none is given). */
  cf: Float64Array;
  triggers: ChainTrigger[];
  /** First sample the characteristic function reads. */
  startIndex: number;
  /** With `work.stateAt`: the high band filter's state on `base` just before that sample (see `bandEnergyBeside`). */
  highStateAt?: Float64Array;
}

/**
 * The trigger's own chain for one channel — the one the flag reads and the trace view shows:
 * 1. least-squares linear detrend of the raw samples (no window taper: a Tukey taper of 5 % at each
 *    end would hide a P in a window's first seconds), a cosine ramp 0 → 1 over the first `startS`
 *    (so the causal filters start without a step), ÷ a flat sensitivity when given;
 * 2. the profile's band-reject filters (causal, zero state), then the causal high band `highSos`;
 * 3. `delayedStaLta` from the end of the ramp (LTA before the STA, expanding until full);
 * 4. triggers with hysteresis (on/off levels); each trigger's peak, and its onset by AIC
 *    (`aicOnsetIndex`, Maeda 1985) over [on − onsetSearchS, on + onsetAfterS], never before the
 *    ramp's end nor after the trigger-on.
 * Pure; `design` returns Butterworth sections (a cache may stand behind it). A caller that has
 * already detrended the samples (`detrendLinear(samples)`, as the pipeline does for its tapered trace)
 * passes them as `detrended`: the chain then starts from them, and takes them over as `base`.
 * `work` (optional) gives the arrays the chain writes its high band and ratio into (each of the
 * samples' length, contents overwritten), for a caller that reuses them between windows, and with
 * `stateAt` asks for the high band filter's state before that sample (`highStateAt`).
 */
export function triggerChain(
  samples: Float64Array,
  sampleRateHz: number,
  profile: Pick<ProcessingProfile, 'staLta' | 'bandReject'>,
  highSos: Sos,
  design: (order: number, edges: [number, number], type: 'bandstop', fs: number) => Sos,
  sensitivity = 1,
  detrended?: Float64Array,
  work?: { highY: Float64Array; cf: Float64Array; stateAt?: number },
): TriggerChain {
  const fs = sampleRateHz;
  const n = samples.length;
  const sl = profile.staLta;
  const startIndex = Math.min(n, Math.round(sl.startS * fs));
  if (detrended !== undefined && detrended.length !== n) throw new RangeError(`triggerChain: ${detrended.length} detrended samples for ${n} samples`);
  const base = detrended ?? detrendLinear(samples);
  for (let i = 0; i < startIndex; i++) base[i] = (base[i] as number) * 0.5 * (1 - Math.cos((Math.PI * i) / startIndex));
  if (sensitivity !== 1) for (let i = 0; i < n; i++) base[i] = (base[i] as number) / sensitivity;
  for (const br of profile.bandReject) if (br.fmax < fs / 2) sosfiltInPlace(design(br.order, [br.fmin, br.fmax], 'bandstop', fs), base);
  const highY = work?.highY ?? new Float64Array(n);
  const highStateAt = work?.stateAt === undefined ? undefined : sosfiltIntoWithState(highSos, base, highY, work.stateAt);
  if (highStateAt === undefined) sosfiltInto(highSos, base, highY);
  const staLtaOpts = { startIndex, minLtaSamples: Math.max(1, Math.round(sl.minLtaS * fs)) };
  const cf = delayedStaLta(highY, fs, sl.staS, sl.ltaS, sl.method, work ? { ...staLtaOpts, out: work.cf } : staLtaOpts);
  const triggers = detectTriggers(cf, fs, sl.on, sl.off).map((t): ChainTrigger => {
    let peak = 0;
    for (let i = t.onIndex; i < (t.offIndex ?? n); i++) if ((cf[i] as number) > peak) peak = cf[i] as number;
    const from = Math.max(startIndex, t.onIndex - Math.round(sl.onsetSearchS * fs));
    const to = Math.min(n, t.onIndex + Math.round(sl.onsetAfterS * fs));
    const k = aicOnsetIndex(highY, from, to);
    return { ...t, peak, onsetIndex: k === null ? t.onIndex : Math.min(k, t.onIndex) };
  });
  return highStateAt === undefined ? { base, highY, cf, triggers, startIndex } : { base, highY, cf, triggers, startIndex, highStateAt };
}
