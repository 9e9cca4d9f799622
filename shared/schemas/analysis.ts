import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * The stored analysis of a window (`windows.analysis`): the engine's output contract
 * (server/dsp/pipeline.ts `AnalysisResult` with its `ChannelResult`s) as the one zod schema every
 * reader parses with. A reader that needs only some fields derives its schema from these with
 * `.pick()`, so it cannot drift from the engine. Fields the engine gained after windows were first
 * stored are optional here: an older analysis still parses. tests/shared/schemas/analysis.test.ts
 * checks at compile time that the engine's result type fits this schema and names no field it lacks.
 *
 * Units: times in s from the channel's first sample unless named otherwise, frequencies in Hz,
 * energies in the input's units (counts²·s, or (m/s)²·s with a sensitivity), PSDs per Hz.
 */

const num = lazySchema(() => z.number());
const nullableNum = lazySchema(() => z.number().nullable());

/** One quality finding of a channel (server/dsp/qc.ts `QcFinding`; `code` is a stable word such as `gap`). */
export const qcFindingSchema = lazySchema(() =>
  z.object({
    code: z.string(),
    severity: z.enum(['info', 'warning', 'error']),
    message: z.string(),
    sampleIndex: num.optional(),
    time: num.optional(),
    count: num.optional(),
  }),
);

/** One band's edges as used (after any cap) and its energy. */
export const bandResultSchema = lazySchema(() => z.object({ fmin: num, fmax: num, energy: num }));

/** One STA/LTA trigger: on and off, and (newer analyses) the AIC onset (≤ on) and its peak. */
export const triggerSchema = lazySchema(() => z.object({ on: num, off: nullableNum, onset: num.optional(), peak: num.optional() }));

/** The STA/LTA of a channel. */
export const staLtaResultSchema = lazySchema(() =>
  z.object({
    method: z.enum(['classic', 'recursive']),
    peak: num,
    peakTime: num,
    triggers: z.array(triggerSchema),
    /** Index of the strongest trigger (absent in older analyses: the first). */
    main: nullableNum.optional(),
  }),
);

/** Where a triggered part rises above the pre-trigger noise (server/dsp/score.ts `SignalSpectrumFeatures`). */
export const signalSpectrumSchema = lazySchema(() =>
  z.object({
    peakFrequency: nullableNum,
    peakSnr: nullableNum,
    centroid: nullableNum,
    inBandSnr: nullableNum.optional(),
    inBandShare: nullableNum.optional(),
    minSnr: num,
    fromS: num,
    toS: num,
    noiseFromS: num,
    noiseToS: num,
    nperseg: num,
  }),
);

/** A display spectrogram: dB rel (units)²/Hz, row-major `[time][freq]`. */
export const spectrogramSchema = lazySchema(() => z.object({ times: z.array(num), freqs: z.array(num), db: z.array(num), nperseg: num, step: num }));

/** Decimated display curves (min/max buckets), present only when the analysis was asked for them. */
export const channelDisplaySchema = lazySchema(() =>
  z.object({
    bucket: num,
    filtering: z.enum(['causal', 'zero-phase']),
    times: z.array(num),
    trace: z.array(num),
    low: z.array(num),
    high: z.array(num),
    staLta: z.array(num),
    spectrogram: spectrogramSchema.nullable(),
  }),
);

/** The analysis of one channel (server/dsp/pipeline.ts `ChannelResult`). */
export const channelResultSchema = lazySchema(() =>
  z.object({
    id: z.string(),
    sampleRate: num,
    /** ISO 8601 UTC with milliseconds. */
    startTime: z.string(),
    samples: num,
    durationS: num,
    units: z.enum(['counts', 'm/s']),
    qc: z.array(qcFindingSchema),
    warnings: z.array(z.string()),
    bands: z.object({ low: bandResultSchema, high: bandResultSchema }),
    bandReject: z.array(z.object({ fmin: num, fmax: num, applied: z.boolean() })),
    ratio: nullableNum,
    log10Ratio: nullableNum,
    staLta: staLtaResultSchema,
    snr: nullableNum,
    /** High-band amplitude SNR just after the main onset (newer analyses). */
    onsetSnr: nullableNum.optional(),
    /** Welch PSD; a value is null where a poles-and-zeros response is 0 (older analyses: never null). */
    psd: z.object({ freqs: z.array(num), values: z.array(nullableNum), units: z.string(), nperseg: num, segments: num }),
    dominantFrequency: nullableNum,
    spectralCentroid: nullableNum,
    /** Absent in analyses made before the engine had it. */
    signalSpectrum: signalSpectrumSchema.nullable().optional(),
    signalSpectrumNote: z.string().nullable().optional(),
    /** With a sensitivity: acceleration PSD, dB rel 1 (m/s²)²/Hz, against Peterson's NLNM/NHNM. */
    noiseModels: z
      .object({
        accelerationDb: z.array(nullableNum),
        nlnmDb: z.array(nullableNum),
        nhnmDb: z.array(nullableNum),
        medianPosition: nullableNum,
        belowLow: num,
        aboveHigh: num,
      })
      .nullable(),
    display: channelDisplaySchema.optional(),
  }),
);

/** The window's detection: the arrival the flag and the event groups read (newer analyses). */
export const detectionSchema = lazySchema(() => z.object({ channel: z.string(), onset: num, on: num, peak: num, decidedBy: z.string() }));

/** The stored analysis of one window (server/dsp/pipeline.ts `AnalysisResult`). */
export const storedAnalysisSchema = lazySchema(() =>
  z.object({
    score: num,
    flag: z.enum(['likely event', 'likely noise', 'needs eyes']),
    reasons: z.array(z.string()),
    /** Id of the channel that decided the score. */
    leadChannel: z.string(),
    baseline: z.enum(['station', 'network default']),
    zLog10Ratio: nullableNum,
    zStaLtaPeak: nullableNum,
    detection: detectionSchema.nullable().optional(),
    channels: z.array(channelResultSchema),
    filtering: z.literal('causal, zero initial state'),
  }),
);

/** A stored analysis as the schema reads it. */
export type StoredAnalysis = z.infer<typeof storedAnalysisSchema>;
/** One channel of a stored analysis. */
export type StoredChannelResult = z.infer<typeof channelResultSchema>;
