import type { DecodedStream } from '../formats/types';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import { butterworthSos, type Sos } from './butterworth';
import { channelChain } from './channel-chain';
import { nlnmDb, nhnmDb, noiseModelPosition } from './noise-models';
import { qualityChecks, type QcFinding } from './qc';
import { countsPsdToVelocity, velocityPsdToAccelerationDb, type PolesZerosResponse } from './response';
import { scoreWindow, type SignalSpectrumFeatures, type StationBaseline, type WindowScore } from './score';
import { planSignalSegments, snrSpectrum, spectralStats, spectrogram, welchPsd, type Spectrogram } from './spectrum';
import { peakOf, snrAroundTrigger } from './sta-lta';
import { sosfiltInto, sosfiltZeroPhase } from './sosfilt';
import { workArray } from './work-arrays';

/**
 * The analysis of one window (one station's channels for one time span): the output contract of
 * issue 4 ("The command line, and the output contract"). Times are s from the channel's first
 * sample; energies in the input's units (counts²·s, or (m/s)²·s with a sensitivity); every filtered
 * number comes from causal filtering from zero state (`filtering` says so).
 */

/** Options of `analyzeWindow`. */
export interface AnalyzeOptions {
  /** Per stream id: a flat sensitivity in counts per (m/s), or a full poles-and-zeros response. */
  sensitivity?: Record<string, number | PolesZerosResponse>;
  /** The station's noise baseline (null or absent: the network default is used). */
  baseline?: StationBaseline | null;
  /** Expected sample rate per stream id from the station registry, Hz (overrides the profile's). */
  expectedSampleRateHz?: Record<string, number>;
  /** Add decimated traces, the STA/LTA curve and a spectrogram for display (default false). */
  display?: boolean;
  /** Points per decimated display curve (min/max pairs), default 2000. */
  displayPoints?: number;
  /**
   * Filtering of the DISPLAYED band traces: `causal` (default, the traces the numbers come from) or
   * `zero-phase` (forward-backward, no phase lag, for looking at onsets). Numbers are always causal.
   */
  displayFiltering?: 'causal' | 'zero-phase';
}

/** One band's edges (as used, after any cap) and energy. */
export interface BandResult {
  fmin: number;
  fmax: number;
  energy: number;
}

/** Per-channel display data (decimated by min/max buckets so peaks survive). */
export interface ChannelDisplay {
  /** Samples per bucket; each bucket gives two points (min then max, in time order). */
  bucket: number;
  /** How the displayed band traces were filtered. */
  filtering: 'causal' | 'zero-phase';
  /** Times of the points, s from the first sample. */
  times: number[];
  trace: number[];
  low: number[];
  high: number[];
  staLta: number[];
  spectrogram: Spectrogram | null;
}

