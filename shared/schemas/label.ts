import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * The analyst's label of a queue item. Event types are the QuakeML 1.2 EventType enumeration
 * (QuakeML 1.2 BED, `EventType`, as listed in the QuakeML-BED-1.2 XSD; written from memory of that
 * list, every value as spelled there); type certainty is QuakeML's `EventTypeCertainty`
 * (`known`, `suspected`). Distance classes are common practice (local < ~100–200 km, regional up to
 * ~2000 km, teleseismic beyond ~30°). Noise reasons are Seisift's own. Picks carry QuakeML's
 * `PickOnset` (impulsive, emergent, questionable) and `PickPolarity` (positive, negative, undecidable).
 */
export const quakemlEventTypes = [
  'not existing',
  'not reported',
  'earthquake',
  'anthropogenic event',
  'collapse',
  'cavity collapse',
  'mine collapse',
  'building collapse',
  'explosion',
  'accidental explosion',
  'chemical explosion',
  'controlled explosion',
  'experimental explosion',
  'industrial explosion',
  'mining explosion',
  'quarry blast',
  'road cut',
  'blasting levee',
  'nuclear explosion',
  'induced or triggered event',
  'rock burst',
  'reservoir loading',
  'fluid injection',
  'fluid extraction',
  'crash',
  'plane crash',
  'train crash',
  'boat crash',
  'other event',
  'atmospheric event',
  'sonic boom',
  'sonic blast',
  'acoustic noise',
  'thunder',
  'avalanche',
  'snow avalanche',
  'debris avalanche',
  'hydroacoustic event',
  'ice quake',
  'slide',
  'landslide',
  'rockslide',
  'meteorite',
  'volcanic eruption',
] as const;

/** One QuakeML 1.2 event type. */
export type QuakemlEventType = (typeof quakemlEventTypes)[number];

/** The event types an analyst picks most often, in the order the number keys 1–6 select them. */
export const commonEventTypes = ['earthquake', 'quarry blast', 'explosion', 'induced or triggered event', 'landslide', 'other event'] as const satisfies readonly QuakemlEventType[];

/** QuakeML 1.2 EventTypeCertainty. */
export const typeCertainties = ['known', 'suspected'] as const;

/** Distance classes (common practice). */
export const distanceClasses = ['local', 'regional', 'teleseismic'] as const;

/** Why a window is noise (Seisift's own list). */
export const noiseReasons = ['traffic', 'machinery', 'wind', 'instrument glitch', 'unknown noise'] as const;

/** One noise reason. */
export type NoiseReason = (typeof noiseReasons)[number];

/** Phases an analyst may pick. */
export const pickPhases = ['P', 'S'] as const;
/** QuakeML 1.2 PickOnset. */
export const pickOnsets = ['impulsive', 'emergent', 'questionable'] as const;
/** QuakeML 1.2 PickPolarity. */
export const pickPolarities = ['positive', 'negative', 'undecidable'] as const;

/** ISO 8601 UTC with up to microseconds: `2026-03-14T09:26:53.589123Z`. */
export const isoMicrosSchema = lazySchema(() =>
  z
    .string()
    .regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d{1,6})?Z$/, 'must be ISO 8601 UTC, e.g. 2026-03-14T09:26:53.589123Z')
    .refine((s) => !Number.isNaN(Date.parse(s)), 'is not a real date and time'),
);

/** An FDSN stream id NET.STA.LOC.CHA (location may be empty). */
export const streamIdSchema = lazySchema(() =>
  z
    .string()
    .regex(/^[A-Z0-9]{1,2}\.[A-Z0-9]{1,5}\.[A-Z0-9-]{0,2}\.[A-Z0-9]{3}$/, 'must be an FDSN stream id NET.STA.LOC.CHA, e.g. XX.KV03.00.HHZ'),
);

/** One phase pick. */
export const pickSchema = lazySchema(() =>
  z.object({
    phase: z.enum(pickPhases),
    time: isoMicrosSchema,
    onset: z.enum(pickOnsets).default('questionable'),
    polarity: z.enum(pickPolarities).default('undecidable'),
    streamId: streamIdSchema,
  }),
);

/** A phase pick. */
export type Pick = z.infer<typeof pickSchema>;

/** Most picks on one item (one P and one S per channel is the usual case). */
export const MAX_PICKS = 12;

/** The longest note, characters. */
export const MAX_NOTE_CHARS = 2000;

/** The label of an item found to be a real source. */
export const eventLabelSchema = lazySchema(() =>
  z.object({
    eventType: z.enum(quakemlEventTypes),
    certainty: z.enum(typeCertainties).default('suspected'),
    distanceClass: z.enum(distanceClasses).nullable().default(null),
    picks: z
      .array(pickSchema)
      .max(MAX_PICKS, `at most ${MAX_PICKS} picks`)
      .default([])
      .refine((ps) => new Set(ps.map((p) => `${p.phase}|${p.streamId}`)).size === ps.length, 'one P and one S pick per stream at most'),
    note: z.string().trim().max(MAX_NOTE_CHARS, `a note may be at most ${MAX_NOTE_CHARS} characters`).default(''),
  }),
);

/** A parsed event label. */
export type EventLabel = z.infer<typeof eventLabelSchema>;
/** An event label as a client sends it (defaults optional). */
export type EventLabelInput = z.input<typeof eventLabelSchema>;

/** What an analyst sends when dismissing an item as noise. */
export const dismissalSchema = lazySchema(() =>
  z.object({
    noiseReason: z.enum(noiseReasons).default('unknown noise'),
    note: z.string().trim().max(MAX_NOTE_CHARS, `a note may be at most ${MAX_NOTE_CHARS} characters`).default(''),
  }),
);

/** A parsed dismissal. */
export type Dismissal = z.infer<typeof dismissalSchema>;

/** What an analyst sends when escalating an item: the reason is required. */
export const escalationSchema = lazySchema(() =>
  z.object({
    reason: z.string().trim().min(3, 'say why you escalate (at least 3 characters)').max(MAX_NOTE_CHARS),
  }),
);

/** A parsed escalation. */
export type Escalation = z.infer<typeof escalationSchema>;

/**
 * The label JSON stored on an item: an event label, a dismissal, or an escalation, tagged by `kind`.
 */
export const storedLabelSchema = lazySchema(() =>
  z.discriminatedUnion('kind', [
    eventLabelSchema.extend({ kind: z.literal('event') }),
    dismissalSchema.extend({ kind: z.literal('noise') }),
    escalationSchema.extend({ kind: z.literal('escalation') }),
  ]),
);

/** A stored label. */
export type StoredLabel = z.infer<typeof storedLabelSchema>;
