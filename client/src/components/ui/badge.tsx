import type { ReactNode } from 'react';
import { cx } from '@client/lib/cx';

/** Badge tones; each pairs a wash background with a text colour of ≥ 4.5:1 on it. */
export type BadgeTone = 'neutral' | 'info' | 'ok' | 'warn' | 'danger' | 'accent';

const toneClass: Record<BadgeTone, string> = {
  neutral: 'bg-raised text-ink',
  info: 'bg-info-wash text-info',
  ok: 'bg-ok-wash text-ok',
  warn: 'bg-warn-wash text-warn',
  danger: 'bg-danger-wash text-danger',
  accent: 'bg-accent-wash text-accent-ink',
};

/** Props of <Badge>. */
export type BadgeProps = { tone?: BadgeTone; children: ReactNode; className?: string; mono?: boolean };

/**
 * A small label: roles, counts, codes. Not for flags or item states (use FlagMarker / StateMarker).
 * The words carry the meaning; the tone only groups.
 */
export function Badge({ tone = 'neutral', children, className, mono }: BadgeProps) {
  return (
    <span
      className={cx(
        'inline-flex h-5 items-center rounded-xs px-1.5 text-xs font-medium whitespace-nowrap',
        mono && 'font-mono tabular',
        toneClass[tone],
        className,
      )}
    >
      {children}
    </span>
  );
}
