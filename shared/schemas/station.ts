import { z } from 'zod';
import { lazySchema } from './lazy-schema';
import { processingProfileSchema, type ProcessingProfile } from './processing-profile';

/**
 * Station registry schemas, shared by the server (request validation, OpenAPI document) and the
 * client (forms), so both refuse the same input with the same words.
 *
 * FDSN codes. Our choice, for a permanent regional network that receives MiniSEED 2:
 * - network: 1–2 letters or digits — the width of the network field of the SEED 2.4 fixed data
 *   header (FDSN SEED manual 2.4, ch. 8). FDSN StationXML and MiniSEED 3 source identifiers allow
 *   up to 8 characters (for temporary networks), but such a network could not send MiniSEED 2 to
 *   us, so we keep the narrower rule for every station in the registry.
 * - station: 1–5 letters or digits (SEED 2.4 fixed header field width).
 * - location: 0–2 letters or digits (SEED 2.4; empty is the usual "no location").
 * - channel: exactly 3 letters or digits: band, instrument, orientation (SEED 2.4 appendix A).
 * Codes are upper case (SEED 2.4 uses upper-case ASCII; we upper-case what people type).
 */

const upper = (s: string) => s.toUpperCase();

/** Network code: 1–2 upper-case letters or digits (SEED 2.4). */
export const networkCodeSchema = lazySchema(() =>
  z
    .string()
    .regex(/^[A-Za-z0-9]{1,2}$/, 'network code must be 1–2 letters or digits (SEED 2.4)')
    .transform(upper),
);

/** Station code: 1–5 upper-case letters or digits (SEED 2.4). */
export const stationCodeSchema = lazySchema(() =>
  z
    .string()
    .regex(/^[A-Za-z0-9]{1,5}$/, 'station code must be 1–5 letters or digits (SEED 2.4)')
    .transform(upper),
);

/** Location code: 0–2 upper-case letters or digits (SEED 2.4); empty means none. */
export const locationCodeSchema = lazySchema(() =>
  z
    .string()
    .regex(/^[A-Za-z0-9]{0,2}$/, 'location code must be 0–2 letters or digits (SEED 2.4)')
    .transform(upper),
);

/** Channel code: exactly 3 upper-case letters or digits, band/instrument/orientation (SEED 2.4). */
export const channelCodeSchema = lazySchema(() =>
  z
    .string()
    .regex(/^[A-Za-z0-9]{3}$/, 'channel code must be exactly 3 letters or digits: band, instrument, orientation (SEED 2.4)')
    .transform(upper),
);

/** Whether `network` and `station` are valid registry codes (as typed, before upper-casing). */
export function isValidStationCodes(network: string, station: string): boolean {
  return networkCodeSchema.safeParse(network).success && stationCodeSchema.safeParse(station).success;
}

/** The editable facts of a station (codes are set once, at creation). */
export const stationFieldsSchema = lazySchema(() =>
  z.object({
    name: z.string().trim().min(1, 'name is required').max(200, 'name must be at most 200 characters'),
    latitude: z.number('latitude must be a number').min(-90, 'latitude must be from −90 to 90°').max(90, 'latitude must be from −90 to 90°'),
    longitude: z.number('longitude must be a number').min(-180, 'longitude must be from −180 to 180°').max(180, 'longitude must be from −180 to 180°'),
    /** Metres above sea level. */
    elevationM: z.number('elevation must be a number').min(-12000, 'elevation must be above −12 000 m').max(9000, 'elevation must be below 9 000 m'),
    siteDescription: z.string().max(4000, 'site description must be at most 4000 characters').nullable().optional(),
  }),
);

/** Body of POST /api/stations. */
export const stationCreateSchema = lazySchema(() =>
  stationFieldsSchema.extend({
    network: networkCodeSchema,
    code: stationCodeSchema,
  }),
);

/** Input of POST /api/stations. */
export type StationCreateInput = z.input<typeof stationCreateSchema>;

/** Body of PATCH /api/stations/:id (any subset of the editable facts). */
export const stationUpdateSchema = lazySchema(() => stationFieldsSchema.partial());

