import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * The processing profile: every parameter of the triage engine, per station, with the defaults of
 * the processing table in the product brief. Shared by server (analysis) and client (profile
 * editor), so both validate the same way.
 *
 * Frequencies are in Hz, times in seconds. Parse external input with `processingProfileSchema`
 * (every field has a default, so `processingProfileSchema.parse({})` gives the default profile).
 */

/** A frequency band in Hz: `fmin < fmax`, both > 0. */
export const frequencyBandSchema = lazySchema(() =>
  z
    .object({
      fmin: z.number().positive('fmin must be > 0 Hz'),
      fmax: z.number().positive('fmax must be > 0 Hz'),
    })
    .refine((b) => b.fmin < b.fmax, { message: 'fmin must be lower than fmax' }),
);

/** A frequency band in Hz. */
export type FrequencyBand = z.infer<typeof frequencyBandSchema>;

/** A per-station band-reject (Butterworth band-stop) filter for a known machinery line. */
export const bandRejectSchema = lazySchema(() =>
  z
    .object({
      fmin: z.number().positive('fmin must be > 0 Hz'),
      fmax: z.number().positive('fmax must be > 0 Hz'),
      /** Butterworth prototype order N (the band-stop has 2N poles). */
      order: z.number().int().min(1).max(8).default(4),
      /** Why the filter exists, for the technician (e.g. "pump, 25 Hz"). */
      label: z.string().max(80).optional(),
    })
    .refine((b) => b.fmin < b.fmax, { message: 'fmin must be lower than fmax' }),
);

/** A band-reject filter. */
export type BandReject = z.infer<typeof bandRejectSchema>;

