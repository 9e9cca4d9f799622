import { useEffect, useId, useRef, type ReactNode } from 'react';
import { cx } from '@client/lib/cx';
import { Button } from './button';
import { CloseIcon } from './icons';

const focusable = ':is(input:not([disabled]), select:not([disabled]), textarea:not([disabled]), button:not([disabled]), a[href], [tabindex="0"])';

/** Props of <Dialog>. */
export type DialogProps = {
  open: boolean;
  /** Called on Escape, the close button, or a click on the backdrop. */
  onClose: () => void;
  title: string;
  /** One line under the title (also the dialog's accessible description). */
  description?: string;
  children?: ReactNode;
  /** Buttons, right-aligned at the bottom. */
  actions?: ReactNode;
  className?: string;
};

/**
 * A modal dialog on the native <dialog> element: `showModal()` makes the rest of the page inert,
 * keeps Tab inside, and Escape closes it. Focus starts on the first field (else the first action)
 * and returns to what had it before opening.
 */
export function Dialog({ open, onClose, title, description, children, actions, className }: DialogProps) {
  const ref = useRef<HTMLDialogElement>(null);
  const titleId = useId();
  const descriptionId = useId();
  const returnFocus = useRef<HTMLElement | null>(null);

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    if (open && !dialog.open) {
      returnFocus.current = document.activeElement instanceof HTMLElement ? document.activeElement : null;
      dialog.showModal();
      // Start in the body (the first field) or on the first action, not on the close button.
      const first = dialog.querySelector<HTMLElement>(`[data-dialog-part="body"] ${focusable}, [data-dialog-part="actions"] ${focusable}`);
      first?.focus();
    } else if (!open && dialog.open) {
      dialog.close();
    }
  }, [open]);

  useEffect(() => {
    const dialog = ref.current;
    if (!dialog) return;
    const onNativeClose = () => {
      returnFocus.current?.focus();
      returnFocus.current = null;
      onClose();
    };
    const onCancel = (event: Event) => {
      event.preventDefault();
      dialog.close();
    };
    dialog.addEventListener('close', onNativeClose);
    dialog.addEventListener('cancel', onCancel);
    return () => {
      dialog.removeEventListener('close', onNativeClose);
      dialog.removeEventListener('cancel', onCancel);
    };
  }, [onClose]);

  return (
    <dialog
      ref={ref}
      aria-labelledby={titleId}
      aria-describedby={description ? descriptionId : undefined}
      onClick={(event) => {
        if (event.target === ref.current) ref.current.close();
      }}
      className={cx(
        'm-auto w-[min(32rem,calc(100vw-2rem))] rounded-md border border-line-strong bg-surface p-0 text-ink shadow-2xl',
        'backdrop:bg-[rgb(0_0_0/0.55)]',
        className,
      )}
    >
      <div className="flex items-start justify-between gap-4 border-b border-line px-4 py-3">
        <div>
          <h2 id={titleId} className="text-md font-semibold">
            {title}
          </h2>
          {description ? (
            <p id={descriptionId} className="text-sm text-ink-muted">
              {description}
            </p>
          ) : null}
        </div>
        <Button variant="quiet" size="sm" aria-label="Close dialog" onClick={() => ref.current?.close()} icon={<CloseIcon size={14} />}>
          <span className="sr-only">Close</span>
        </Button>
      </div>
      {/* The body and actions exist only while open: every screen carries its closed dialogs (key lists, forms). */}
      {open && children ? (
        <div data-dialog-part="body" className="px-4 py-3">
          {children}
        </div>
      ) : null}
      {open && actions ? (
        <div data-dialog-part="actions" className="flex justify-end gap-2 border-t border-line px-4 py-3">
          {actions}
        </div>
      ) : null}
    </dialog>
  );
}
