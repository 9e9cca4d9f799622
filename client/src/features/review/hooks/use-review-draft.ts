import { useCallback, useEffect, useRef, useState } from 'react';
import type { UseFormReturn } from 'react-hook-form';
import { clearDraft, readDraft, writeDraft, type DraftStorage, type ReviewDraft } from '@client/features/review/lib/review-draft';
import { reviewFormDefaults, type ReviewFormInput, type ReviewFormValues } from '@client/features/review/components/label-form';

/** The tab's sessionStorage, or null where there is none (drafts are then not kept). */
function draftStorage(): DraftStorage | null {
  try {
    return typeof window !== 'undefined' ? window.sessionStorage : null;
  } catch {
    return null;
  }
}

/** What the review screen does with the draft of one item. */
export interface ReviewDraftControl {
  /** The draft put back when the item was opened, until saved or discarded. */
  restoredDraft: ReviewDraft | null;
  /** Forgets the draft (after the item was saved). */
  dropDraft: () => void;
  /** Empties the form and forgets the draft. */
  discardDraft: () => void;
}

/**
 * Unsaved work survives leaving the item: a draft of the form is kept in this tab and put back
 * when the item is opened again while it can still be labelled (lib/review-draft.ts).
 * @param meId the signed-in person (drafts are per person and item); undefined while loading
 * @param ready the item is loaded and the viewer may write it (only then is a draft put back)
 */
export function useReviewDraft(form: UseFormReturn<ReviewFormInput, unknown, ReviewFormValues>, meId: string | undefined, itemId: number, ready: boolean): ReviewDraftControl {
  const draftsReady = useRef(false);
  const [restoredDraft, setRestoredDraft] = useState<ReviewDraft | null>(null);
  useEffect(() => {
    const storage = draftStorage();
    if (draftsReady.current || meId === undefined || !ready || !storage) return;
    draftsReady.current = true;
    const draft = readDraft(storage, meId, itemId);
    if (!draft || form.formState.isDirty) return;
    form.reset(draft.values, { keepDefaultValues: true });
    setRestoredDraft(draft);
  }, [meId, ready, itemId, form]);
  useEffect(() => {
    const storage = draftStorage();
    if (meId === undefined || !storage) return;
    const sub = form.watch((values) => {
      if (!draftsReady.current) return;
      writeDraft(storage, meId, itemId, values, reviewFormDefaults, new Date().toISOString());
    });
    return () => sub.unsubscribe();
  }, [form, meId, itemId]);
  const dropDraft = useCallback(() => {
    const storage = draftStorage();
    if (storage && meId !== undefined) clearDraft(storage, meId, itemId);
    setRestoredDraft(null);
  }, [meId, itemId]);
  const discardDraft = () => {
    draftsReady.current = false;
    form.reset(reviewFormDefaults);
    dropDraft();
    draftsReady.current = true;
  };
  return { restoredDraft, dropDraft, discardDraft };
}
