import type { ProcessingProfile } from '../../shared/schemas/processing-profile';

/**
 * Scoring of one window against a station's own noise baseline.
 *
 * Rule (documented for the README):
 * 1. The lead channel is the vertical (channel code ending in Z); without one, the first channel.
 * 2. Robust z-scores against the baseline: z = (x − median)/(1.4826·MAD) — the MAD scaled by 1.4826
 *    to estimate σ for normally distributed noise (common practice). A MAD below a floor (0.05 for
 *    log10 ratio, 0.1 for the STA/LTA peak) is raised to it, so a very quiet history cannot turn a
 *    tiny change into a huge z.
 * 3. Evidence: `ratioHigh` when z(log10 ratio) ≥ eventZ; `staHigh` when the STA/LTA peak passed
 *    the trigger-on level and z(peak) ≥ eventZ; each is "ordinary" below noiseZ.
 * 4. Where the spectrum peaks. Causal filtering lets loud energy outside the band (a 15–25 Hz
 *    machinery burst) leak into it, so a high ratio with the spectrum peaking elsewhere is never a
 *    likely event on its own.
 *    a. With a trigger and a signal spectrum (the triggered part's PSD over the pre-trigger noise's,
 *       see `snrSpectrum`): the signal peak frequency must lie in the high band widened by
 *       `signalPeakTolerance` (fmin/(1 + t) … fmax·(1 + t)), there must be such a peak (some bin
 *       with the signal ≥ minSnr × the noise), and the excess-weighted centroid must not lie above `centroidMaxFactor` ×
 *       the band's upper edge. A stationary microseism or machinery line is in both parts and drops
 *       out of the ratio; a leaking 20 Hz burst has its excess at 20 Hz.
 *    b. Otherwise (no trigger, or too little noise before it): the whole-window rule — the dominant
 *       frequency inside the high band and the centroid at most `centroidMaxFactor` (1.5) × the
 *       upper edge (a margin, because a white instrument-noise floor up to fs/2 pulls a real
 *       arrival's centroid above the band).
 * 5. Flag: `likely event` when ratioHigh and staHigh and the spectrum peaks in the high band (4a or 4b);
 *    `likely noise` when both z are below noiseZ and there is no trigger; `needs eyes` otherwise,
 *    and always when the lead channel has a QC error (dead, clipped, wrong rate).
 * 6. Score = ½·clamp(z ratio) + ½·clamp(z peak), each clamped to [−10, 50], halved when the spectrum
 *    peaks outside the high band (when positive); rounded to 0.1. It orders the queue; it is not a magnitude.
 */

/** Median and MAD (unscaled) of one feature over a station's noise windows. */
export interface RobustStat {
  median: number;
  mad: number;
}

/** A station's noise baseline. */
export interface StationBaseline {
  log10Ratio: RobustStat;
  staLtaPeak: RobustStat;
  /** Number of noise windows behind the statistics. */
  count: number;
}

/**
 * Network default baseline, used while a station has fewer than `minBaselineWindows` noise windows.
 * These are our own wide starting values (not from a source): noise windows tend to have comparable
 * energy in 0.5–2 Hz and 2–10 Hz (log10 ratio near 0, spread ±0.3), and a classic 1 s / 30 s
 * STA/LTA on noise peaks near 2 (spread 0.5), below the 3.5 trigger level. A station's own history
 * replaces them as soon as it has enough labelled noise.
 */
export const NETWORK_DEFAULT_BASELINE: StationBaseline = {
  log10Ratio: { median: 0, mad: 0.3 },
  staLtaPeak: { median: 2, mad: 0.5 },
  count: 0,
};

/** Where a triggered part of a channel rises above the noise before the trigger (the score's input). */
export interface SignalSpectrumFeatures {
  /**
   * Signal peak frequency: the bin of the largest excess PSD (signal − noise) among the bins where
   * the signal PSD is ≥ minSnr × the noise PSD, Hz; null when no bin is (see `snrSpectrum`).
   */
  peakFrequency: number | null;
  /** Signal-to-noise PSD ratio at that bin (power, dimensionless). */
  peakSnr: number | null;
  /** Excess-weighted centroid over the same bins, Hz. */
  centroid: number | null;
  /** The ratio a bin needed to be counted. */
  minSnr: number;
  /** Signal and noise parts, s from the first sample. */
  fromS: number;
  toS: number;
  noiseFromS: number;
  noiseToS: number;
  /** Welch segment length of both parts, samples. */
  nperseg: number;
}

