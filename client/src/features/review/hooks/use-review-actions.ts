import { useCallback, useState } from 'react';
import type { QueueItemDetail, QueueRow } from '@shared/schemas/queue';
import { useLabelGroup, type CandidateEvent } from '@client/api/queue/candidate-events';
import { useItemAction, type ItemActionInput } from '@client/api/queue/item-actions';
import { useToast } from '@client/components/ui/toast';
import type { ReviewFormValues } from '@client/features/review/components/label-form';

/** What the review screen knows of the item when it acts on it. */
export interface ReviewTarget {
  detail: QueueItemDetail | undefined;
  /** The viewer holds the claim. */
  mine: boolean;
  /** The viewer may claim it now (it waits, and their role works the queue). */
  claimable: boolean;
  /** The form's values can be written to it (mine or claimable). */
  writable: boolean;
  /** The candidate event the item belongs to, once loaded. */
  group: CandidateEvent | undefined;
}

/**
 * The review screen's actions on its item — claim, release, label, dismiss, escalate and label the
 * whole event group — each a POST with the version the analyst saw (item-actions.ts), a toast
 * naming the outcome, the draft dropped once saved, and the next item opened after a decision.
 * @param advance opens the next workable item (or the queue)
 * @param dropDraft forgets the item's draft (use-review-draft.ts)
 */
export function useReviewActions(target: ReviewTarget, advance: () => void, dropDraft: () => void) {
  const { detail, mine, claimable, writable, group } = target;
  const action = useItemAction();
  const labelGroup = useLabelGroup();
  const toast = useToast();
  const [escalating, setEscalating] = useState(false);
  const [reason, setReason] = useState('');

  const run = useCallback(
    async (input: ItemActionInput, okWords: string, next: boolean): Promise<QueueRow | null> => {
      try {
        const row = await action.mutateAsync(input);
        toast.notify({ tone: 'ok', title: `Item ${row.id} ${okWords}`, durationMs: 2500 });
        if (next) advance();
        return row;
      } catch (err) {
        toast.notify({ tone: 'danger', title: `Item ${input.id}: not saved`, body: err instanceof Error ? err.message : String(err) });
        return null;
      }
    },
    [action, toast, advance],
  );

  /** Claims first when the item is waiting, then returns the version to write with. */
  const ensureClaim = useCallback(async (): Promise<number | null> => {
    if (!detail) return null;
    if (mine) return detail.version;
    if (!claimable) {
      toast.notify({ tone: 'warn', title: `Item ${detail.id} is ${detail.state}${detail.claimedBy ? ` (claimed by ${detail.claimedBy.displayName})` : ''}` });
      return null;
    }
    const row = await run({ action: 'claim', id: detail.id, version: detail.version }, 'claimed', false);
    return row ? row.version : null;
  }, [detail, mine, claimable, run, toast]);

  const claim = () => detail && void run({ action: 'claim', id: detail.id, version: detail.version }, 'claimed', false);
  const release = () => detail && void run({ action: 'release', id: detail.id, version: detail.version }, 'released', false);

  const label = useCallback(
    async (v: ReviewFormValues) => {
      const version = await ensureClaim();
      if (version === null || !detail) return;
      const row = await run({ action: 'label', id: detail.id, version, label: { eventType: v.eventType, certainty: v.certainty, distanceClass: v.distanceClass, picks: v.picks, note: v.note } }, `labelled ${v.eventType}`, true);
      if (row) dropDraft();
    },
    [ensureClaim, run, detail, dropDraft],
  );
  const dismiss = useCallback(
    async (v: ReviewFormValues) => {
      const version = await ensureClaim();
      if (version === null || !detail) return;
      const row = await run({ action: 'dismiss', id: detail.id, version, noiseReason: v.noiseReason, note: v.note }, `dismissed (${v.noiseReason})`, true);
      if (row) dropDraft();
    },
    [ensureClaim, run, detail, dropDraft],
  );

  /** After the confirmation: every member gets the type only, this item (when it can be written) its whole form. */
  const labelWholeGroup = async (v: ReviewFormValues) => {
    const ev = group;
    if (!ev || !detail) return;
    try {
      const current = writable ? { itemId: detail.id, label: { eventType: v.eventType, certainty: v.certainty, distanceClass: v.distanceClass, picks: v.picks, note: v.note } } : undefined;
      const res = await labelGroup.mutateAsync({ eventId: ev.id, body: { eventType: v.eventType, current } });
      if (res.members.some((m) => m.itemId === detail.id && m.result === 'labelled')) dropDraft();
      const done = res.members.filter((m) => m.result === 'labelled').length;
      const skipped = res.members.filter((m) => m.result === 'skipped');
      toast.notify({
        tone: skipped.length > 0 ? 'warn' : 'ok',
        title: `Event group #${ev.id}: ${done} of ${res.members.length} labelled ${v.eventType}`,
        body: skipped.length > 0 ? skipped.map((m) => `item ${m.itemId}: ${m.reason ?? 'skipped'}`).join('; ') : 'Each member can still be corrected on its own.',
      });
    } catch (err) {
      toast.notify({ tone: 'danger', title: `Could not label event group #${ev.id}`, body: err instanceof Error ? err.message : String(err) });
    }
  };

  const escalate = async () => {
    const version = await ensureClaim();
    if (version === null || !detail) return;
    const row = await run({ action: 'escalate', id: detail.id, version, reason }, 'escalated to the supervisors', true);
    if (row) {
      dropDraft();
      setEscalating(false);
      setReason('');
    }
  };

  return {
    busy: action.isPending,
    groupBusy: labelGroup.isPending,
    claim,
    release,
    label,
    dismiss,
    labelWholeGroup,
    escalation: { open: escalating, setOpen: setEscalating, reason, setReason, escalate },
  };
}