/** The analysis of one channel. */
export interface ChannelResult {
  id: string;
  sampleRate: number;
  /** ISO 8601 UTC with milliseconds. */
  startTime: string;
  /** Number of samples. */
  samples: number;
  durationS: number;
  units: 'counts' | 'm/s';
  qc: QcFinding[];
  /** Warnings about the processing itself (capped bands, skipped band-reject filters, short PSD). */
  warnings: string[];
  bands: { low: BandResult; high: BandResult };
  bandReject: Array<{ fmin: number; fmax: number; applied: boolean }>;
  ratio: number | null;
  log10Ratio: number | null;
  staLta: {
    method: 'classic' | 'recursive';
    peak: number;
    peakTime: number;
    /** On and off (s from the first sample), the AIC onset (s; ≤ on) and the peak of each trigger. */
    triggers: Array<{ on: number; off: number | null; onset: number; peak: number }>;
    /** Index of the channel's strongest trigger (the one `snr` and `signalSpectrum` describe), or null. */
    main: number | null;
  };
  snr: number | null;
  /** High-band RMS over the first staLta.onsetWindowS after the main onset ÷ the noise before it (amplitude); null without a trigger. */
  onsetSnr: number | null;
  /**
   * Welch PSD of the pre-processed trace. `values` is null only where a poles-and-zeros response is 0
   * (e.g. the 0 Hz bin of a velocity sensor), so the PSD cannot be corrected there.
   */
  psd: { freqs: number[]; values: Array<number | null>; units: string; nperseg: number; segments: number };
  dominantFrequency: number | null;
  spectralCentroid: number | null;
  /**
   * With a trigger: where the triggered part rises above the pre-trigger noise (Welch PSD of the
   * pre-processed, band-rejected trace over the signal part ÷ the same over the noise part; see
   * `planSignalSegments`, `snrSpectrum`). Null without a trigger or when the parts are too short
   * (`signalSpectrumNote` says why); the score then uses the whole-window spectrum.
   */
  signalSpectrum: SignalSpectrumFeatures | null;
  /** Why `signalSpectrum` is null although there is a trigger; null otherwise. */
  signalSpectrumNote: string | null;
  /** With a sensitivity: acceleration PSD, dB rel 1 (m/s²)²/Hz, and where it sits against Peterson's models. */
  noiseModels: {
    accelerationDb: Array<number | null>;
    nlnmDb: Array<number | null>;
    nhnmDb: Array<number | null>;
    medianPosition: number | null;
    belowLow: number;
    aboveHigh: number;
  } | null;
  display?: ChannelDisplay;
}

/** The analysis of a window. */
export interface AnalysisResult extends WindowScore {
  channels: ChannelResult[];
  filtering: 'causal, zero initial state';
}

/** An input the pipeline cannot analyse (names the channel and the problem). */
export class AnalysisError extends Error {
  override readonly name = 'AnalysisError';
}

const MIN_SAMPLES = 16;

/**
 * Butterworth designs by order, edges, type and rate, kept across windows (a network has a few
 * profiles and rates, so a few entries; emptied when it reaches DESIGN_CACHE_SIZE). The sections
 * are only read by the filters, never changed.
 */
const designCache = new Map<string, Sos>();
const DESIGN_CACHE_SIZE = 64;

/**
 * Analyse one window: per channel QC → pre-process (demean, linear detrend, Tukey taper) → optional
 * sensitivity → band-reject → low/high Butterworth band-passes (causal) → band energies and ratio →
 * STA/LTA on the high band → SNR → Welch PSD, dominant frequency, centroid → with a trigger, the
 * signal-to-noise spectrum of the triggered part → noise-model position
 * (with a sensitivity); then `scoreWindow` over all channels.
 * Pure: the input samples are not mutated.
 * @throws AnalysisError for no channels or a channel under 16 samples; BandError for a refused band;
 *   RangeError for invalid sample rates.
 */
export function analyzeWindow(streams: readonly DecodedStream[], profile: ProcessingProfile, opts: AnalyzeOptions = {}): AnalysisResult {
  if (streams.length === 0) throw new AnalysisError('the window has no channels to analyse');
  const stations = [...new Set(streams.map((s) => `${s.network}.${s.station}`))];
  if (stations.length > 1) {
    throw new AnalysisError(`a window holds one station's channels; got ${stations.length} stations (${stations.join(', ')})`);
  }
  const design = (order: number, edges: [number, number], type: 'bandpass' | 'bandstop', fs: number): Sos => {
    const key = `${order}|${edges[0]}|${edges[1]}|${type}|${fs}`;
    let sos = designCache.get(key);
    if (!sos) {
      sos = butterworthSos(order, edges, type, fs);
      if (designCache.size >= DESIGN_CACHE_SIZE) designCache.clear();
      designCache.set(key, sos);
    }
    return sos;
  };
  const channels = streams.map((s) => analyzeChannel(s, profile, opts, design));
  const score = scoreWindow(channels, opts.baseline ?? null, profile);
  return { channels, ...score, filtering: 'causal, zero initial state' };
}

