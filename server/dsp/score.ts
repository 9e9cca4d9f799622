import type { ProcessingProfile } from '@shared/schemas/processing-profile';

/**
 * Scoring of one window against a station's own noise baseline.
 *
 * Rule (server/dsp/README.md has it in full):
 * 1. Every channel has its own triggers (delayed-LTA STA/LTA on its high band, `delayedStaLta`), each
 *    with a peak and an AIC onset; a channel's main trigger is its strongest. The DECIDING channel is
 *    the one whose main trigger peaks highest (the vertical on a tie): a quiet vertical does not hide
 *    a clear S on a horizontal, and the reasons name the channel.
 * 2. Robust z = (x − median)/(1.4826·MAD) of the deciding channel's STA/LTA peak against the
 *    station's noise windows (1.4826 makes the MAD estimate σ for normal noise, common practice); a
 *    MAD below a floor is raised to it. Without `minBaselineWindows` noise windows, the network
 *    default applies — measured on real noise (see NETWORK_DEFAULT_BASELINE).
 * 3. The triggered part must be energy IN the high band: the Welch PSD of the part from the main
 *    trigger's onset against the noise before it, summed over the high band, must reach
 *    `minInBandSnr` (power) with at least `minInBandShare` of the band's bins at `minSnr` or more.
 *    A loud burst above the band that leaks through the causal filter's skirt has no excess inside
 *    the band and fails; a local earthquake peaking at 17 Hz or a large one at 1 Hz passes, as long as
 *    the band itself rose. Where the spectrum peaks is reported, not required.
 * 4. Flag: `likely event` when z(peak) ≥ eventZ and rule 3 holds and the deciding channel has no QC
 *    error; `likely noise` when z(peak) < noiseZ (no trigger, or only one as weak as this station's
 *    noise) or when the only triggers are nowhere `minSnr` × the noise in the band; `needs eyes`
 *    otherwise, with the reason.
 * 5. The detection: the earliest onset among the channels' main triggers that are at least
 *    `eventZ` strong — the time the window's arrival is taken from (event groups, the analyst's view).
 * 6. Score = ½·clamp(z peak) + ½·clamp(z log10 ratio of the whole window), each in [−10, 50], halved
 *    when rule 3 fails; rounded to 0.1. It orders the queue; it is not a magnitude or a hazard level.
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
 * Measured, not guessed: the median and MAD of each feature over real noise — the 29.5 s before the
 * analyst's P in the development part of tests/fixtures/real-windows (NCEDC recordings, 100 sps,
 * broadband, short-period and strong-motion channels, in counts), with the default profile; the STA/LTA
 * peak is the window's highest over its channels. `npm run eval:detection -- --baseline` prints
 * the figures again beside the demo network's own noise. A station's history replaces it as soon as it
 * has enough noise windows.
 */
export const NETWORK_DEFAULT_BASELINE: StationBaseline = {
  log10Ratio: { median: 0.65, mad: 0.43 },
  staLtaPeak: { median: 2.9, mad: 0.7 },
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
  /** Over the high band: Σ signal PSD ÷ Σ noise PSD (power), and the share of its bins ≥ minSnr (absent in older analyses). */
  inBandSnr?: number | null;
  inBandShare?: number | null;
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
  /** ISO 8601 time of the first sample (to compare onsets across channels); absent: same start assumed. */
  startTime?: string;
  staLta: {
    peak: number;
    peakTime: number;
    triggers: ReadonlyArray<{ on: number; off: number | null; onset?: number; peak?: number }>;
    /** Index of the channel's strongest trigger (absent in older analyses: the first). */
    main?: number | null;
  };
  /** High-band amplitude SNR around the main trigger's onset. */
  snr?: number | null;
  dominantFrequency: number | null;
  spectralCentroid: number | null;
  /** Absent (older stored analyses) or null: the whole-window rule decides where the spectrum peaks. */
  signalSpectrum?: SignalSpectrumFeatures | null;
  /** Why there is no signal spectrum although there is a trigger. */
  signalSpectrumNote?: string | null;
  bands: { high: { fmin: number; fmax: number } };
  qc: ReadonlyArray<{ severity: 'info' | 'warning' | 'error'; message: string; code: string; time?: number | undefined }>;
}

/** The window's detection: the arrival the flag and the event groups read. */
export interface Detection {
  /** The channel whose main trigger gives the onset. */
  channel: string;
  /** AIC onset and trigger-on, s from that channel's first sample. */
  onset: number;
  on: number;
  /** The deciding channel's main-trigger peak (the window's highest). */
  peak: number;
  /** The deciding channel (may differ from `channel`: P on the vertical, S strongest on a horizontal). */
  decidedBy: string;
}

