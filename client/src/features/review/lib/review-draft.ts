import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { distanceClasses, MAX_NOTE_CHARS, MAX_PICKS, noiseReasons, pickSchema, quakemlEventTypes, typeCertainties } from '@shared/schemas/label';

/**
 * Review work not yet saved (picks placed, a note, the form's choices), kept per person and item in
 * the browser's localStorage (key `seisift.review-draft.<user>.<item>`) so that leaving an item
 * (Esc, J/K, a link, a reload, closing the tab) does not lose it; it comes back when the same person
 * opens the item again on this browser and is removed once the item is labelled, dismissed or
 * escalated, or the draft is discarded.
 */
export const reviewDraftSchema = lazySchema(() =>
  z.object({
    savedAt: z.string(),
    values: z.object({
      /** '' = no type chosen yet (the form's safe default). */
      eventType: z.union([z.enum(quakemlEventTypes), z.literal('')]),
      certainty: z.enum(typeCertainties),
      distanceClass: z.enum(distanceClasses).nullable(),
      picks: z.array(pickSchema).max(MAX_PICKS),
      note: z.string().max(MAX_NOTE_CHARS),
      noiseReason: z.enum(noiseReasons),
    }),
  }),
);

/** A stored draft. */
export type ReviewDraft = z.infer<typeof reviewDraftSchema>;
/** The form values a draft keeps. */
export type ReviewDraftValues = ReviewDraft['values'];

/** Form values as the form holds them while being edited (any field may be missing or half-entered). */
export type LooseReviewValues = {
  eventType?: string | undefined;
  certainty?: string | undefined;
  distanceClass?: string | null | undefined;
  picks?: readonly unknown[] | undefined;
  note?: string | undefined;
  noiseReason?: string | undefined;
};

/** The part of the Web Storage API a draft needs (sessionStorage in the browser, a Map-backed fake in tests). */
export type DraftStorage = Pick<Storage, 'getItem' | 'setItem' | 'removeItem'>;

/** The storage key of one person's draft of one item. */
export function draftKey(userId: string, itemId: number): string {
  return `seisift.review-draft.${userId}.${itemId}`;
}

/**
 * What of `values` would be lost by leaving: the number of picks, whether there is a note, and
 * whether any choice differs from the form's defaults. `any` is true when one of them holds.
 */
export function unsavedWork(values: LooseReviewValues, defaults: ReviewDraftValues): { picks: number; note: boolean; any: boolean } {
  const picks = values.picks?.length ?? 0;
  const note = (values.note ?? '').trim() !== '';
  const choices = (['eventType', 'certainty', 'distanceClass', 'noiseReason'] as const).some((k) => values[k] !== undefined && values[k] !== defaults[k]);
  return { picks, note, any: picks > 0 || note || choices };
}

/** "2 picks and a note", "1 pick", "the form's choices": what `unsavedWork` found, in words. */
export function describeUnsaved(work: { picks: number; note: boolean }): string {
  const parts: string[] = [];
  if (work.picks > 0) parts.push(`${work.picks} ${work.picks === 1 ? 'pick' : 'picks'}`);
  if (work.note) parts.push('a note');
  return parts.length > 0 ? parts.join(' and ') : 'the form’s choices';
}

/** The stored draft, or null when there is none or it no longer parses (then it is removed). */
export function readDraft(storage: DraftStorage, userId: string, itemId: number): ReviewDraft | null {
  const key = draftKey(userId, itemId);
  const text = storage.getItem(key);
  if (text === null) return null;
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch {
    raw = null;
  }
  const parsed = reviewDraftSchema.safeParse(raw);
  if (parsed.success) return parsed.data;
  storage.removeItem(key);
  return null;
}

/**
 * Stores `values` as the draft when they hold unsaved work, else removes the draft. Values that do
 * not parse (a pick still being edited) leave the last good draft in place.
 * @param now the time to record (ISO 8601)
 */
export function writeDraft(storage: DraftStorage, userId: string, itemId: number, values: LooseReviewValues, defaults: ReviewDraftValues, now: string): void {
  if (!unsavedWork(values, defaults).any) {
    storage.removeItem(draftKey(userId, itemId));
    return;
  }
  const parsed = reviewDraftSchema.safeParse({ savedAt: now, values: { ...defaults, ...values } });
  if (!parsed.success) return;
  try {
    storage.setItem(draftKey(userId, itemId), JSON.stringify(parsed.data));
  } catch {
    // A full or blocked storage loses only the convenience; the leave warning still stands.
  }
}

/** Removes the draft (after the item was labelled, dismissed or escalated, or on "Discard"). */
export function clearDraft(storage: DraftStorage, userId: string, itemId: number): void {
  storage.removeItem(draftKey(userId, itemId));
}
