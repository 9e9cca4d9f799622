import { cx } from '@client/lib/cx';

/** Props of <Skeleton>. */
export type SkeletonProps = { className?: string };

/** One grey block standing in for content that is loading. Decorative; wrap groups in <Loading>. */
export function Skeleton({ className }: SkeletonProps) {
  return <span aria-hidden="true" className={cx('block animate-pulse rounded-xs bg-raised', className)} />;
}

/** Props of <Loading>. */
export type LoadingProps = { label: string; rows?: number; className?: string };

/**
 * A loading placeholder for a table or panel: a few skeleton rows and a status message that screen
 * readers announce ("Loading the queue…"). The rows keep the layout from jumping when data lands.
 */
export function Loading({ label, rows = 4, className }: LoadingProps) {
  return (
    <div role="status" className={cx('flex flex-col gap-2', className)}>
      <span className="sr-only">{label}</span>
      {Array.from({ length: rows }, (_, i) => (
        <span key={i} className="flex gap-3">
          <Skeleton className="h-4 w-36" />
          <Skeleton className="h-4 flex-1" />
          <Skeleton className="h-4 w-16" />
        </span>
      ))}
    </div>
  );
}