/** The per-channel features the score reads. */
export interface ChannelFeatures {
  id: string;
  log10Ratio: number | null;
  ratio: number | null;
  staLta: { peak: number; peakTime: number; triggers: ReadonlyArray<{ on: number; off: number | null }> };
  dominantFrequency: number | null;
  spectralCentroid: number | null;
  /** Absent (older stored analyses) or null: the whole-window rule decides where the spectrum peaks. */
  signalSpectrum?: SignalSpectrumFeatures | null;
  /** Why there is no signal spectrum although there is a trigger. */
  signalSpectrumNote?: string | null;
  bands: { high: { fmin: number; fmax: number } };
  qc: ReadonlyArray<{ severity: 'info' | 'warning' | 'error'; message: string; code: string }>;
}

/** The result of scoring. */
export interface WindowScore {
  score: number;
  flag: 'likely event' | 'likely noise' | 'needs eyes';
  reasons: string[];
  /** Id of the channel that led the score. */
  leadChannel: string;
  /** Which baseline was used. */
  baseline: 'station' | 'network default';
  zLog10Ratio: number | null;
  zStaLtaPeak: number | null;
}

/** The smallest MAD the robust z divides by (log10 ratio, STA/LTA ratio): a baseline of identical windows would otherwise divide by 0. */
export const MAD_FLOOR = { log10Ratio: 0.05, staLtaPeak: 0.1 } as const;
const ROBUST_SIGMA = 1.4826;

/** Robust z = (x − median)/(1.4826·max(MAD, floor)). */
export function robustZ(x: number, stat: RobustStat, madFloor = 0): number {
  return (x - stat.median) / (ROBUST_SIGMA * Math.max(stat.mad, madFloor));
}

/** Median and MAD (unscaled) of a list; throws on an empty list. */
export function robustStat(values: readonly number[]): RobustStat {
  if (values.length === 0) throw new RangeError('robust statistics need at least one value');
  const med = median(values);
  return { median: med, mad: median(values.map((v) => Math.abs(v - med))) };
}

/** A station baseline from its noise windows' features (log10 ratio and STA/LTA peak; nulls skipped). */
export function computeBaseline(windows: ReadonlyArray<{ log10Ratio: number | null; staLtaPeak: number | null }>): StationBaseline | null {
  const r = windows.map((w) => w.log10Ratio).filter((v): v is number => v !== null && Number.isFinite(v));
  const p = windows.map((w) => w.staLtaPeak).filter((v): v is number => v !== null && Number.isFinite(v));
  if (r.length === 0 || p.length === 0) return null;
  return { log10Ratio: robustStat(r), staLtaPeak: robustStat(p), count: Math.min(r.length, p.length) };
}

function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const n = s.length;
  return n % 2 ? (s[(n - 1) / 2] as number) : ((s[n / 2 - 1] as number) + (s[n / 2] as number)) / 2;
}

const f1 = (v: number): string => (Math.round(v * 10) / 10).toFixed(1);
const signed = (v: number): string => (v >= 0 ? `+${f1(v)}` : `−${f1(-v)}`);
const clamp = (v: number): number => Math.min(50, Math.max(-10, v));

/** Pick the lead channel: the first whose channel code ends in Z, else the first. */
export function leadChannelIndex(ids: readonly string[]): number {
  const i = ids.findIndex((id) => /Z$/i.test(id.split('.').pop() ?? ''));
  return i >= 0 ? i : 0;
}

/** The signal-spectrum knobs' defaults (the profile schema's), for callers that pass older thresholds. */
const SIGNAL_DEFAULTS = { signalPeakTolerance: 0.2 } as const;

/** The thresholds the score reads; the signal-spectrum knobs may be absent (their defaults apply). */
export type ScoreThresholds = Omit<ProcessingProfile['thresholds'], keyof typeof SIGNAL_DEFAULTS> &
  Partial<Pick<ProcessingProfile['thresholds'], keyof typeof SIGNAL_DEFAULTS>>;

