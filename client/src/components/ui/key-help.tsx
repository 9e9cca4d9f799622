import { Dialog } from './dialog';
import { Kbd } from './kbd';

/** One key and what it does. */
export type KeyBinding = { keys: string[]; does: string };

/** Props of <KeyHelp>. */
export type KeyHelpProps = { open: boolean; onClose: () => void; title: string; bindings: readonly KeyBinding[] };

/** The "?" dialog: every key of the screen and what it does. */
export function KeyHelp({ open, onClose, title, bindings }: KeyHelpProps) {
  return (
    <Dialog open={open} onClose={onClose} title={title} description="Keys work whenever the cursor is not in a text field. Esc closes this list.">
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1.5 text-base">
        {bindings.map((b) => (
          <div key={b.does} className="contents">
            <dt className="flex gap-1">
              {b.keys.map((k) => (
                <Kbd key={k}>{k}</Kbd>
              ))}
            </dt>
            <dd className="text-ink">{b.does}</dd>
          </div>
        ))}
      </dl>
    </Dialog>
  );
}

/** True when a key event comes from a text field (keys then type text instead of acting). */
export function isTypingTarget(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  if (target.isContentEditable) return true;
  const tag = target.tagName;
  if (tag === 'TEXTAREA' || tag === 'SELECT') return true;
  if (tag === 'INPUT') {
    const type = (target as HTMLInputElement).type;
    return !['checkbox', 'radio', 'button', 'submit'].includes(type);
  }
  return target.closest('dialog[open]') !== null;
}
