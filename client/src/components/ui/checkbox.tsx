import { useId, type ComponentPropsWithRef, type ReactNode } from 'react';
import { cx } from '@client/lib/cx';
import { FieldHint } from './form-field';

/** Props of <Checkbox>: every native checkbox prop plus its label and an optional hint. */
export type CheckboxProps = Omit<ComponentPropsWithRef<'input'>, 'type'> & {
  label: ReactNode;
  hint?: ReactNode;
};

/**
 * A native checkbox with its label always attached (clicking the words toggles it). The box is
 * drawn by the browser with `accent-color`, so it keeps the platform's keyboard and checked states.
 */
export function Checkbox({ label, hint, className, id, ...rest }: CheckboxProps) {
  const autoId = useId();
  const inputId = id ?? autoId;
  const hintId = hint ? `${inputId}-hint` : undefined;
  return (
    <div className={cx('flex items-start gap-2', className)}>
      <input
        id={inputId}
        type="checkbox"
        aria-describedby={hintId}
        className="mt-[3px] size-4 shrink-0 accent-[var(--sf-accent)] disabled:opacity-55"
        {...rest}
      />
      <div className="min-w-0">
        <label htmlFor={inputId} className="text-base text-ink">
          {label}
        </label>
        <FieldHint id={hintId} hint={hint} />
      </div>
    </div>
  );
}
