import type { ReactNode } from 'react';
import { cx } from '@client/lib/cx';

/** Props of <Kbd>. */
export type KbdProps = {
  children: ReactNode;
  className?: string;
  /** 'on-accent' when placed inside a primary button. */
  tone?: 'plain' | 'on-accent';
};

/** A key hint, e.g. <Kbd>J</Kbd>. Mono, with a bottom edge so it reads as a key, not a tag. */
export function Kbd({ children, className, tone = 'plain' }: KbdProps) {
  return (
    <kbd
      className={cx(
        'inline-flex min-w-[1.375rem] items-center justify-center rounded-xs border border-b-2 px-1 text-xs leading-4 font-medium',
        tone === 'plain' ? 'border-line-strong bg-sunken text-ink' : 'border-on-accent/60 text-on-accent',
        className,
      )}
    >
      {children}
    </kbd>
  );
}