/** Input of PATCH /api/stations/:id. */
export type StationUpdateInput = z.input<typeof stationUpdateSchema>;

/** A complex number (pole or zero), rad/s. */
const complexSchema = lazySchema(() => z.object({ re: z.number(), im: z.number() }));

/** A poles-and-zeros response (Laplace, rad/s) as the engine uses it (server/dsp/response.ts). */
export const channelResponseSchema = lazySchema(() =>
  z.object({
    zeros: z.array(complexSchema).max(64),
    poles: z.array(complexSchema).max(64),
    normalizationFactor: z.number(),
    sensitivity: z.number().positive(),
    sensitivityFrequencyHz: z.number().nonnegative(),
  }),
);

/** Body of POST /api/stations/:id/channels and of each channel in a replace. */
export const channelInputSchema = lazySchema(() =>
  z.object({
    location: locationCodeSchema.default(''),
    code: channelCodeSchema,
    sampleRateHz: z.number('sample rate must be a number').positive('sample rate must be above 0 Hz').max(100000, 'sample rate must be at most 100 000 Hz'),
    /** Overall sensitivity, counts per input unit (StationXML InstrumentSensitivity Value). */
    sensitivity: z.number().positive('sensitivity must be above 0').nullable().optional(),
    sensitivityFrequencyHz: z.number().nonnegative('sensitivity frequency must be ≥ 0 Hz').nullable().optional(),
    sensitivityInputUnits: z.string().max(40).nullable().optional(),
    response: channelResponseSchema.nullable().optional(),
  }),
);

/** Input of a channel. */
export type ChannelInput = z.input<typeof channelInputSchema>;

/** Body of PUT /api/stations/:id/profile: a processing profile (every field optional, defaults fill in). */
export const profileUpdateSchema = processingProfileSchema;

/** Body of POST /api/stations/:id/tokens. */
export const tokenCreateSchema = lazySchema(() =>
  z.object({
    label: z.string().trim().min(1, 'label is required').max(120, 'label must be at most 120 characters'),
  }),
);

/** Route parameter `:id` of a station (or token). */
export const idParamSchema = lazySchema(() => z.object({ id: z.coerce.number().int().positive('id must be a positive whole number') }));

/** A channel as the API returns it. */
export const channelViewSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    location: z.string(),
    code: z.string(),
    /** NET.STA.LOC.CHA */
    streamId: z.string(),
    sampleRateHz: z.number(),
    sensitivity: z.number().nullable(),
    sensitivityFrequencyHz: z.number().nullable(),
    sensitivityInputUnits: z.string().nullable(),
    hasResponse: z.boolean(),
  }),
);

/** A channel as the API returns it. */
export type ChannelView = z.infer<typeof channelViewSchema>;

/** A station in a list. */
export const stationSummarySchema = lazySchema(() =>
  z.object({
    id: z.number(),
    network: z.string(),
    code: z.string(),
    name: z.string(),
    latitude: z.number(),
    longitude: z.number(),
    elevationM: z.number(),
    siteDescription: z.string().nullable(),
    channelCount: z.number(),
    /** ISO time of the newest window, or null. */
    lastWindowAt: z.string().nullable(),
  }),
);

/** A station in a list. */
export type StationSummary = z.infer<typeof stationSummarySchema>;

/** A station with channels and profile. */
export const stationDetailSchema = lazySchema(() =>
  stationSummarySchema.extend({
    channels: z.array(channelViewSchema),
    /** The processing profile with every default filled in. */
    profile: z.unknown(),
    createdAt: z.string(),
    updatedAt: z.string(),
  }),
);

/** A station with channels and profile (profile parsed by the client with processingProfileSchema). */
export type StationDetail = Omit<z.infer<typeof stationDetailSchema>, 'profile'> & { profile: ProcessingProfile };

/** An ingest token as listed (never the secret). */
export const tokenViewSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    stationId: z.number(),
    label: z.string(),
    createdAt: z.string(),
    lastUsedAt: z.string().nullable(),
    revokedAt: z.string().nullable(),
    createdBy: z.string().nullable(),
  }),
);

