import type { ComponentPropsWithRef } from 'react';
import { cx } from '@client/lib/cx';
import { controlClass } from './controls';

/** Props of <Input>: every native input prop; `mono` for codes, times and figures. */
export type InputProps = ComponentPropsWithRef<'input'> & { mono?: boolean };

/**
 * A text input. Takes `ref` (React 19 ref-as-prop), so `{...register('name')}` from react-hook-form
 * works as is. Give it a label: wrap it in <FormField>.
 */
export function Input({ className, mono, ...rest }: InputProps) {
  return <input className={cx(controlClass, mono && 'font-mono tabular', className)} {...rest} />;
}
