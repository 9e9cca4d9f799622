import { Link } from 'react-router';
import type { CandidateEvent } from '@client/api/queue/candidate-events';
import { EventGroupMembers } from '@client/components/event-group-members';
import { Button } from '@client/components/ui/button';
import { Dialog } from '@client/components/ui/dialog';
import { Loading } from '@client/components/ui/skeleton';
import { paths } from '@client/config/paths';

/** Props of <GroupPanel>. */
type GroupPanelProps = {
  eventId: number;
  /** The located event built from this group, when there is one (and the viewer may see events). */
  builtEventId: number | null;
  stationCount: number;
  ev: CandidateEvent | undefined;
  loading: boolean;
  error: string | null;
  currentId: number;
  search: string;
  mayLabel: boolean;
  eventType: string;
  busy: boolean;
  onLabel: () => void;
};

/**
 * The candidate event this item belongs to (issue 7): every member with station, first trigger,
 * flag and state, each a link to its own review; "Label the whole group" for those the policy
 * lets label (queue.label), which asks first (GroupLabelDialog).
 */
export function GroupPanel({ eventId, builtEventId, stationCount, ev, loading, error, currentId, search, mayLabel, eventType, busy, onLabel }: GroupPanelProps) {
  return (
    <section aria-labelledby={`group-${eventId}`} className="rounded-sm border border-line bg-surface p-3" data-testid="group-panel">
      <h2 id={`group-${eventId}`} className="pb-1 text-md font-semibold">
        Event group #{eventId} · {stationCount} stations
      </h2>
      <p className="pb-2 text-sm text-ink-muted">
        First triggers at {stationCount} stations close enough in time for one source.{' '}
        {builtEventId !== null ? (
          <>
            Its location and ML are on{' '}
            <Link className="underline" to={`${paths.event.href}/${builtEventId}`}>
              event {builtEventId}
            </Link>
            , with every station&apos;s traces.
          </>
        ) : (
          'No event built from it yet: not located, no magnitude.'
        )}
      </p>
      {loading ? (
        <Loading label="Loading the group…" />
      ) : error || !ev ? (
        <p className="text-sm">The group could not be loaded{error ? `: ${error}` : ''}.</p>
      ) : (
        <EventGroupMembers eventId={eventId} members={ev.members} currentId={currentId} search={search} layout="narrow" />
      )}
      {mayLabel && ev ? (
        <div className="mt-2 flex flex-wrap items-center gap-2">
          <Button size="sm" disabled={busy || eventType === ''} onClick={onLabel}>
            {eventType === '' ? 'Label the whole group (choose a type first)' : `Label the whole group as ${eventType}`}
          </Button>
          <span className="text-xs text-ink-muted">Asks first. The others get the type only; this item gets your whole form.</span>
        </div>
      ) : null}
    </section>
  );
}

/** Props of <GroupLabelDialog>. */
type GroupLabelDialogProps = {
  open: boolean;
  ev: CandidateEvent;
  currentId: number;
  /** Whether this item can take the form's label (waiting, or claimed by the viewer). */
  currentWritable: boolean;
  eventType: string;
  busy: boolean;
  onCancel: () => void;
  onConfirm: () => void;
};

/**
 * The confirmation before labelling a whole event group: which members get the type, which are
 * already settled (skipped), and that only the type is copied — certainty "suspected", no picks,
 * no note — since nobody has looked at the other members' traces; this item gets the whole form.
 */
export function GroupLabelDialog({ open, ev, currentId, currentWritable, eventType, busy, onCancel, onConfirm }: GroupLabelDialogProps) {
  const waiting = ev.members.filter((m) => m.state === 'new' || m.state === 'returned' || m.state === 'in review');
  const settled = ev.members.filter((m) => !waiting.includes(m));
  const others = waiting.filter((m) => m.itemId !== currentId);
  return (
    <Dialog
      open={open}
      onClose={onCancel}
      title={`Label event group #${ev.id} as ${eventType}?`}
      description="Only the event type is copied to the other members: they keep certainty “suspected”, get no picks and no note of yours."
      actions={
        <>
          <Button onClick={onCancel}>Cancel</Button>
          <Button variant="primary" disabled={busy || waiting.length === 0} onClick={onConfirm}>
            Label {waiting.length} {waiting.length === 1 ? 'item' : 'items'} as {eventType}
          </Button>
        </>
      }
    >
      <ul className="flex flex-col gap-1 text-sm" data-testid="group-label-plan">
        {waiting.map((m) => (
          <li key={m.itemId}>
            <span className="font-mono">{m.station}</span> item {m.itemId}:{' '}
            {m.itemId === currentId && currentWritable ? <strong>this item, with your whole form (picks, certainty, note)</strong> : m.state === 'in review' ? 'the type only, if the claim is yours' : 'the type only'}
          </li>
        ))}
        {settled.map((m) => (
          <li key={m.itemId} className="text-ink-muted">
            <span className="font-mono">{m.station}</span> item {m.itemId}: skipped, already {m.state}
          </li>
        ))}
      </ul>
      {others.length > 0 ? <p className="mt-2 text-sm text-ink-muted">Open each member later to place its picks; every label stays correctable on its own.</p> : null}
    </Dialog>
  );
}
