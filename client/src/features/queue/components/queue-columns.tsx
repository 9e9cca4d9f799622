import { createColumnHelper } from '@tanstack/react-table';
import type { QueueRow } from '@shared/schemas/queue';
import { liveArrivals } from '@client/api/queue/live-patch';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { StateMarker } from '@client/components/ui/state-marker';
import { formatAge } from './age';

const column = createColumnHelper<QueueRow>();

/** UTC time as ISO 8601 with milliseconds (2026-03-14T09:26:53.589Z), as the trade writes it. */
function utc(iso: string): string {
  return new Date(iso).toISOString();
}

/**
 * The queue table's columns: flag (with the "just in" mark of live arrivals), score, station,
 * window start, time waiting, state and holder, event group, and why it is flagged.
 * @param now the clock the waiting times are measured to, ms since the epoch
 * @param meId the signed-in person ("by you" on their claims)
 * @param onGroup opens the members of a candidate event
 */
export function queueColumns(now: number, meId: string | undefined, onGroup: (eventId: number) => void) {
  return [
    column.accessor('flag', {
      header: 'Flag',
      cell: (c) => (
        <span className="flex flex-col items-start gap-0.5 leading-tight">
          <FlagMarker flag={c.getValue()} className="font-medium" />
          {liveArrivals.has(c.row.original.id) ? (
            <span data-arrival="new" className="rounded-xs border border-accent px-1 text-xs font-semibold whitespace-nowrap text-accent-ink" title="Arrived while this page was open; marked until you select it">
              just in
            </span>
          ) : null}
        </span>
      ),
    }),
    column.accessor('score', { header: () => <span title="Orders the queue; not a magnitude">Score</span>, cell: (c) => c.getValue().toFixed(1) }),
    column.accessor('station', { header: 'Station', cell: (c) => c.getValue().split('.').pop() }),
    column.accessor('windowStart', {
      header: 'Window start (UTC)',
      cell: (c) => (
        <time dateTime={c.getValue()} className="flex flex-col leading-tight">
          <span className="text-xs text-ink-muted">{c.getValue().slice(0, 10)}</span>
          <span>{c.getValue().slice(11, 23)}</span>
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
          <span className="flex flex-col items-start gap-0.5 leading-tight">
            <StateMarker state={c.getValue()} />
            {r.state === 'in review' && by ? (
              <span className={by.id === meId ? 'text-xs font-semibold' : 'text-xs text-ink-muted'}>{by.id === meId ? 'by you' : `by ${by.displayName}`}</span>
            ) : r.state === 'returned' ? (
              <span className="text-xs font-semibold">supervisor’s comment inside</span>
            ) : null}
          </span>
        );
      },
    }),
    column.display({
      id: 'group',
      header: 'Event group',
      cell: (c) => {
        const g = c.row.original.candidateEvent;
        if (!g) return <span className="text-ink-muted">—</span>;
        return (
          <button
            type="button"
            data-group={g.id}
            className="rounded-xs border border-line-strong px-1 text-left text-xs leading-tight hover:bg-raised"
            title={`Candidate event #${g.id}: first triggers at ${g.stationCount} stations within the allowed time. Show its members.`}
            onClick={(e) => {
              e.stopPropagation();
              onGroup(g.id);
            }}
          >
            group #{g.id}
            <br />
            {g.stationCount} stations
          </button>
        );
      },
    }),
    column.accessor('reasons', {
      header: 'Why flagged',
      cell: (c) => {
        const [first = '', ...rest] = c.getValue();
        return (
          <span className="flex items-center gap-1 text-xs text-ink-muted" title={c.getValue().join('\n')}>
            <span className="line-clamp-2 min-w-0 leading-snug whitespace-normal">{first}</span>
            {rest.length > 0 ? <span className="shrink-0 rounded-xs border border-line px-1 text-xs">+{rest.length}</span> : null}
          </span>
        );
      },
    }),
  ];
}
