import type { KeyBinding } from '@client/components/ui/key-help';

/** The queue screen's keys. */
export const queueKeysHelp: readonly KeyBinding[] = [
  { keys: ['J', '↓'], does: 'Next item' },
  { keys: ['K', '↑'], does: 'Previous item' },
  { keys: ['Enter', 'O'], does: 'Open the item for review' },
  { keys: ['C'], does: 'Claim the item and open it' },
  { keys: ['G'], does: 'Go to the top (shows new arrivals)' },
  { keys: ['?'], does: 'Show these keys' },
];
