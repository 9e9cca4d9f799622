import { useEffect } from 'react';
import { commonEventTypes } from '@shared/schemas/label';
import { isTypingTarget } from '@client/components/ui/key-help';

/** What each key of the review screen does (client/src/features/review/components/review-keys.ts lists them for people). */
export interface ReviewKeyHandlers {
  /** The item is loaded (no key acts before). */
  loaded: boolean;
  /** The viewer's role works the queue; otherwise the working keys only say so. */
  mayWork: boolean;
  onViewOnly: () => void;
  next: () => void;
  previous: () => void;
  claim: () => void;
  /** The viewer holds the claim (R does nothing otherwise). */
  mayRelease: boolean;
  release: () => void;
  /** 1–9: label with that common event type and go on. */
  labelAs: (type: (typeof commonEventTypes)[number]) => void;
  dismiss: () => void;
  escalate: () => void;
  /** M: take the best labelled match's label into the form (seen before). */
  takeMatchedLabel: () => void;
  pick: (phase: 'P' | 'S') => void;
  zoom: (factor: number) => void;
  resetZoom: () => void;
  leave: () => void;
  help: () => void;
}

/**
 * The review screen's keys on the window: letters without modifiers, never while typing in a field
 * or while a dialog is open (Esc there closes the dialog; it must not also leave the item).
 */
export function useReviewKeys(h: ReviewKeyHandlers): void {
  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (e.ctrlKey || e.metaKey || e.altKey || isTypingTarget(e.target) || !h.loaded || document.querySelector('dialog[open]')) return;
      const k = e.key;
      const n = Number(k);
      if (!h.mayWork && /^[crdepsm1-9]$/.test(k)) {
        h.onViewOnly();
        e.preventDefault();
        return;
      }
      if (k === 'j') h.next();
      else if (k === 'k') h.previous();
      else if (k === 'c') h.claim();
      else if (k === 'r' && h.mayRelease) h.release();
      else if (Number.isInteger(n) && n >= 1 && n <= commonEventTypes.length) {
        const type = commonEventTypes[n - 1];
        if (type) h.labelAs(type);
      } else if (k === 'd') h.dismiss();
      else if (k === 'e') h.escalate();
      else if (k === 'm') h.takeMatchedLabel();
      else if (k === 'p' || k === 's') h.pick(k === 'p' ? 'P' : 'S');
      else if (k === '+' || k === '=') h.zoom(0.5);
      else if (k === '-' || k === '_') h.zoom(2);
      else if (k === '0') h.resetZoom();
      else if (k === 'Escape') h.leave();
      else if (k === '?') h.help();
      else return;
      e.preventDefault();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  });
}
