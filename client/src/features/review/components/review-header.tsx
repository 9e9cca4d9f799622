import { Link } from 'react-router';
import type { QueueItemDetail } from '@shared/schemas/queue';
import { Button } from '@client/components/ui/button';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { Kbd } from '@client/components/ui/kbd';
import { StateMarker } from '@client/components/ui/state-marker';
import { paths } from '@client/config/paths';

/**
 * The review screen's header: back to the queue, station and item, window start and length, state,
 * flag, score and who holds the item.
 * @param search the queue's filters (query string with '?'), kept on the way back
 * @param meId the signed-in person ("you" when they hold the claim)
 */
export function ReviewHeader({ detail, durationS, search, meId }: { detail: QueueItemDetail; durationS: number; search: string; meId: string | undefined }) {
  const holder = detail.claimedBy && detail.state === 'in review' ? (detail.claimedBy.id === meId ? 'you' : detail.claimedBy.displayName) : null;
  return (
    <header className="flex flex-wrap items-center gap-x-4 gap-y-2">
      <Link to={`${paths.queue.href}${search}`} className="text-sm">
        ← Queue <Kbd>Esc</Kbd>
      </Link>
      <h1 className="text-xl font-semibold">
        <span className="font-mono">{detail.station}</span> <span className="font-normal text-ink-muted">item {detail.id}</span>
      </h1>
      <span className="font-mono text-sm">
        <time dateTime={detail.windowStart}>{new Date(detail.windowStart).toISOString()}</time> · {durationS.toFixed(1)} s
      </span>
      <StateMarker state={detail.state} />
      <FlagMarker flag={detail.flag} size="md" />
      <span className="font-mono text-sm" title="Orders the queue; not a magnitude">
        score {detail.score.toFixed(1)}
      </span>
      <span className="text-sm" data-testid="claim-holder">
        {holder ? (
          <>
            Claimed by <strong>{holder}</strong>
          </>
        ) : detail.state === 'new' || detail.state === 'returned' ? (
          'Not claimed'
        ) : (
          <>by {detail.updatedBy?.displayName ?? 'the system'}</>
        )}
      </span>
    </header>
  );
}

/** Props of <ReviewToolbar>. */
export type ReviewToolbarProps = {
  mayWork: boolean;
  mine: boolean;
  claimable: boolean;
  busy: boolean;
  hasPrevious: boolean;
  hasNext: boolean;
  view: { from: number; to: number } | null;
  phase: 'P' | 'S';
  onClaim: () => void;
  onRelease: () => void;
  onDismiss: () => void;
  onEscalate: () => void;
  onPrevious: () => void;
  onNext: () => void;
  onHelp: () => void;
};

/** The item's actions (for roles that work the queue), moving through the queue, and the zoom and click-phase readout. */
export function ReviewToolbar(p: ReviewToolbarProps) {
  return (
    <div className="flex flex-wrap items-center gap-2" role="toolbar" aria-label="Item actions">
      {p.mayWork ? (
        <>
          <Button size="sm" variant={p.claimable ? 'primary' : 'secondary'} shortcut="C" disabled={!p.claimable || p.busy} onClick={p.onClaim}>
            Claim
          </Button>
          <Button size="sm" shortcut="R" disabled={!p.mine || p.busy} onClick={p.onRelease}>
            Release
          </Button>
          <Button size="sm" shortcut="D" disabled={(!p.mine && !p.claimable) || p.busy} onClick={p.onDismiss}>
            Dismiss
          </Button>
          <Button size="sm" shortcut="E" disabled={(!p.mine && !p.claimable) || p.busy} onClick={p.onEscalate}>
            Escalate
          </Button>
        </>
      ) : (
        <span className="text-sm text-ink-muted" data-testid="view-only">
          View only: your role does not work the queue.
        </span>
      )}
      <span className="mx-2 h-5 border-l border-line" aria-hidden="true" />
      <Button size="sm" variant="quiet" shortcut="K" disabled={!p.hasPrevious} onClick={p.onPrevious}>
        Previous
      </Button>
      <Button size="sm" variant="quiet" shortcut="J" disabled={!p.hasNext} onClick={p.onNext}>
        Next
      </Button>
      <Button size="sm" variant="quiet" shortcut="?" onClick={p.onHelp}>
        Keys
      </Button>
      <span className="ml-auto text-sm text-ink-muted">
        Zoom {p.view ? `${p.view.from.toFixed(2)}–${p.view.to.toFixed(2)} s` : 'whole window'} (<Kbd>+</Kbd> <Kbd>−</Kbd> <Kbd>0</Kbd>) · click places <strong className="text-ink">{p.phase}</strong>
      </span>
    </div>
  );
}
