import { commonEventTypes } from '@shared/schemas/label';
import type { KeyBinding } from '@client/components/ui/key-help';

/** The review screen's keys. */
export const reviewKeysHelp: readonly KeyBinding[] = [
  { keys: ['J'], does: 'Next item in the queue' },
  { keys: ['K'], does: 'Previous item in the queue' },
  { keys: ['C'], does: 'Claim this item' },
  { keys: ['R'], does: 'Release your claim' },
  ...commonEventTypes.map((t, i) => ({ keys: [String(i + 1)], does: `Label as ${t} (claims first if needed) and go to the next item` })),
  { keys: ['Enter'], does: 'Label with the form’s values (inside the form)' },
  { keys: ['D'], does: 'Dismiss as noise with the form’s noise reason, then next item' },
  { keys: ['M'], does: 'Take the best match’s label into the form (seen before); confirm with Enter, or D for noise' },
  { keys: ['E'], does: 'Escalate to the supervisors (asks for a reason)' },
  { keys: ['P', 'S'], does: 'Place a P or S pick at the mouse, on the channel under it; also sets the phase a click places. Off the traces, P goes to the vertical’s first trigger and S waits for the mouse' },
  { keys: ['+', '−'], does: 'Zoom in / out around the cursor or the middle' },
  { keys: ['0'], does: 'Show the whole window' },
  { keys: ['Esc'], does: 'Back to the queue (asks first when picks or a note are not saved)' },
  { keys: ['?'], does: 'Show these keys' },
];