/** The whole processing profile. */
export const processingProfileSchema = lazySchema(() =>
  z.object({
    preprocess: z
      .object({
        /** Tukey taper α (fraction of the window tapered in total; 0.10 = 5 % at each end). */
        taperAlpha: z.number().min(0).max(1).default(0.1),
      })
      .default({ taperAlpha: 0.1 }),
    bands: z
      .object({
        low: frequencyBandSchema.default({ fmin: 0.5, fmax: 2 }),
        high: frequencyBandSchema.default({ fmin: 2, fmax: 10 }),
        /** Butterworth prototype order N of both band-passes (2N poles, as scipy butter(N, ...)). */
        order: z.number().int().min(1).max(8).default(4),
        /**
         * What to do when a band's upper edge is at or above 0.45·fs: `refuse` (an error naming the
         * band and fs) or `cap` (lower the edge to 0.45·fs and add a warning to the channel).
         */
        nyquistPolicy: z.enum(['refuse', 'cap']).default('refuse'),
      })
      .default({ low: { fmin: 0.5, fmax: 2 }, high: { fmin: 2, fmax: 10 }, order: 4, nyquistPolicy: 'refuse' }),
    bandReject: z.array(bandRejectSchema).max(8).default([]),
    psd: z
      .object({
        /** Welch segment length in samples (a power of two). */
        nperseg: z
          .number()
          .int()
          .min(16)
          .max(65536)
          .refine((n) => (n & (n - 1)) === 0, { message: 'nperseg must be a power of two' })
          .default(1024),
        /** Lowest frequency used for the dominant frequency and the centroid, Hz. */
        fminStats: z.number().min(0).default(0.1),
      })
      .default({ nperseg: 1024, fminStats: 0.1 }),
    staLta: z
      .object({
        method: z.enum(['classic', 'recursive']).default('classic'),
        staS: z.number().positive().default(1),
        ltaS: z.number().positive().default(30),
        on: z.number().positive().default(3.5),
        off: z.number().positive().default(1.5),
        /** The trigger ignores this much of the window's start (a cosine ramp, then the filter settles), s. */
        startS: z.number().min(0).max(10).default(0.75),
        /** The LTA must hold at least this much noise before a ratio is given, s (an expanding LTA until ltaS). */
        minLtaS: z.number().positive().max(60).default(1.25),
        /** The AIC onset is searched from this long before a trigger … */
        onsetSearchS: z.number().positive().max(10).default(2.5),
        /** … to this long after it, s. */
        onsetAfterS: z.number().min(0).max(5).default(0.5),
        /** Window after the onset over which its suddenness (onsetSnr) is measured, s. */
        onsetWindowS: z.number().positive().max(5).default(0.5),
      })
      .refine((s) => s.staS < s.ltaS, { message: 'the STA window must be shorter than the LTA window' })
      .refine((s) => s.off < s.on, { message: 'the trigger-off level must be below the trigger-on level' })
      .refine((s) => s.minLtaS <= s.ltaS, { message: 'minLtaS must not exceed the LTA window' })
      .default({ method: 'classic', staS: 1, ltaS: 30, on: 3.5, off: 1.5, startS: 0.75, minLtaS: 1.25, onsetSearchS: 2.5, onsetAfterS: 0.5, onsetWindowS: 0.5 }),
    snr: z
      .object({
        /** Length of the signal window after the first trigger-on, s. */
        signalS: z.number().positive().default(10),
        /** Length of the noise window ending at the first trigger-on, s. */
        noiseS: z.number().positive().default(30),
      })
      .default({ signalS: 10, noiseS: 30 }),
    qc: z
      .object({
        /** Digitiser full scale in counts (|x| ≥ this is clipped); absent: look for flat tops. */
        fullScaleCounts: z.number().positive().optional(),
        /** A flat top is at least this many consecutive equal samples at max|x|. */
        flatTopSamples: z.number().int().min(2).default(3),
        /** Spike rule: |x − median5| > k · 1.4826 · MAD of that residual. */
        spikeK: z.number().positive().default(20),
        /** Expected sample rate from the station registry, Hz (checked when given). */
        expectedSampleRateHz: z.number().positive().optional(),
      })
      .default({ flatTopSamples: 3, spikeK: 20 }),
    thresholds: z
      .object({
        /** Robust z of log10 ratio and of STA/LTA peak at or above which the evidence counts as high. */
        eventZ: z.number().default(3),
        /** Robust z below which the evidence counts as ordinary noise. */
        noiseZ: z.number().default(2),
        /** A station needs this many noise windows before its own baseline replaces the network default. */
        minBaselineWindows: z.number().int().min(1).default(20),
        /**
         * "Likely event" needs the dominant frequency inside the high band and the spectral centroid
         * no higher than this factor × the high band's upper edge (the centroid of a real arrival is
         * pulled up by a white instrument-noise floor; a machinery burst above the band pulls it far up).
         */
        centroidMaxFactor: z.number().min(1).default(1.5),
        /**
         * With a trigger, "likely event" needs the signal peak frequency (where the triggered part
         * rises most above the pre-trigger noise) within the high band widened by this fraction:
         * fmin/(1 + t) … fmax·(1 + t) (0.2: 1.67–12 Hz for 2–10 Hz). The excess-weighted centroid must
         * then lie at or below centroidMaxFactor × fmax. (No signal peak at all — the triggered part is
         * nowhere signalSpectrum.minSnr × the noise — refuses "likely event" too.)
         */
        signalPeakTolerance: z.number().min(0).max(2).default(0.2),
        /**
         * "Likely event" needs the triggered part's high-band power (Σ PSD over the band, from the
         * onset) to reach this multiple of the noise before it (6.3 ≈ 8 dB: chosen on the development
         * part of `npm run eval:detection`, where 4 let three weak transients in the noise through;
         * checked on the held-out part) …
         */
        minInBandSnr: z.number().min(1).default(6.3),
        /** … with at least this share of the band's bins at signalSpectrum.minSnr × the noise or more. */
        minInBandShare: z.number().min(0).max(1).default(0.5),
      })
      .default({ eventZ: 3, noiseZ: 2, minBaselineWindows: 20, centroidMaxFactor: 1.5, signalPeakTolerance: 0.2, minInBandSnr: 6.3, minInBandShare: 0.5 }),
    /**
     * The signal spectrum the score reads when there is a trigger: Welch PSD of the triggered part over
     * that of the pre-trigger noise (see server/dsp/README.md). Absent in older profiles: defaults.
     */
    signalSpectrum: z
      .object({
        /** Signal part: from the first trigger-on for its duration, bounded to [minS, maxS], s. */
        minS: z.number().positive().default(2),
        maxS: z.number().positive().default(20),
        /** Pre-trigger noise part: at most noiseMaxS, at least noiseMinS (else the whole-window rule), s. */
        noiseMinS: z.number().positive().default(1.5),
        /** Gap left between the noise part and the onset, s. */
        guardS: z.number().min(0).default(0.25),
        noiseMaxS: z.number().positive().default(30),
        /** Welch segment length wanted for both parts, s (rounded down to a power of two of samples, ≤ psd.nperseg). */
        segmentS: z.number().positive().default(2.56),
        /** Bins count for the signal peak and centroid only where signal PSD ≥ minSnr × noise PSD. */
        minSnr: z.number().min(1).default(2),
      })
      .refine((s) => s.minS <= s.maxS, { message: 'signalSpectrum.minS must not exceed maxS' })
      .refine((s) => s.noiseMinS <= s.noiseMaxS, { message: 'signalSpectrum.noiseMinS must not exceed noiseMaxS' })
      .default({ minS: 2, maxS: 20, noiseMinS: 1.5, noiseMaxS: 30, guardS: 0.25, segmentS: 2.56, minSnr: 2 }),
  }),
);

/** A parsed processing profile (all defaults filled in). */
export type ProcessingProfile = z.infer<typeof processingProfileSchema>;

/** The profile input as a client may send it (every field optional). */
export type ProcessingProfileInput = z.input<typeof processingProfileSchema>;

/** The default processing profile (the brief's processing table). */
export const defaultProcessingProfile: ProcessingProfile = processingProfileSchema.parse({});
