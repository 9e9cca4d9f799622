import type { Flag } from '@shared/schemas/flags';
import { cx } from '@client/lib/cx';

/** How each flag is drawn: a shape, a colour token and the words (the words are the flag itself). */
export const flagLooks: Record<Flag, { shape: string; colorVar: string; description: string }> = {
  'likely event': { shape: 'filled diamond', colorVar: '--sf-flag-event', description: 'The score points to a real source; review it first.' },
  'needs eyes': { shape: 'half-filled square', colorVar: '--sf-flag-eyes', description: 'The score cannot tell; a person must decide.' },
  'likely noise': { shape: 'hollow ring', colorVar: '--sf-flag-noise', description: 'The score matches this station’s own noise.' },
};

/**
 * The flag's shape alone, 12 px, in the flag's colour. Decorative: always shown beside the words.
 * @param flag one of the three triage flags
 */
export function FlagGlyph({ flag, size = 12 }: { flag: Flag; size?: number }) {
  const color = `var(${flagLooks[flag].colorVar})`;
  return (
    <svg width={size} height={size} viewBox="0 0 12 12" aria-hidden="true" focusable="false" className="shrink-0">
      {flag === 'likely event' ? <path d="M6 0.6 11.4 6 6 11.4 0.6 6Z" fill={color} /> : null}
      {flag === 'needs eyes' ? (
        <>
          <rect x="1.25" y="1.25" width="9.5" height="9.5" fill="none" stroke={color} strokeWidth="1.5" />
          <rect x="1.25" y="1.25" width="4.75" height="9.5" fill={color} />
        </>
      ) : null}
      {flag === 'likely noise' ? <circle cx="6" cy="6" r="4.6" fill="none" stroke={color} strokeWidth="1.6" /> : null}
    </svg>
  );
}

/** Props of <FlagMarker>. */
export type FlagMarkerProps = {
  flag: Flag;
  /** 'sm' for table rows, 'md' for headers of the review screen. */
  size?: 'sm' | 'md';
  className?: string;
};

/**
 * The one way a triage flag is shown anywhere in Seisift: a rounded pill with the flag's shape and
 * its words, outlined in the flag's colour. Shape and words carry the meaning; colour only helps.
 * Wherever flags appear, <TriageCaution /> must be on the same screen.
 */
export function FlagMarker({ flag, size = 'sm', className }: FlagMarkerProps) {
  return (
    <span
      className={cx(
        'inline-flex items-center gap-1.5 rounded-full border-[1.5px] whitespace-nowrap text-ink',
        size === 'sm' ? 'h-5 px-2 text-sm' : 'h-7 px-3 text-base font-medium',
        className,
      )}
      style={{ borderColor: `var(${flagLooks[flag].colorVar})` }}
      data-flag={flag}
    >
      <FlagGlyph flag={flag} size={size === 'sm' ? 10 : 12} />
      {flag}
    </span>
  );
}