/** An ingest token as listed. */
export type TokenView = z.infer<typeof tokenViewSchema>;

/** The answer to creating a token: the secret, shown this once. */
export const tokenCreatedSchema = lazySchema(() => z.object({ token: tokenViewSchema, secret: z.string() }));

/** The answer to creating a token. */
export type TokenCreated = z.infer<typeof tokenCreatedSchema>;

/** One field-level problem: `path` is dotted (e.g. `bands.high.fmax`). */
export interface FieldIssue {
  path: string;
  message: string;
}

/** The largest band edge the engine accepts, as a fraction of fs (server/dsp/bands.ts: 0.45·fs). */
export const MAX_EDGE_FRACTION_OF_FS = 0.45;

/**
 * Checks a processing profile against the station's channels: every band-pass upper edge must lie
 * below 0.45·fs of every channel (the engine's rule; with `nyquistPolicy: 'cap'` only the lower
 * edge must, since the engine lowers the upper edge), and every band-reject filter's upper edge
 * below the Nyquist frequency fs/2 (the engine skips it otherwise). The slowest channel decides.
 * Pure; returns every problem with the profile field it belongs to, empty when all is well.
 */
export function profileNyquistIssues(profile: ProcessingProfile, channels: ReadonlyArray<{ streamId: string; sampleRateHz: number }>): FieldIssue[] {
  if (channels.length === 0) return [];
  const slowest = channels.reduce((a, b) => (b.sampleRateHz < a.sampleRateHz ? b : a));
  const fs = slowest.sampleRateHz;
  const limit = MAX_EDGE_FRACTION_OF_FS * fs;
  const r = (v: number) => Math.round(v * 1000) / 1000;
  const issues: FieldIssue[] = [];
  for (const name of ['low', 'high'] as const) {
    const band = profile.bands[name];
    if (profile.bands.nyquistPolicy === 'refuse' && band.fmax >= limit) {
      issues.push({ path: `bands.${name}.fmax`, message: `must be below 0.45·fs = ${r(limit)} Hz of ${slowest.streamId} (${fs} Hz)` });
    }
    if (band.fmin >= limit) {
      issues.push({ path: `bands.${name}.fmin`, message: `must be below 0.45·fs = ${r(limit)} Hz of ${slowest.streamId} (${fs} Hz)` });
    }
  }
  profile.bandReject.forEach((br, i) => {
    if (br.fmax >= fs / 2) {
      issues.push({ path: `bandReject.${i}.fmax`, message: `must be below the Nyquist frequency ${r(fs / 2)} Hz of ${slowest.streamId} (${fs} Hz)` });
    }
  });
  return issues;
}

/** Robust statistics of one feature over a station's noise windows. */
export const robustStatViewSchema = lazySchema(() => z.object({ median: z.number(), mad: z.number() }));

/** A station's noise baseline as the station page shows it. */
export const baselineViewSchema = lazySchema(() =>
  z.object({
    /** Noise windows behind the statistics. */
    count: z.number(),
    /** `dismissed` = analyst-dismissed noise; `flagged` = automatic "likely noise" (until enough exist). */
    source: z.enum(['dismissed', 'flagged', 'none']),
    log10Ratio: robustStatViewSchema.nullable(),
    staLtaPeak: robustStatViewSchema.nullable(),
    /** Windows needed before the station's own baseline replaces the network default. */
    minWindows: z.number(),
    /** Whether the score currently uses this baseline (count ≥ minWindows). */
    inUse: z.boolean(),
    /** The network default the score uses until `inUse` (server/dsp/score.ts NETWORK_DEFAULT_BASELINE). */
    networkDefault: z.object({ log10Ratio: robustStatViewSchema, staLtaPeak: robustStatViewSchema }),
    /** The smallest MAD the score divides by (a smaller one, e.g. 0 from a single window, is raised to it). */
    madFloor: z.object({ log10Ratio: z.number(), staLtaPeak: z.number() }),
  }),
);

/** A station's noise baseline. */
export type BaselineView = z.infer<typeof baselineViewSchema>;
