import type { ItemState } from '@shared/schemas/item-states';
import { cx } from '@client/lib/cx';

/** How each item state is drawn: a glyph and a colour token; the words are the state itself. */
export const stateLooks: Record<ItemState, { glyph: string; colorVar: string }> = {
  new: { glyph: 'filled dot', colorVar: '--sf-state-new' },
  'in review': { glyph: 'clock', colorVar: '--sf-state-review' },
  labelled: { glyph: 'tag', colorVar: '--sf-state-labelled' },
  dismissed: { glyph: 'struck ring', colorVar: '--sf-state-dismissed' },
  escalated: { glyph: 'up arrow', colorVar: '--sf-state-escalated' },
  confirmed: { glyph: 'tick', colorVar: '--sf-state-confirmed' },
  returned: { glyph: 'back arrow', colorVar: '--sf-state-returned' },
};

function StateGlyph({ state }: { state: ItemState }) {
  const color = `var(${stateLooks[state].colorVar})`;
  const line = { fill: 'none', stroke: color, strokeWidth: 1.6, strokeLinecap: 'round', strokeLinejoin: 'round' } as const;
  return (
    <svg width="12" height="12" viewBox="0 0 12 12" aria-hidden="true" focusable="false" className="shrink-0">
      {state === 'new' ? <circle cx="6" cy="6" r="3.6" fill={color} /> : null}
      {state === 'in review' ? (
        <>
          <circle cx="6" cy="6" r="4.8" {...line} />
          <path d="M6 3.4V6l1.8 1.4" {...line} />
        </>
      ) : null}
      {state === 'labelled' ? (
        <>
          <path d="M1.2 1.2h4.6l5 5-4.6 4.6-5-5Z" {...line} />
          <circle cx="3.9" cy="3.9" r="0.9" fill={color} />
        </>
      ) : null}
      {state === 'dismissed' ? (
        <>
          <circle cx="6" cy="6" r="4.8" {...line} />
          <path d="M2.6 9.4 9.4 2.6" {...line} />
        </>
      ) : null}
      {state === 'escalated' ? <path d="M6 1.2 10.6 6.4H7.6v4.4H4.4V6.4H1.4Z" fill={color} /> : null}
      {state === 'confirmed' ? <path d="M1.6 6.4 4.6 9.4 10.6 2.8" {...line} strokeWidth={2} /> : null}
      {state === 'returned' ? <path d="M4.2 1.8 1.4 4.6l2.8 2.8M1.6 4.6h5.6a3.4 3.4 0 0 1 0 6.8H5" {...line} /> : null}
    </svg>
  );
}

/** Props of <StateMarker>. */
export type StateMarkerProps = { state: ItemState; className?: string };

/**
 * The one way an item's state is shown: a square-cornered tag with a glyph and the state's words.
 * Square corners keep states apart from flags (which are round pills) at a glance.
 */
export function StateMarker({ state, className }: StateMarkerProps) {
  return (
    <span
      className={cx(
        'inline-flex h-5 items-center gap-1.5 rounded-xs border border-line bg-surface px-1.5 text-sm whitespace-nowrap text-ink',
        className,
      )}
      data-state={state}
    >
      <StateGlyph state={state} />
      {state}
    </span>
  );
}
