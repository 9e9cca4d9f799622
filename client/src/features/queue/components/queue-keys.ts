import type { KeyBinding } from '@client/components/ui/key-help';

/** The queue screen's keys. */
export const queueKeysHelp: readonly KeyBinding[] = [
  { keys: ['J', '↓'], does: 'Next item' },
  { keys: ['K', '↑'], does: 'Previous item' },
  { keys: ['Enter', 'O'], does: 'Open the item for review (an event’s row: the event screen)' },
  { keys: ['X'], does: 'Show or hide the other member windows of the selected event' },
  { keys: ['C'], does: 'Claim the item and open it' },
  { keys: ['G'], does: 'Go to the top (shows new arrivals)' },
  { keys: ['?'], does: 'Show these keys' },
];
