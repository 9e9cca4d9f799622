import { z } from 'zod';
import { lazySchema } from './lazy-schema';

/**
 * The life of a queue item, in names of our own (issue 6 / issue 7), shared by server and client:
 * new → in review (claimed by one analyst; the claim lapses after an idle time, back to new) →
 * labelled | dismissed | escalated; a supervisor later confirms a labelled item or returns it
 * (returned items can be claimed again like new ones).
 */
export const itemStates = ['new', 'in review', 'labelled', 'dismissed', 'escalated', 'confirmed', 'returned'] as const;

/** One item state. */
export type ItemState = (typeof itemStates)[number];

/** zod schema of an item state. */
export const itemStateSchema = lazySchema(() => z.enum(itemStates));

/** States in which an item waits for an analyst (they may claim it). */
export const claimableStates: readonly ItemState[] = ['new', 'returned'];

/** States in which the analyst's work on an item is done (until a supervisor acts). */
export const settledStates: readonly ItemState[] = ['labelled', 'dismissed', 'escalated', 'confirmed'];

/** The analyst-side actions on an item and the states each one leads to. */
export const itemTransitions = {
  claim: { from: ['new', 'returned'], to: 'in review' },
  release: { from: ['in review'], to: 'new' },
  label: { from: ['in review'], to: 'labelled' },
  dismiss: { from: ['in review'], to: 'dismissed' },
  escalate: { from: ['in review'], to: 'escalated' },
  lapse: { from: ['in review'], to: 'new' },
} as const satisfies Record<string, { from: readonly ItemState[]; to: ItemState }>;

/** One analyst-side action name. */
export type ItemAction = keyof typeof itemTransitions;
