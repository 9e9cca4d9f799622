import { useState } from 'react';
import { Button } from '@client/components/ui/button';
import { CautionIcon } from '@client/components/ui/icons';
import { triageCautionText } from '@client/components/ui/triage-caution';

/** sessionStorage key: the analyst folded the caution in this session. */
export const cautionFoldedKey = 'seisift.review-caution-folded';

function readFolded(): boolean {
  try {
    return window.sessionStorage.getItem(cautionFoldedKey) === '1';
  } catch {
    return false;
  }
}

function writeFolded(folded: boolean): void {
  try {
    if (folded) window.sessionStorage.setItem(cautionFoldedKey, '1');
    else window.sessionStorage.removeItem(cautionFoldedKey);
  } catch {
    // Without storage the banner simply opens again on the next item.
  }
}

/**
 * The triage caution on the review screen (BRIEF.md, Safety): open as a banner the first time in a
 * session, folded to one line for the rest of the session once the analyst folds it (the line stays:
 * the caution never disappears from a screen that shows a flag). Unfold brings the banner back.
 */
export function SessionCaution() {
  const [folded, setFolded] = useState(readFolded);
  const set = (f: boolean) => {
    writeFolded(f);
    setFolded(f);
  };
  if (folded) {
    return (
      <div className="flex items-center gap-2 text-xs text-ink-muted" data-testid="caution-folded">
        <CautionIcon size={14} className="shrink-0 text-warn" />
        <span>
          <strong className="font-semibold text-ink">{triageCautionText.title}.</strong> {triageCautionText.review}
        </span>
        <Button size="sm" variant="quiet" aria-expanded={false} onClick={() => set(false)}>
          Show the caution
        </Button>
      </div>
    );
  }
  return (
    <aside aria-label="Caution about automatic scores" className="flex items-center gap-3 rounded-sm border border-line border-l-4 border-l-warn bg-surface px-3 py-1.5" data-testid="caution-banner">
      <CautionIcon size={18} className="shrink-0 text-warn" />
      <p className="min-w-0 flex-1 text-sm text-ink-muted">
        <strong className="font-semibold text-ink">{triageCautionText.title}.</strong> {triageCautionText.review} {triageCautionText.warnings} {triageCautionText.notMagnitude}
      </p>
      <Button size="sm" variant="quiet" aria-expanded onClick={() => set(true)}>
        Fold for this session
      </Button>
    </aside>
  );
}
