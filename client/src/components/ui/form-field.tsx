import { useId, type ReactNode } from 'react';
import { cx } from '@client/lib/cx';

/** What <FormField> hands to its control so label, hint and error are wired for assistive tech. */
export type FieldControlProps = {
  id: string;
  'aria-describedby': string | undefined;
  'aria-invalid': boolean | undefined;
};

/** Props of <FormField>. */
export type FormFieldProps = {
  label: ReactNode;
  /** Error text (e.g. react-hook-form's `errors.x?.message`); shown under the control. */
  error?: string | undefined;
  /** Help text shown under the label. */
  hint?: ReactNode;
  /** Shown after the label as "(optional)" when true. */
  optional?: boolean;
  className?: string;
  /** Render the control with the props given: `{(p) => <Input {...p} {...register('email')} />}`. */
  children: (control: FieldControlProps) => ReactNode;
};

/**
 * A labelled form field with hint and error text. The control is rendered by the child function,
 * so any input (Input, Select, a custom one) gets the label's id and the error description.
 */
export function FormField({ label, error, hint, optional, className, children }: FormFieldProps) {
  const id = useId();
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className={cx('flex flex-col gap-1', className)}>
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
        {optional ? <span className="ml-1 font-normal text-ink-muted">(optional)</span> : null}
      </label>
      <FieldHint id={hintId} hint={hint} />
      {children({ id, 'aria-describedby': describedBy, 'aria-invalid': error ? true : undefined })}
      {error ? (
        <p id={errorId} className="flex items-center gap-1 text-sm text-danger">
          <span aria-hidden="true" className="font-mono font-semibold">!</span>
          {error}
        </p>
      ) : null}
    </div>
  );
}

/** A field's help text under its label (nothing without a hint); `id` is what the control's aria-describedby names. */
export function FieldHint({ id, hint }: { id: string | undefined; hint: ReactNode }) {
  return hint ? (
    <p id={id} className="text-sm text-ink-muted">
      {hint}
    </p>
  ) : null;
}
