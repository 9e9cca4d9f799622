/**
 * The life of a queue item, in names of our own (issue 6 / issue 7):
 * new → in review (claimed by one analyst) → labelled | dismissed | escalated;
 * a supervisor then confirms a labelled item or returns it to the queue.
 * The server will own the transitions; the client only needs the words and their order.
 */
export const itemStates = ['new', 'in review', 'labelled', 'dismissed', 'escalated', 'confirmed', 'returned'] as const;

/** One item state. */
export type ItemState = (typeof itemStates)[number];
