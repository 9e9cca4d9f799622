import { cx } from '@client/lib/cx';
import { CautionIcon } from './icons';

/** The caution's words, in one place so every screen says the same (BRIEF.md, "Safety"). */
export const triageCautionText = {
  title: 'Triage aid, not an alert',
  review: 'Automatic scores and flags need an analyst’s review before anything is published.',
  warnings: 'Public warnings follow the network’s own procedures and the local authorities.',
  notMagnitude: 'No score is a magnitude or a hazard level.',
} as const;

/** Props of <TriageCaution>. */
export type TriageCautionProps = {
  /** 'full' for a screen's side panel, 'line' for one line above a table. */
  variant?: 'full' | 'line';
  className?: string;
};

/** The safety caution, shown on every screen that shows a flag. */
export function TriageCaution({ variant = 'full', className }: TriageCautionProps) {
  if (variant === 'line') {
    return (
      <p role="note" className={cx('flex items-center gap-2 text-sm text-ink-muted', className)}>
        <CautionIcon size={14} className="shrink-0 text-warn" />
        <span>
          <strong className="font-semibold text-ink">{triageCautionText.title}.</strong> {triageCautionText.review}{' '}
          {triageCautionText.warnings} {triageCautionText.notMagnitude}
        </span>
      </p>
    );
  }
  return (
    <aside
      aria-label="Caution about automatic scores"
      className={cx('flex gap-3 rounded-sm border border-line border-l-4 border-l-warn bg-surface px-3 py-2.5', className)}
    >
      <CautionIcon size={18} className="mt-0.5 shrink-0 text-warn" />
      <div className="text-sm">
        <p className="font-semibold text-ink">{triageCautionText.title}</p>
        <ul className="mt-0.5 list-none space-y-0.5 text-ink-muted">
          <li>{triageCautionText.review}</li>
          <li>{triageCautionText.warnings}</li>
          <li>{triageCautionText.notMagnitude}</li>
        </ul>
      </div>
    </aside>
  );
}
