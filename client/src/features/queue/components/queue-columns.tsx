import { createColumnHelper } from '@tanstack/react-table';
import type { QueueRow } from '@shared/schemas/queue';
import { liveArrivals } from '@client/api/queue/live-patch';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { StateMarker } from '@client/components/ui/state-marker';
import { paths } from '@client/config/paths';
import type { GroupedRow } from '@client/features/queue/lib/event-groups';
import { formatAge } from './age';

const column = createColumnHelper<QueueRow>();

/** UTC time as ISO 8601 with milliseconds (2026-03-14T09:26:53.589Z), as the trade writes it. */
function utc(iso: string): string {
  return new Date(iso).toISOString();
}

/** What the columns need besides the row itself. */
export type QueueColumnContext = {
  /** The clock the waiting times are measured to, ms since the epoch. */
  now: number;
  /** The signed-in person ("by you" on their claims). */
  meId: string | undefined;
  /** Each shown row's place: a plain item, an event group's row, or a member beneath it. */
  placeOf: ReadonlyMap<number, GroupedRow<QueueRow>>;
  /** The event built from a candidate-event group, when there is one (and the viewer may see events). */
  eventIdOf: (groupId: number) => number | undefined;
  /** Groups whose other members are shown beneath their row. */
  expanded: ReadonlySet<number>;
  /** Shows or hides a group's other members. */
  onToggle: (groupId: number) => void;
  /** Opens an event on the event screen. */
  onOpenEvent: (eventId: number) => void;
  /** Opens the members of a group that has no event (yet): the dialog. */
  onGroup: (groupId: number) => void;
  /** Which of each row's reasons to show (distinguishing-reason.ts), by row id. */
  shownReason: ReadonlyMap<number, number>;
};

/**
 * The queue table's columns, one line each so that 20 and more rows fit a 1440×900 screen: flag
 * (with the "just in" mark of live arrivals), score, station, window start, time waiting, state and
 * holder, event group (its event and its other members on demand), and why it is flagged (the reason
 * that sets the row apart; every reason in its title).
 */
export function queueColumns(ctx: QueueColumnContext) {
  const { now, meId } = ctx;
  return [
    column.accessor('flag', {
      header: 'Flag',
      cell: (c) => (
        <span className="flex items-center gap-1 leading-tight">
          <FlagMarker flag={c.getValue()} className="font-medium" />
          {liveArrivals.has(c.row.original.id) ? (
            <span data-arrival="new" className="rounded-xs border border-accent px-0.5 text-xs font-semibold whitespace-nowrap text-accent-ink" title="Arrived while this page was open; marked until you select it">
              new
            </span>
          ) : null}
        </span>
      ),
    }),
    column.accessor('score', { header: () => <span title="Orders the queue; not a magnitude">Score</span>, cell: (c) => c.getValue().toFixed(1) }),
    column.accessor('station', {
      header: 'Station',
      cell: (c) => {
        const member = ctx.placeOf.get(c.row.original.id)?.role === 'member';
        return <span className={member ? 'pl-2' : undefined}>{member ? '↳ ' : ''}{c.getValue().split('.').pop()}</span>;
      },
    }),
    column.accessor('windowStart', {
      header: 'Window start (UTC)',
      cell: (c) => (
        <time dateTime={c.getValue()} title={c.getValue()}>
          <span className="text-ink-muted">{c.getValue().slice(5, 10)}</span> {c.getValue().slice(11, 23)}
        </time>
      ),
    }),
    column.accessor('createdAt', { header: 'Waiting', cell: (c) => <span title={`arrived ${utc(c.getValue())}`}>{formatAge(c.getValue(), now)}</span> }),
    column.accessor('state', {
      header: 'State · holder',
      cell: (c) => {
        const r = c.row.original;
        const by = r.claimedBy;
        return (
          <span className="flex items-center gap-1 leading-tight">
            <StateMarker state={c.getValue()} />
            {r.state === 'in review' && by ? (
              <span className={by.id === meId ? 'truncate text-xs font-semibold' : 'truncate text-xs text-ink-muted'}>{by.id === meId ? 'by you' : `by ${by.displayName}`}</span>
            ) : r.state === 'returned' ? (
              <span className="truncate text-xs font-semibold" title="The supervisor’s comment is inside">comment</span>
            ) : null}
          </span>
        );
      },
    }),
    column.display({
      id: 'group',
      header: 'Event',
      cell: (c) => {
        const r = c.row.original;
        const g = r.candidateEvent;
        if (!g) return <span className="text-ink-muted">—</span>;
        const place = ctx.placeOf.get(r.id);
        if (place?.role === 'member') return <span className="text-xs text-ink-muted" data-group-member={g.id}>member of the event above</span>;
        const eventId = ctx.eventIdOf(g.id);
        const others = (place?.membersHere ?? 1) - 1;
        const open = ctx.expanded.has(g.id);
        return (
          <span className="flex items-center gap-1 text-xs leading-tight" data-group={g.id}>
            {eventId !== undefined ? (
              <a
                href={`${paths.event.href}/${eventId}`}
                className="rounded-xs border border-accent px-1 font-semibold whitespace-nowrap text-accent-ink hover:bg-raised"
                title={`Open event ${eventId} on the event screen (Enter): ${g.stationCount} stations`}
                onClick={(e) => {
                  e.preventDefault();
                  e.stopPropagation();
                  ctx.onOpenEvent(eventId);
                }}
              >
                event · {g.stationCount} sta.
              </a>
            ) : (
              <button
                type="button"
                className="rounded-xs border border-line-strong px-1 whitespace-nowrap hover:bg-raised"
                title={`Candidate event #${g.id}: first triggers at ${g.stationCount} stations within the allowed time. Show its members.`}
                onClick={(e) => {
                  e.stopPropagation();
                  ctx.onGroup(g.id);
                }}
              >
                group · {g.stationCount} sta.
              </button>
            )}
            {others > 0 ? (
              <button
                type="button"
                aria-expanded={open}
                aria-label={`${open ? 'Hide' : 'Show'} the other ${others} member window${others === 1 ? '' : 's'} of this event (X)`}
                className="rounded-xs border border-line px-1 whitespace-nowrap hover:bg-raised"
                onClick={(e) => {
                  e.stopPropagation();
                  ctx.onToggle(g.id);
                }}
              >
                {open ? '▾' : '▸'} {others}
              </button>
            ) : null}
          </span>
        );
      },
    }),
    column.accessor('reasons', {
      header: () => <span title="The reason that sets this row apart from the others listed; hover for all of them">Why flagged</span>,
      cell: (c) => {
        const reasons = c.getValue();
        const shown = reasons[ctx.shownReason.get(c.row.original.id) ?? 0] ?? '';
        const rest = reasons.length - 1;
        return (
          <span className="flex items-center gap-1 text-xs text-ink-muted" title={reasons.join('\n')}>
            <span className="min-w-0 truncate leading-snug" data-reason>{shown}</span>
            {rest > 0 ? <span className="shrink-0 rounded-xs border border-line px-1 text-xs">+{rest}</span> : null}
          </span>
        );
      },
    }),
  ];
}