/** The result of scoring. */
export interface WindowScore {
  score: number;
  flag: 'likely event' | 'likely noise' | 'needs eyes';
  reasons: string[];
  /** Id of the channel that decided the score (the strongest trigger; the vertical on a tie or with none). */
  leadChannel: string;
  /** Which baseline was used. */
  baseline: 'station' | 'network default';
  zLog10Ratio: number | null;
  zStaLtaPeak: number | null;
  /** The window's detection (null without a trigger strong enough). */
  detection: Detection | null;
}

/** The smallest MAD the robust z divides by (log10 ratio, STA/LTA ratio): a baseline of identical windows would otherwise divide by 0. */
export const MAD_FLOOR = { log10Ratio: 0.05, staLtaPeak: 0.1 } as const;
/** QC codes that can set off a trigger by themselves, and how near the onset they count, s. */
const DATA_PROBLEMS = new Set(['gap', 'overlap', 'flat-segment', 'dc-step', 'spikes']);
const DATA_PROBLEM_S = 3;
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
const isVertical = (id: string): boolean => /Z$/i.test(id.split('.').pop() ?? '');

/** Pick the lead channel: the first whose channel code ends in Z, else the first. */
export function leadChannelIndex(ids: readonly string[]): number {
  const i = ids.findIndex(isVertical);
  return i >= 0 ? i : 0;
}

/** The score knobs' defaults (the profile schema's), for callers that pass older thresholds. */
const SCORE_DEFAULTS = { signalPeakTolerance: 0.2, minInBandSnr: 6.3, minInBandShare: 0.5 } as const;

/** The thresholds the score reads; the newer knobs may be absent (their defaults apply). */
export type ScoreThresholds = Omit<ProcessingProfile['thresholds'], keyof typeof SCORE_DEFAULTS> &
  Partial<Pick<ProcessingProfile['thresholds'], keyof typeof SCORE_DEFAULTS>>;