/**
 * Score a window: a pure function of the channels' features, the station's baseline (or null) and the
 * profile's thresholds; see the module comment for the rule. Throws when there is no channel.
 */
export function scoreWindow(
  channels: readonly ChannelFeatures[],
  baseline: StationBaseline | null,
  profile: { thresholds: ScoreThresholds; staLta: ProcessingProfile['staLta'] },
): WindowScore {
  if (channels.length === 0) throw new RangeError('a window needs at least one channel to score');
  const th = { ...SIGNAL_DEFAULTS, ...profile.thresholds };
  const useStation = baseline !== null && baseline.count >= th.minBaselineWindows;
  const base = useStation ? baseline : NETWORK_DEFAULT_BASELINE;
  const baseWords = useStation ? "this station's noise" : `the network default (station has ${baseline?.count ?? 0} of ${th.minBaselineWindows} noise windows)`;
  const li = leadChannelIndex(channels.map((c) => c.id));
  const lead = channels[li] as ChannelFeatures;
  const reasons: string[] = [];
  if (!/Z$/i.test(lead.id)) reasons.push(`no vertical component: ${lead.id} leads the score`);

  const zr = lead.log10Ratio === null ? null : robustZ(lead.log10Ratio, base.log10Ratio, MAD_FLOOR.log10Ratio);
  const zp = robustZ(lead.staLta.peak, base.staLtaPeak, MAD_FLOOR.staLtaPeak);
  const triggered = lead.staLta.triggers.length > 0;
  if (zr === null || lead.ratio === null) reasons.push(`${lead.id}: no band ratio (the low band has no energy)`);
  else reasons.push(`high/low ratio ${f1(lead.ratio)}, ${zr >= 0 ? `+${f1(zr)} MAD above` : `${f1(-zr)} MAD below`} ${baseWords}`);
  reasons.push(
    triggered
      ? `STA/LTA peak ${f1(lead.staLta.peak)} at ${f1(lead.staLta.peakTime)} s (${signed(zp)} MAD), ${lead.staLta.triggers.length} trigger(s) above ${profile.staLta.on}`
      : `STA/LTA peak ${f1(lead.staLta.peak)} at ${f1(lead.staLta.peakTime)} s: no trigger above ${profile.staLta.on}`,
  );

  const hb = lead.bands.high;
  const dominantInBand = lead.dominantFrequency !== null && lead.dominantFrequency >= hb.fmin && lead.dominantFrequency <= hb.fmax;
  const centroidOk = lead.spectralCentroid !== null && lead.spectralCentroid <= th.centroidMaxFactor * hb.fmax;
  // With a trigger, where the triggered part rises above the noise before it decides (rule 4a).
  const sig = triggered ? (lead.signalSpectrum ?? null) : null;
  const tolLo = hb.fmin / (1 + th.signalPeakTolerance);
  const tolHi = hb.fmax * (1 + th.signalPeakTolerance);
  const sigStrong = sig !== null && sig.peakFrequency !== null;
  const sigPeakIn = sig !== null && sig.peakFrequency !== null && sig.peakFrequency >= tolLo && sig.peakFrequency <= tolHi;
  const sigCentroidOk = sig !== null && sig.centroid !== null && sig.centroid <= th.centroidMaxFactor * hb.fmax;
  const spectrumInBand = sig !== null ? sigPeakIn && sigStrong && sigCentroidOk : dominantInBand && centroidOk;
  const sigWords = sig === null
    ? ''
    : sig.peakFrequency === null
      ? `the triggered part (${f1(sig.fromS)}–${f1(sig.toS)} s) is nowhere ${sig.minSnr} × the pre-trigger noise (${f1(sig.noiseFromS)}–${f1(sig.noiseToS)} s)`
      : `signal peaks at ${fmtHz(sig.peakFrequency)} over the pre-trigger noise (${fmtDb(sig.peakSnr)} above it there, centroid of the excess ${fmtHz(sig.centroid)}; signal ${f1(sig.fromS)}–${f1(sig.toS)} s against noise ${f1(sig.noiseFromS)}–${f1(sig.noiseToS)} s)`;
  if (sig !== null) reasons.push(sigWords);
  else if (triggered && lead.signalSpectrumNote) reasons.push(`no signal spectrum: ${lead.signalSpectrumNote}; the whole-window spectrum decides`);
  const ratioHigh = zr !== null && zr >= th.eventZ;
  const staHigh = triggered && zp >= th.eventZ;
  const quiet = (zr === null || zr < th.noiseZ) && zp < th.noiseZ && !triggered;
  const qcErrors = lead.qc.filter((q) => q.severity === 'error');

  let flag: WindowScore['flag'];
  if (qcErrors.length > 0) {
    flag = 'needs eyes';
    for (const q of qcErrors) reasons.push(`quality problem on ${lead.id}: ${q.message}`);
  } else if (ratioHigh && staHigh && spectrumInBand) {
    flag = 'likely event';
  } else if (quiet) {
    flag = 'likely noise';
  } else {
    flag = 'needs eyes';
    if ((ratioHigh || staHigh) && !spectrumInBand && sig !== null) {
      reasons.push(
        !sigStrong
          ? 'the triggered part does not stand out from the pre-trigger noise in any frequency bin: not an event on the ratio alone'
          : !sigPeakIn
          ? `signal spectrum peaks outside the high band ${hb.fmin}–${hb.fmax} Hz (at ${fmtHz(sig.peakFrequency)}, accepted ${f1(tolLo)}–${f1(tolHi)} Hz): energy may be leaking in from outside the band, not an event on the ratio alone`
            : `the centroid of the signal's excess over the noise, ${fmtHz(sig.centroid)}, lies above ${th.centroidMaxFactor} × the high band's ${hb.fmax} Hz edge: much of the excess is above the band, not an event on the ratio alone`,
      );
    } else if ((ratioHigh || staHigh) && !spectrumInBand) {
      reasons.push(
        dominantInBand
          ? `spectral centroid ${fmtHz(lead.spectralCentroid)} lies above ${th.centroidMaxFactor} × the high band's ${hb.fmax} Hz edge (dominant ${fmtHz(lead.dominantFrequency)}): much of the energy is above the band, not an event on the ratio alone`
          : `spectrum peaks outside the high band ${hb.fmin}–${hb.fmax} Hz (dominant ${fmtHz(lead.dominantFrequency)}, centroid ${fmtHz(lead.spectralCentroid)}): energy may be leaking in from outside the band, not an event on the ratio alone`,
      );
    } else if (ratioHigh !== staHigh) {
      reasons.push(ratioHigh ? 'high ratio without a matching STA/LTA onset' : 'STA/LTA onset without a raised band ratio');
    } else {
      reasons.push('evidence between ordinary noise and an event');
    }
  }
  if (spectrumInBand && flag !== 'needs eyes' && sig === null) {
    reasons.push(`spectrum peaks at ${fmtHz(lead.dominantFrequency)} (centroid ${fmtHz(lead.spectralCentroid)}), in the high band ${hb.fmin}–${hb.fmax} Hz`);
  }
  for (let i = 0; i < channels.length; i++) {
    if (i === li) continue;
    const ch = channels[i] as ChannelFeatures;
    const z = ch.log10Ratio === null ? null : robustZ(ch.log10Ratio, base.log10Ratio, MAD_FLOOR.log10Ratio);
    reasons.push(
      `beside it, ${ch.id}: ratio ${ch.ratio === null ? 'n/a' : f1(ch.ratio)}${z === null ? '' : ` (${signed(z)} MAD)`}, STA/LTA peak ${f1(ch.staLta.peak)}, ${ch.staLta.triggers.length} trigger(s)`,
    );
  }
  let score = 0.5 * clamp(zr ?? 0) + 0.5 * clamp(zp);
  if (!spectrumInBand && score > 0) score /= 2;
  score = Math.round(score * 10) / 10;
  return { score, flag, reasons, leadChannel: lead.id, baseline: useStation ? 'station' : 'network default', zLog10Ratio: zr, zStaLtaPeak: zp };
}

/** A power ratio in dB (10·log10). */
function fmtDb(r: number | null): string {
  return r === null || !(r > 0) ? 'n/a' : `${f1(10 * Math.log10(r))} dB`;
}

function fmtHz(f: number | null): string {
  return f === null ? 'n/a' : `${f1(f)} Hz`;
}
