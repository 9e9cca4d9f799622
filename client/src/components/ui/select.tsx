import type { ComponentPropsWithRef } from 'react';
import { cx } from '@client/lib/cx';
import { controlClass } from './controls';
import { ChevronDownIcon } from './icons';

/** Props of <Select>: every native select prop. */
export type SelectProps = ComponentPropsWithRef<'select'>;

/** A native select (keyboard and screen readers work as the platform does) with our look. */
export function Select({ className, children, ...rest }: SelectProps) {
  return (
    <span className="relative inline-flex w-full">
      <select className={cx(controlClass, 'appearance-none pr-8', className)} {...rest}>
        {children}
      </select>
      <ChevronDownIcon className="pointer-events-none absolute top-1/2 right-2 -translate-y-1/2 text-ink-muted" size={14} />
    </span>
  );
}