/** A channel's main trigger (its strongest; older analyses: the first), or null. */
function mainTrigger(c: ChannelFeatures): { on: number; off: number | null; onset: number; peak: number } | null {
  const t = c.staLta.triggers;
  if (t.length === 0) return null;
  const i = c.staLta.main ?? 0;
  const m = t[i] ?? t[0];
  if (!m) return null;
  return { on: m.on, off: m.off, onset: m.onset ?? m.on, peak: m.peak ?? c.staLta.peak };
}

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
  const th = { ...SCORE_DEFAULTS, ...profile.thresholds };
  const useStation = baseline !== null && baseline.count >= th.minBaselineWindows;
  const base = useStation ? baseline : NETWORK_DEFAULT_BASELINE;
  const baseWords = useStation ? "this station's noise" : `the network default (station has ${baseline?.count ?? 0} of ${th.minBaselineWindows} noise windows)`;

  // 1. The deciding channel: the strongest main trigger; the vertical on a tie or when none triggered.
  const vi = leadChannelIndex(channels.map((c) => c.id));
  let di = -1;
  for (let i = 0; i < channels.length; i++) {
    const c = channels[i] as ChannelFeatures;
    if (c.staLta.triggers.length === 0) continue;
    if (di < 0 || c.staLta.peak > (channels[di] as ChannelFeatures).staLta.peak || (c.staLta.peak === (channels[di] as ChannelFeatures).staLta.peak && i === vi)) di = i;
  }
  if (di < 0) di = vi;
  const anyTrigger = channels.some((c) => c.staLta.triggers.length > 0);
  const lead = channels[di] as ChannelFeatures;
  const main = mainTrigger(lead);
  const reasons: string[] = [];
  if (!channels.some((c) => isVertical(c.id))) reasons.push(`no vertical component: ${lead.id} decides`);
  else if (di !== vi) reasons.push(`${lead.id} decides: its STA/LTA peak is the window's highest (the vertical ${(channels[vi] as ChannelFeatures).id} peaks at ${f1((channels[vi] as ChannelFeatures).staLta.peak)})`);

  const zr = lead.log10Ratio === null ? null : robustZ(lead.log10Ratio, base.log10Ratio, MAD_FLOOR.log10Ratio);
  const zp = robustZ(lead.staLta.peak, base.staLtaPeak, MAD_FLOOR.staLtaPeak);
  reasons.push(
    main
      ? `STA/LTA peak ${f1(main.peak)} on ${lead.id}, onset at ${f1(main.onset)} s (${signed(zp)} MAD against ${baseWords}), ${lead.staLta.triggers.length} trigger(s) above ${profile.staLta.on}`
      : `STA/LTA peak ${f1(lead.staLta.peak)} at ${f1(lead.staLta.peakTime)} s on ${lead.id}: no trigger above ${profile.staLta.on} (${signed(zp)} MAD against ${baseWords})`,
  );
  if (zr === null || lead.ratio === null) reasons.push(`${lead.id}: no band ratio (the low band has no energy)`);
  else reasons.push(`whole-window high/low ratio ${f1(lead.ratio)}, ${zr >= 0 ? `+${f1(zr)} MAD above` : `${f1(-zr)} MAD below`} ${baseWords}`);

  // 3. Energy in the band: the triggered part's PSD over the noise before it, summed over the high band.
  const hb = lead.bands.high;
  const sig = main ? (lead.signalSpectrum ?? null) : null;
  const inBandSnr = sig?.inBandSnr ?? null;
  const inBandShare = sig?.inBandShare ?? null;
  let inBand: boolean;
  let inBandKnown = true;
  if (sig && inBandSnr !== null && inBandShare !== null) {
    inBand = inBandSnr >= th.minInBandSnr && inBandShare >= th.minInBandShare;
    reasons.push(
      `the triggered part (${f1(sig.fromS)}–${f1(sig.toS)} s) in ${hb.fmin}–${hb.fmax} Hz: ${fmtDb(inBandSnr)} over the noise before it (${f1(sig.noiseFromS)}–${f1(sig.noiseToS)} s), ${Math.round(inBandShare * 100)} % of the band's bins ${sig.minSnr} × the noise or more` +
        (sig.peakFrequency === null ? '' : `; its excess peaks at ${fmtHz(sig.peakFrequency)} (centroid ${fmtHz(sig.centroid)})`),
    );
  } else if (main && lead.snr !== null && lead.snr !== undefined) {
    // No signal spectrum (parts too short, e.g. a trigger in the window's last seconds): too little
    // to call it an event; the amplitude SNR is reported and the window needs eyes.
    inBand = false;
    inBandKnown = false;
    reasons.push(`no signal spectrum (${lead.signalSpectrumNote ?? 'not computed'}); high-band SNR ${f1(lead.snr)} (amplitude) around the onset`);
  } else {
    inBand = false;
    inBandKnown = main !== null;
    if (main && lead.signalSpectrumNote) reasons.push(`no signal spectrum: ${lead.signalSpectrumNote}`);
  }
  // The band did not rise at all (its summed PSD under minSnr × the noise before it): whatever set the
  // trigger off came from outside the band (a loud burst leaking through the causal filter's skirt)
  // or from nothing — not ground motion in the band.
  const bandFlat = sig !== null && inBandSnr !== null && inBandSnr < sig.minSnr;
  const nothingStandsOut = bandFlat && sig.peakFrequency === null;
  const qcErrors = lead.qc.filter((q) => q.severity === 'error');
  const strong = main !== null && zp >= th.eventZ;
  // A trigger at a data problem (a gap or overlap where records were joined, a dropout, a DC step, a
  // spike) on any channel, within DATA_PROBLEM_S of the onset, is not evidence of ground motion.
  const atProblem = main === null
    ? []
    : channels.flatMap((c) => c.qc.filter((q) => DATA_PROBLEMS.has(q.code) && q.time !== undefined && Math.abs(q.time - main.onset) <= DATA_PROBLEM_S).map((q) => `${c.id}: ${q.message}`));

  // Evidence stored by engine version 1 (triggers without an onset), replayed by the threshold
  // tuning: judged by the rule it was made under (legacyInBand), so a station's history stays comparable.
  const legacy = main !== null && lead.staLta.triggers.every((t) => t.onset === undefined);
  if (legacy) {
    inBand = legacyInBand(lead, th) && zr !== null && zr >= th.eventZ;
    reasons.push('stored by an earlier engine: judged by its rule (whole-window ratio and where the spectrum peaks)');
  }
  let flag: WindowScore['flag'];
  if (qcErrors.length > 0 || atProblem.length > 0) {
    flag = 'needs eyes';
    for (const q of qcErrors) reasons.push(`quality problem on ${lead.id}: ${q.message}`);
    for (const m of atProblem) reasons.push(`the trigger sits at a data problem, not necessarily ground motion — ${m}`);
  } else if (strong && inBand) {
    flag = 'likely event';
  } else if (legacy ? false : !anyTrigger || zp < th.noiseZ || bandFlat) {
    flag = 'likely noise';
    if (main) {
      reasons.push(
        zp < th.noiseZ
          ? 'the trigger is no stronger than this station\'s ordinary noise'
          : nothingStandsOut
            ? 'the triggered part stands out from the noise before it in no frequency bin'
            : `the high band ${hb.fmin}–${hb.fmax} Hz did not rise (${fmtDb(inBandSnr)}): the energy that set the trigger off lies outside the band (its excess peaks at ${fmtHz(sig?.peakFrequency ?? null)}) and leaked through the filter — not an event in the band`,
      );
    }
  } else {
    flag = 'needs eyes';
    if (strong && !inBand) {
      reasons.push(
        !inBandKnown
          ? 'the trigger is strong but there is too little data around it to check the band: look at this window and the next'
          : inBandSnr !== null && inBandSnr >= th.minInBandSnr
            ? `the high band rose by ${fmtDb(inBandSnr)} but only in ${inBandShare === null ? 'n/a' : `${Math.round(inBandShare * 100)} %`} of its bins: a narrow-band signal (machinery, a resonance) rather than an earthquake's broad spectrum`
            : `the trigger is strong but the high band ${hb.fmin}–${hb.fmax} Hz hardly rose (${fmtDb(inBandSnr ?? (lead.snr ?? 0) ** 2)}, ${inBandShare === null ? 'n/a' : `${Math.round(inBandShare * 100)} %`} of its bins): energy may be leaking in from outside the band`
      );
    } else reasons.push('evidence between ordinary noise and an event');
  }
  // Beside it: every other channel, in words.
  for (let i = 0; i < channels.length; i++) {
    if (i === di) continue;
    const ch = channels[i] as ChannelFeatures;
    const m = mainTrigger(ch);
    reasons.push(`beside it, ${ch.id}: STA/LTA peak ${f1(ch.staLta.peak)}${m ? ` (onset ${f1(m.onset)} s)` : ''}, ${ch.staLta.triggers.length} trigger(s), ratio ${ch.ratio === null ? 'n/a' : f1(ch.ratio)}`);
  }

  // 5. The detection: the earliest onset among the channels' main triggers that are eventZ strong
  //    (P on the vertical comes before S on the horizontals), else the deciding channel's.
  let detection: Detection | null = null;
  if (main) {
    let best = { channel: lead.id, onset: main.onset, on: main.on };
    for (const ch of channels) {
      const m = mainTrigger(ch);
      if (!m || robustZ(m.peak, base.staLtaPeak, MAD_FLOOR.staLtaPeak) < th.eventZ) continue;
      const tOnset = Date.parse(ch.startTime ?? '') / 1000 + m.onset;
      const bOnset = Date.parse(channels.find((c) => c.id === best.channel)?.startTime ?? '') / 1000 + best.onset;
      if (Number.isFinite(tOnset) && Number.isFinite(bOnset) ? tOnset < bOnset : m.onset < best.onset) best = { channel: ch.id, onset: m.onset, on: m.on };
    }
    detection = { ...best, peak: main.peak, decidedBy: lead.id };
  }
  let score = 0.5 * clamp(zp) + 0.5 * clamp(zr ?? 0);
  if (!inBand && score > 0) score /= 2;
  score = Math.round(score * 10) / 10;
  return { score, flag, reasons, leadChannel: lead.id, baseline: useStation ? 'station' : 'network default', zLog10Ratio: zr, zStaLtaPeak: zp, detection };
}

