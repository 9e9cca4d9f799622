import type { ReactNode } from 'react';
import { cx } from '@client/lib/cx';
import { TrayIcon } from './icons';

/** Props of <EmptyState>. */
export type EmptyStateProps = {
  title: string;
  /** What it means and what to do next, in one or two sentences. */
  children?: ReactNode;
  /** A button or link that fixes it, when there is one. */
  action?: ReactNode;
  className?: string;
};

/** Shown where a list or table has nothing in it: says why and what to do, never just "No data". */
export function EmptyState({ title, children, action, className }: EmptyStateProps) {
  return (
    <div className={cx('flex flex-col items-start gap-2 rounded-sm border border-dashed border-line-strong px-5 py-6', className)}>
      <TrayIcon size={20} className="text-ink-muted" />
      <p className="text-md font-semibold text-ink">{title}</p>
      {children ? <div className="max-w-prose text-base text-ink-muted">{children}</div> : null}
      {action ? <div className="pt-1">{action}</div> : null}
    </div>
  );
}