function analyzeChannel(
  s: DecodedStream,
  profile: ProcessingProfile,
  opts: AnalyzeOptions,
  design: (order: number, edges: [number, number], type: 'bandpass' | 'bandstop', fs: number) => Sos,
): ChannelResult {
  const fs = s.sampleRateHz;
  if (!(fs > 0) || !Number.isFinite(fs)) throw new AnalysisError(`${s.id}: sample rate ${fs} Hz is not a positive number`);
  const n = s.samples.length;
  if (n < MIN_SAMPLES) throw new AnalysisError(`${s.id}: only ${n} samples, at least ${MIN_SAMPLES} are needed`);
  const raw = s.samples;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(raw[i])) {
      throw new AnalysisError(`${s.id}: sample ${i} (${(i / fs).toFixed(3)} s) is ${raw[i]}, not a finite number`);
    }
  }
  const ltaSamples = Math.round((profile.staLta.startS + profile.staLta.minLtaS + profile.staLta.staS) * fs);
  const qc = qualityChecks(s.samples, fs, s.discontinuities, {
    fullScaleCounts: profile.qc.fullScaleCounts,
    flatTopSamples: profile.qc.flatTopSamples,
    spikeK: profile.qc.spikeK,
    expectedSampleRateHz: opts.expectedSampleRateHz?.[s.id] ?? profile.qc.expectedSampleRateHz,
    minSamples: ltaSamples,
    decodeNotes: s.notes,
  });
  const warnings: string[] = [];
  const response = opts.sensitivity?.[s.id];
  const flatSensitivity = response === undefined ? 1 : typeof response === 'number' ? response : response.sensitivity;
  if (!(flatSensitivity > 0) || !Number.isFinite(flatSensitivity)) {
    throw new AnalysisError(`${s.id}: sensitivity ${flatSensitivity} counts per m/s must be a positive number`);
  }
  // The per-channel chain the trace view runs too (channel-chain.ts): pre-processing, bands,
  // band-reject, both band-passes and the trigger's own chain. Every long intermediate trace lives in
  // a reused work array (see work-arrays.ts); none leaves this function. Only the display shows the
  // band traces; otherwise the chain computes their energies without them.
  const ch = channelChain(s.samples, fs, profile, flatSensitivity, design, { workArrays: true, bands: opts.display === true ? 'traces' : 'energies' });
  warnings.push(...ch.warnings);
  const { pre, rejected, low, high, lowSos, highSos, bandReject } = ch;
  const zeroPhaseDisplay = opts.display === true && opts.displayFiltering === 'zero-phase';
  const eLow = ch.energy.low;
  const eHigh = ch.energy.high;
  const ratio = eLow > 0 ? eHigh / eLow : null;
  const log10Ratio = ratio !== null && ratio > 0 ? Math.log10(ratio) : null;

  const sl = profile.staLta;
  const chain = ch.trigger;
  const { startIndex, cf, highY: trigY, base: trigBase } = chain;
  const trig = chain.triggers;
  const pk = peakOf(cf, fs);
  const onsets = trig.map((t) => t.onsetIndex);
  const trigPeaks = trig.map((t) => t.peak);
  // The channel's main trigger is its strongest (the one its features describe).
  let mainIdx = -1;
  for (let i = 0; i < trig.length; i++) if (mainIdx < 0 || (trigPeaks[i] as number) > (trigPeaks[mainIdx] as number)) mainIdx = i;
  const first = mainIdx >= 0 ? trig[mainIdx] : undefined;
  const firstOnset = mainIdx >= 0 ? (onsets[mainIdx] as number) : null;
  // How sudden the onset is: the high band's RMS over the first `onsetWindowS` after the onset
  // against the noise before it (an amplitude ratio). Impulsive arrivals jump at once; traffic,
  // wind and other emergent noise climb over seconds.
  const onsetSnr = snrAroundTrigger(trigY, fs, firstOnset, sl.onsetWindowS, Math.min(profile.snr.noiseS, firstOnset === null ? 0 : (firstOnset - startIndex) / fs));
  const snr = snrAroundTrigger(trigY, fs, firstOnset, profile.snr.signalS, Math.min(profile.snr.noiseS, firstOnset === null ? 0 : (firstOnset - startIndex) / fs));

  // PSD: with a full response, compute in counts and correct per frequency; otherwise on the scaled trace.
  const paz = typeof response === 'object' ? response : null;
  let psdTrace = pre;
  if (paz) {
    psdTrace = pre.slice();
    for (let i = 0; i < n; i++) psdTrace[i] = (psdTrace[i] as number) * flatSensitivity;
  }
  const psd = welchPsd(psdTrace, fs, profile.psd.nperseg);
  if (psd.warning) warnings.push(psd.warning);
  const psdValues = paz ? countsPsdToVelocity(psd.freqs, psd.values, paz) : psd.values;
  // Dominant frequency and centroid: where the spectrum peaks once the station's known machinery
  // lines are removed — from the PSD of the band-rejected trace (a strong line also leaks into
  // neighbouring bins through the window's sidelobes, so masking its band alone is not enough),
  // with the reject bands themselves left out too. The reported `psd` stays the recorded one.
  const excluded = profile.bandReject.filter((b) => b.fmax < fs / 2);
  let statsValues = psdValues;
  if (excluded.length > 0) {
    const rej = welchPsd(rejected, fs, profile.psd.nperseg).values;
    if (paz) {
      for (let k = 0; k < rej.length; k++) rej[k] = (rej[k] as number) * flatSensitivity * flatSensitivity;
      statsValues = countsPsdToVelocity(psd.freqs, rej, paz);
    } else statsValues = rej;
  }
  const stats = spectralStats(psd.freqs, statsValues, profile.psd.fminStats, excluded);

  // Signal spectrum: from the first trigger's onset, on the trigger's (untapered, band-rejected)
  // trace, against the noise before it. Units cancel in the ratio (so does a flat sensitivity).
  let signalSpectrum: SignalSpectrumFeatures | null = null;
  let signalSpectrumNote: string | null = null;
  if (first && firstOnset !== null) {
    const planned = planSignalSegments(n, fs, { onIndex: firstOnset, offIndex: first.offIndex }, {
      ...profile.signalSpectrum,
      guardSamples: Math.round(profile.signalSpectrum.guardS * fs),
      taperSamples: startIndex,
      maxNperseg: profile.psd.nperseg,
    });
    if ('note' in planned) signalSpectrumNote = planned.note;
    else {
      const p = planned.plan;
      const sp = snrSpectrum(trigBase, fs, p, profile.psd.fminStats, 0.45 * fs, excluded, profile.signalSpectrum.minSnr, [high.fmin, high.fmax]);
      signalSpectrum = {
        peakFrequency: sp.peakFrequency,
        peakSnr: sp.peakSnr,
        centroid: sp.centroid,
        inBandSnr: sp.inBandSnr,
        inBandShare: sp.inBandShare,
        fromS: p.signalFrom / fs,
        toS: p.signalTo / fs,
        noiseFromS: p.noiseFrom / fs,
        noiseToS: p.noiseTo / fs,
        nperseg: p.nperseg,
        minSnr: profile.signalSpectrum.minSnr,
      };
    }
  }
  const physical = response !== undefined;
  let noiseModels: ChannelResult['noiseModels'] = null;
  if (physical) {
    const acc = velocityPsdToAccelerationDb(psd.freqs, psdValues);
    const pos = noiseModelPosition(psd.freqs, acc);
    const freqs = toNumbers(psd.freqs);
    noiseModels = {
      accelerationDb: finiteOrNull(acc),
      nlnmDb: freqs.map((f) => (f > 0 ? nlnmDb(1 / f) : null)),
      nhnmDb: freqs.map((f) => (f > 0 ? nhnmDb(1 / f) : null)),
      medianPosition: pos.median,
      belowLow: pos.belowLow,
      aboveHigh: pos.aboveHigh,
    };
  }
  const result: ChannelResult = {
    id: s.id,
    sampleRate: fs,
    startTime: new Date(Math.floor(s.startTimeUs / 1000)).toISOString(),
    samples: n,
    durationS: n / fs,
    units: physical ? 'm/s' : 'counts',
    qc,
    warnings,
    bands: { low: { fmin: low.fmin, fmax: low.fmax, energy: eLow }, high: { fmin: high.fmin, fmax: high.fmax, energy: eHigh } },
    bandReject,
    ratio,
    log10Ratio,
    staLta: {
      method: sl.method,
      peak: pk.peak,
      peakTime: pk.peakTime,
      triggers: trig.map((t, i) => ({ on: t.on, off: t.off, onset: (onsets[i] ?? t.onIndex) / fs, peak: trigPeaks[i] ?? 0 })),
      main: mainIdx >= 0 ? mainIdx : null,
    },
    snr,
    onsetSnr,
    psd: {
      freqs: toNumbers(psd.freqs),
      values: finiteOrNull(psdValues),
      units: physical ? '(m/s)^2/Hz' : 'counts^2/Hz',
      nperseg: psd.nperseg,
      segments: psd.segments,
    },
    dominantFrequency: stats.dominantFrequency,
    spectralCentroid: stats.spectralCentroid,
    signalSpectrum,
    signalSpectrumNote,
    noiseModels,
  };
  if (opts.display) {
    const points = Math.max(10, opts.displayPoints ?? 2000);
    const bucket = Math.max(1, Math.ceil((2 * n) / points));
    const idx = minMaxIndices(pre, bucket);
    const pick = (y: Float64Array): number[] => idx.map((i) => y[i] as number);
    const lowShown = zeroPhaseDisplay ? sosfiltZeroPhase(lowSos, rejected) : (ch.lowY ?? sosfiltInto(lowSos, rejected, workArray('low-band', n)));
    const highShown = zeroPhaseDisplay ? sosfiltZeroPhase(highSos, rejected) : (ch.highY ?? sosfiltInto(highSos, rejected, workArray('high-band', n)));
    result.display = {
      bucket,
      filtering: zeroPhaseDisplay ? 'zero-phase' : 'causal',
      times: idx.map((i) => i / fs),
      trace: pick(pre),
      low: pick(lowShown),
      high: pick(highShown),
      staLta: maxPerBucket(cf, idx, bucket),
      spectrogram: n >= 16 ? spectrogram(pre, fs) : null,
    };
  }
  return result;
}