/**
 * The in-band test of engine version 1, for replaying stored evidence: with a signal spectrum, its
 * excess peak within the high band widened by signalPeakTolerance and the excess centroid at most
 * centroidMaxFactor × the band's top; without one, the whole-window dominant frequency inside the
 * band and the centroid at most centroidMaxFactor × the top.
 */
function legacyInBand(c: ChannelFeatures, th: { signalPeakTolerance: number; centroidMaxFactor: number }): boolean {
  const hb = c.bands.high;
  const sig = c.signalSpectrum ?? null;
  if (sig) {
    const lo = hb.fmin / (1 + th.signalPeakTolerance);
    const hi = hb.fmax * (1 + th.signalPeakTolerance);
    return sig.peakFrequency !== null && sig.peakFrequency >= lo && sig.peakFrequency <= hi && sig.centroid !== null && sig.centroid <= th.centroidMaxFactor * hb.fmax;
  }
  const d = c.dominantFrequency;
  return d !== null && d >= hb.fmin && d <= hb.fmax && c.spectralCentroid !== null && c.spectralCentroid <= th.centroidMaxFactor * hb.fmax;
}

/** A power ratio in dB (10·log10). */
function fmtDb(r: number | null): string {
  return r === null || !(r > 0) ? 'n/a' : `${f1(10 * Math.log10(r))} dB`;
}

function fmtHz(f: number | null): string {
  return f === null ? 'n/a' : `${f1(f)} Hz`;
}