/** A typed array as a plain number array (a loop: `Array.from` on a typed array is several times slower). */
function toNumbers(a: Float64Array): number[] {
  const out = new Array<number>(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i] as number;
  return out;
}

/** A typed array as numbers, with null where a value is not finite (JSON has no NaN or ±Infinity). */
function finiteOrNull(a: Float64Array): Array<number | null> {
  const out = new Array<number | null>(a.length);
  for (let i = 0; i < a.length; i++) {
    const v = a[i] as number;
    out[i] = Number.isFinite(v) ? v : null;
  }
  return out;
}

/** Indices of the min and max of each bucket of `bucket` samples, in time order. */
function minMaxIndices(y: Float64Array, bucket: number): number[] {
  const out: number[] = [];
  if (bucket === 1) {
    for (let i = 0; i < y.length; i++) out.push(i);
    return out;
  }
  for (let b = 0; b < y.length; b += bucket) {
    const e = Math.min(y.length, b + bucket);
    let lo = b;
    let hi = b;
    for (let i = b + 1; i < e; i++) {
      if ((y[i] as number) < (y[lo] as number)) lo = i;
      if ((y[i] as number) > (y[hi] as number)) hi = i;
    }
    if (lo === hi) out.push(lo);
    else out.push(Math.min(lo, hi), Math.max(lo, hi));
  }
  return out;
}

/** For each display point, the curve's maximum over that point's bucket (STA/LTA peaks stay visible). */
function maxPerBucket(cf: Float64Array, idx: number[], bucket: number): number[] {
  return idx.map((i) => {
    const b = Math.floor(i / bucket) * bucket;
    let m = 0;
    for (let j = b; j < Math.min(cf.length, b + bucket); j++) if ((cf[j] as number) > m) m = cf[j] as number;
    return m;
  });
}
