import { useQueryClient } from '@tanstack/react-query';
import { getCoreRowModel, useReactTable, flexRender, createColumnHelper } from '@tanstack/react-table';
import { useVirtualizer } from '@tanstack/react-virtual';
import { useCallback, useEffect, useLayoutEffect, useMemo, useRef, useState, useSyncExternalStore } from 'react';
import { useNavigate } from 'react-router';
import { can } from '@shared/auth/policies';
import { roleSchema, type Role } from '@shared/auth/roles';
import { flags } from '@shared/schemas/flags';
import { itemStates, type ItemState } from '@shared/schemas/item-states';
import { labelFilterValues, type QueueRow } from '@shared/schemas/queue';
import { Button } from '@client/components/ui/button';
import { Dialog } from '@client/components/ui/dialog';
import { EmptyState } from '@client/components/ui/empty-state';
import { FlagMarker } from '@client/components/ui/flag-marker';
import { Input } from '@client/components/ui/input';
import { Kbd } from '@client/components/ui/kbd';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { StateMarker } from '@client/components/ui/state-marker';
import { useToast } from '@client/components/ui/toast';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { paths } from '@client/config/paths';
import { useCandidateEvent } from '@client/api/queue/candidate-events';
import { useMe, useQueueList, type QueueFilters } from '@client/api/queue/get-queue';
import { useItemAction } from '@client/api/queue/item-actions';
import { liveArrivals } from '@client/api/queue/live-patch';
import { workingStates } from '@client/api/queue/queue-filters';
import { useQueueFilters } from '@client/features/queue/hooks/use-queue-filters';
import { formatAge, useNow } from './age';
import { isTypingTarget, KeyHelp, type KeyBinding } from '@client/components/ui/key-help';
import { UtcTimeInput } from '@client/components/ui/utc-time-input';
import { EventGroupMembers } from '@client/components/event-group-members';
import { useEventIdsByGroup } from '@client/api/events/event-index';
import { collapseEventGroups, type GroupedRow } from '@client/features/queue/lib/event-groups';

/** Height of one queue row, px (fixed, so the virtualiser can place rows without measuring). */
const ROW_PX = 44;

/** Fixed column widths, px (the reasons column takes the rest), so the table fits 1280–1440 px screens. */
const columnPx: Record<string, number | undefined> = { flag: 124, score: 52, station: 56, windowStart: 104, createdAt: 60, state: 124, group: 140 };

/** Columns of figures, codes and times: IBM Plex Mono with tabular digits. */
const monoColumns = new Set(['score', 'station', 'windowStart', 'createdAt']);

/** The queue screen's keys. */
export const queueKeysHelp: readonly KeyBinding[] = [
  { keys: ['J', '↓'], does: 'Next item' },
  { keys: ['K', '↑'], does: 'Previous item' },
  { keys: ['Enter', 'O'], does: 'Open the item for review (a group’s row: its event)' },
  { keys: ['X'], does: 'Show or hide the other member windows of the selected group' },
  { keys: ['C'], does: 'Claim the item and open it' },
  { keys: ['G'], does: 'Go to the top (shows new arrivals)' },
  { keys: ['?'], does: 'Show these keys' },
];

const column = createColumnHelper<QueueRow>();

/** UTC time as ISO 8601 with milliseconds (2026-03-14T09:26:53.589Z), as the trade writes it. */
function utc(iso: string): string {
  return new Date(iso).toISOString();
}

/**
 * The live review queue: filters in the URL, counts per state, a virtualised table that stays
 * smooth at 10 000 rows, rows arriving live without moving the analyst's place ("N new above"),
 * and keyboard-first work (J/K, Enter, C, ?).
 */
export function QueueScreen() {
  const { filters, setFilters, setStateParam, search } = useQueueFilters();
  const list = useQueueList(filters);
  const me = useMe();
  const mayClaim = can(me ? { roles: me.roles.filter((r): r is Role => roleSchema.safeParse(r).success), stationIds: [] } : null, 'queue.claim');
  const navigate = useNavigate();
  const toast = useToast();
  const action = useItemAction();
  const qc = useQueryClient();
  const now = useNow();
  const loadedRows = useMemo(() => list.data?.pages.flatMap((p) => p.items) ?? [], [list.data]);
  // One row per event group; its other members beneath it on demand (issue 18).
  const [expanded, setExpanded] = useState<ReadonlySet<number>>(() => new Set());
  const grouped = useMemo(() => collapseEventGroups(loadedRows, expanded), [loadedRows, expanded]);
  const rows = useMemo(() => grouped.map((g) => g.row), [grouped]);
  const roleOf = useMemo(() => new Map<number, GroupedRow<QueueRow>>(grouped.map((g) => [g.row.id, g])), [grouped]);
  const mayViewEvents = can(me ? { roles: me.roles.filter((r): r is Role => roleSchema.safeParse(r).success), stationIds: [] } : null, 'event.view');
  const eventIds = useEventIdsByGroup(mayViewEvents && loadedRows.some((r) => r.candidateEvent !== null));
  const toggleGroup = useCallback((g: number) => setExpanded((s) => {
    const next = new Set(s);
    if (next.has(g)) next.delete(g);
    else next.add(g);
    return next;
  }), []);
  const counts = list.data?.pages[0]?.counts;
  const total = list.data?.pages[0]?.total;
  const [selectedId, setSelectedId] = useState<number | null>(null);
  const [help, setHelp] = useState(false);
  const arrivals = useSyncExternalStore(liveArrivals.subscribe, liveArrivals.version);
  const scrollRef = useRef<HTMLDivElement>(null);

  const selectedIndex = selectedId === null ? -1 : rows.findIndex((r) => r.id === selectedId);

  const [groupOpen, setGroupOpen] = useState<number | null>(null);
  const columns = useMemo(
    () => [
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
                <span className={by.id === me?.id ? 'text-xs font-semibold' : 'text-xs text-ink-muted'}>{by.id === me?.id ? 'by you' : `by ${by.displayName}`}</span>
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
          const here = roleOf.get(c.row.original.id);
          if (here?.role === 'member') return <span className="pl-3 text-xs text-ink-muted">↳ member of group #{g.id}</span>;
          const eventId = eventIds.data?.get(g.id);
          const open = expanded.has(g.id);
          return (
            <span className="flex items-center gap-1 text-xs leading-tight" data-group={g.id}>
              {eventId !== undefined ? (
                <a
                  href={`${paths.event.href}/${eventId}`}
                  className="rounded-xs border border-accent px-1 font-semibold text-accent-ink hover:bg-raised"
                  title={`Open event ${eventId} on the event screen: ${g.stationCount} stations`}
                  onClick={(e) => {
                    e.preventDefault();
                    e.stopPropagation();
                    void navigate(`${paths.event.href}/${eventId}`);
                  }}
                >
                  event · {g.stationCount} sta.
                </a>
              ) : (
                <button
                  type="button"
                  className="rounded-xs border border-line-strong px-1 text-left hover:bg-raised"
                  title={`Candidate event #${g.id}: first triggers at ${g.stationCount} stations within the allowed time. Show its members.`}
                  onClick={(e) => {
                    e.stopPropagation();
                    setGroupOpen(g.id);
                  }}
                >
                  group · {g.stationCount} sta.
                </button>
              )}
              {(here?.membersHere ?? 0) > 1 ? (
                <button
                  type="button"
                  aria-expanded={open}
                  aria-label={`${open ? 'Hide' : 'Show'} the other ${(here?.membersHere ?? 1) - 1} member windows of group ${g.id}`}
                  className="rounded-xs border border-line px-1 hover:bg-raised"
                  onClick={(e) => {
                    e.stopPropagation();
                    toggleGroup(g.id);
                  }}
                >
                  {open ? '▾' : '▸'} {(here?.membersHere ?? 1) - 1}
                </button>
              ) : null}
            </span>
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
    ],
    // `arrivals` re-renders the marker column when the set changes.
    // eslint-disable-next-line react-hooks/exhaustive-deps
    [now, me?.id, arrivals, roleOf, eventIds.data, expanded, toggleGroup, navigate],
  );
  const table = useReactTable({ data: rows, columns, getCoreRowModel: getCoreRowModel(), getRowId: (r) => String(r.id) });
  const virtual = useVirtualizer({ count: rows.length, getScrollElement: () => scrollRef.current, estimateSize: () => ROW_PX, overscan: 12 });

  // Keep the analyst's place when rows arrive above it: remember the first visible row and its
  // offset, and after the list changes scroll by however far that row moved.
  const anchor = useRef<{ id: number; offset: number } | null>(null);
  const firstVisible = virtual.getVirtualItems().find((v) => v.start >= (scrollRef.current?.scrollTop ?? 0));
  useLayoutEffect(() => {
    const el = scrollRef.current;
    const a = anchor.current;
    if (el && a && el.scrollTop > 0) {
      const idx = rows.findIndex((r) => r.id === a.id);
      if (idx >= 0) {
        const want = idx * ROW_PX - a.offset;
        if (Math.abs(want - el.scrollTop) >= 1) el.scrollTop = want;
      }
    }
  }, [rows]);
  const onScroll = useCallback(() => {
    const el = scrollRef.current;
    if (!el) return;
    const idx = Math.min(rows.length - 1, Math.floor(el.scrollTop / ROW_PX));
    const r = rows[idx];
    anchor.current = r ? { id: r.id, offset: idx * ROW_PX - el.scrollTop } : null;
    if (list.hasNextPage && !list.isFetchingNextPage && el.scrollTop + el.clientHeight > rows.length * ROW_PX - 40 * ROW_PX) void list.fetchNextPage();
  }, [rows, list]);

  const topIndex = firstVisible?.index ?? 0;
  const newAbove = liveArrivals.size() === 0 ? 0 : rows.slice(0, topIndex).filter((r) => liveArrivals.has(r.id)).length;

  const select = useCallback(
    (i: number) => {
      const r = rows[Math.max(0, Math.min(rows.length - 1, i))];
      if (!r) return;
      setSelectedId(r.id);
      liveArrivals.seen(r.id);
      virtual.scrollToIndex(rows.indexOf(r), { align: 'auto' });
    },
    [rows, virtual],
  );
  // A group's leading row opens its event (when it has one); every other row its window's review.
  const open = useCallback(
    (r: QueueRow) => {
      const eventId = r.candidateEvent && roleOf.get(r.id)?.role === 'group' ? eventIds.data?.get(r.candidateEvent.id) : undefined;
      void navigate(eventId !== undefined ? `${paths.event.href}/${eventId}` : `${paths.queueItem.href}/${r.id}${search ? `?${search}` : ''}`);
    },
    [navigate, search, roleOf, eventIds.data],
  );
  const claim = useCallback(
    (r: QueueRow) => {
      action.mutate(
        { action: 'claim', id: r.id, version: r.version },
        {
          // A claim is for the window itself: its review, even from a group's row.
          onSuccess: () => void navigate(`${paths.queueItem.href}/${r.id}${search ? `?${search}` : ''}`),
          onError: (err) => toast.notify({ tone: 'danger', title: `Could not claim item ${r.id}`, body: err.message }),
        },
      );
    },
    [action, navigate, search, toast],
  );

  useEffect(() => {
    const onKey = (e: KeyboardEvent) => {
      if (e.ctrlKey || e.metaKey || e.altKey || isTypingTarget(e.target)) return;
      const current = rows[selectedIndex];
      if (e.key === 'j' || e.key === 'ArrowDown') select(selectedIndex + 1);
      else if (e.key === 'k' || e.key === 'ArrowUp') select(selectedIndex <= 0 ? 0 : selectedIndex - 1);
      else if ((e.key === 'Enter' || e.key === 'o') && current) open(current);
      else if (e.key === 'c' && current) {
        // Only roles that work the queue claim (the policy module; the server refuses the rest too).
        if (mayClaim) claim(current);
        else open(current);
      }
      else if (e.key === 'x' && current?.candidateEvent) toggleGroup(current.candidateEvent.id);
      else if (e.key === 'g') {
        scrollRef.current?.scrollTo({ top: 0 });
        select(0);
      } else if (e.key === '?') setHelp(true);
      else return;
      e.preventDefault();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [rows, selectedIndex, select, open, claim, mayClaim, toggleGroup]);

  const headerGroups = table.getHeaderGroups();
  const items = virtual.getVirtualItems();
  const padTop = items[0]?.start ?? 0;
  const padBottom = virtual.getTotalSize() - (items[items.length - 1]?.end ?? 0);

  return (
    <div className="flex h-full min-h-0 flex-col gap-3">
      <header className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h1 className="text-xl font-semibold">Review queue</h1>
        <p className="text-sm text-ink-muted">
          {total === undefined ? 'Loading…' : `${total.toLocaleString('en')} item${total === 1 ? '' : 's'} in view`} · press <Kbd>?</Kbd> for keys
        </p>
        <Button size="sm" variant="quiet" className="ml-auto" onClick={() => void qc.invalidateQueries({ queryKey: ['queue', 'list'] })}>
          Reload list
        </Button>
      </header>
      <TriageCaution variant="line" />
      <QueueFilterBar filters={filters} setFilters={setFilters} setStateParam={setStateParam} counts={counts} />
      <div className="relative flex min-h-0 flex-1 flex-col">
        <p className="h-6 text-sm" aria-live="polite">
          {newAbove > 0 ? (
            <button
              type="button"
              onClick={() => {
                scrollRef.current?.scrollTo({ top: 0 });
                select(0);
              }}
              className="rounded-full border border-accent bg-surface px-3 py-0.5 font-medium text-accent-ink"
            >
              ↑ {newAbove} just in above <Kbd>G</Kbd>
            </button>
          ) : null}
        </p>
        {list.isPending ? (
          <Loading label="Loading the queue…" />
        ) : list.isError ? (
          <EmptyState title="The queue could not be loaded">{list.error.message}</EmptyState>
        ) : rows.length === 0 ? (
          <EmptyState title="Nothing waiting under these filters">New windows appear here as soon as they are scored.</EmptyState>
        ) : (
          <div ref={scrollRef} onScroll={onScroll} role="region" aria-label="Queue items" tabIndex={0} className="min-h-0 flex-1 overflow-auto rounded-sm border border-line bg-surface">
            <table className="w-full table-fixed border-collapse text-base" aria-rowcount={rows.length + 1}>
              <caption className="sr-only">Queue items, {filters.sort === 'score' ? 'highest score first' : 'oldest first'}. Use J and K to move, Enter to open.</caption>
              <colgroup>
                {table.getVisibleLeafColumns().map((col) => (
                  <col key={col.id} style={columnPx[col.id] ? { width: columnPx[col.id] } : undefined} />
                ))}
              </colgroup>
              <thead className="sticky top-0 z-[1] bg-raised">
                {headerGroups.map((g) => (
                  <tr key={g.id}>
                    {g.headers.map((h) => (
                      <th key={h.id} scope="col" className={h.column.id === 'flag' ? 'h-10 px-2 text-left text-sm leading-tight font-semibold text-ink' : 'h-10 px-2 text-left text-sm leading-tight font-medium text-ink-muted'}>
                        {flexRender(h.column.columnDef.header, h.getContext())}
                      </th>
                    ))}
                  </tr>
                ))}
              </thead>
              <tbody>
                {padTop > 0 ? <tr aria-hidden="true" style={{ height: padTop }} /> : null}
                {items.map((v) => {
                  const row = table.getRowModel().rows[v.index];
                  if (!row) return null;
                  const r = row.original;
                  const selected = r.id === selectedId;
                  return (
                    <tr
                      key={row.id}
                      data-item-id={r.id}
                      data-state={r.state}
                      aria-rowindex={v.index + 2}
                      aria-current={selected ? 'true' : undefined}
                      style={{ height: ROW_PX }}
                      onClick={() => select(v.index)}
                      onDoubleClick={() => open(r)}
                      className={
                        selected
                          ? 'cursor-pointer border-b border-line bg-accent-wash shadow-[inset_3px_0_0_var(--sf-accent)]'
                          : r.state === 'returned'
                            ? 'cursor-pointer border-b border-line shadow-[inset_3px_0_0_var(--sf-state-returned)] hover:bg-raised'
                            : 'cursor-pointer border-b border-line hover:bg-raised'
                      }
                    >
                      {row.getVisibleCells().map((cell) => (
                        <td key={cell.id} className={monoColumns.has(cell.column.id) ? 'overflow-hidden px-2 font-mono text-sm whitespace-nowrap tabular-nums' : 'overflow-hidden px-2 whitespace-nowrap'}>
                          {flexRender(cell.column.columnDef.cell, cell.getContext())}
                        </td>
                      ))}
                    </tr>
                  );
                })}
                {padBottom > 0 ? <tr aria-hidden="true" style={{ height: padBottom }} /> : null}
              </tbody>
            </table>
            {list.isFetchingNextPage ? <p className="p-2 text-sm text-ink-muted">Loading more…</p> : null}
          </div>
        )}
      </div>
      <KeyHelp open={help} onClose={() => setHelp(false)} title="Queue keys" bindings={queueKeysHelp} />
      <GroupDialog eventId={groupOpen} onClose={() => setGroupOpen(null)} search={search} />
    </div>
  );
}

/**
 * The members of one candidate event (GET /api/supervisor/candidate-events/:id), each a link to
 * its review: the queue's way to see a group whose members sit far apart in the list.
 */
function GroupDialog({ eventId, onClose, search }: { eventId: number | null; onClose: () => void; search: string }) {
  const ev = useCandidateEvent(eventId);
  return (
    <Dialog className="w-[min(42rem,calc(100vw-2rem))]" open={eventId !== null} onClose={onClose} title={`Event group #${eventId ?? ''}`} description="Items whose first triggers at several stations fall within the time their distances allow. Not located; no magnitude." actions={<Button onClick={onClose}>Close</Button>}>
      {ev.isPending ? (
        <Loading label="Loading the group…" />
      ) : ev.isError ? (
        <p className="text-sm">The group could not be loaded: {ev.error.message}</p>
      ) : (
        <EventGroupMembers eventId={eventId ?? 0} members={ev.data.members} search={search} onNavigate={onClose} />
      )}
    </Dialog>
  );
}

/** Props of <QueueFilterBar>. */
type FilterBarProps = {
  filters: QueueFilters;
  setFilters: (f: Partial<QueueFilters>) => void;
  setStateParam: (v: string) => void;
  counts: Record<ItemState, number> | undefined;
};

const stateChoice = (f: QueueFilters): string => {
  if (!f.state) return 'all';
  if (f.state.length === workingStates.length && workingStates.every((s) => f.state?.includes(s))) return '';
  return f.state.join(',');
};

/** The filter bar: every filter of GET /api/queue, written to the URL as it changes. */
function QueueFilterBar({ filters, setFilters, setStateParam, counts }: FilterBarProps) {
  const [station, setStation] = useState((filters.station ?? []).join(','));
  useEffect(() => setStation((filters.station ?? []).join(',')), [filters.station]);
  const countOf = (s: ItemState) => (counts ? ` (${counts[s].toLocaleString('en')})` : '');
  const waiting = counts ? workingStates.reduce((n, s) => n + counts[s], 0) : undefined;
  return (
    <form className="flex flex-wrap items-end gap-3" aria-label="Queue filters" onSubmit={(e) => e.preventDefault()}>
      <label className="flex w-72 flex-col gap-1 text-sm font-medium">
        State
        <Select value={stateChoice(filters)} onChange={(e) => setStateParam(e.target.value)} name="state">
          <option value="">Open: new, returned, in review{waiting === undefined ? '' : ` (${waiting})`}</option>
          {itemStates.map((s) => (
            <option key={s} value={s}>
              {s}
              {countOf(s)}
            </option>
          ))}
          <option value="all">Every state</option>
        </Select>
      </label>
      <label className="flex w-44 flex-col gap-1 text-sm font-medium">
        Station
        <Input
          value={station}
          placeholder="any (e.g. KV01,KV04)"
          onChange={(e) => setStation(e.target.value.toUpperCase())}
          onBlur={() => setFilters({ station: station.split(',').map((s) => s.trim()).filter(Boolean) })}
          onKeyDown={(e) => {
            if (e.key === 'Enter') setFilters({ station: station.split(',').map((s) => s.trim()).filter(Boolean) });
          }}
          mono
        />
      </label>
      <label className="flex w-40 flex-col gap-1 text-sm font-medium">
        Flag
        <Select value={filters.flag?.[0] ?? ''} onChange={(e) => setFilters({ flag: e.target.value ? [e.target.value as (typeof flags)[number]] : undefined })}>
          <option value="">Any flag</option>
          {flags.map((f) => (
            <option key={f}>{f}</option>
          ))}
        </Select>
      </label>
      <label className="flex w-44 flex-col gap-1 text-sm font-medium">
        Label
        <Select value={filters.label?.[0] ?? ''} onChange={(e) => setFilters({ label: e.target.value ? [e.target.value as (typeof labelFilterValues)[number]] : undefined })}>
          <option value="">Any label</option>
          <option value="none">No label yet</option>
          <option value="noise">Noise (dismissed)</option>
          {labelFilterValues
            .filter((l) => l !== 'none' && l !== 'noise')
            .map((l) => (
              <option key={l}>{l}</option>
            ))}
        </Select>
      </label>
      <NumberFilter label="Score from" value={filters.scoreMin} onChange={(v) => setFilters({ scoreMin: v })} />
      <NumberFilter label="Score to" value={filters.scoreMax} onChange={(v) => setFilters({ scoreMax: v })} />
      <TimeFilter label="Window from (UTC)" value={filters.from} onChange={(v) => setFilters({ from: v })} />
      <TimeFilter label="Window to (UTC)" value={filters.to} onChange={(v) => setFilters({ to: v })} />
      <label className="flex w-44 flex-col gap-1 text-sm font-medium">
        Order
        <Select value={filters.sort} onChange={(e) => setFilters({ sort: e.target.value === 'age' ? 'age' : 'score' })}>
          <option value="score">Highest score first</option>
          <option value="age">Waiting longest first</option>
        </Select>
      </label>
    </form>
  );
}

function NumberFilter({ label, value, onChange }: { label: string; value: number | undefined; onChange: (v: number | undefined) => void }) {
  const [text, setText] = useState(value === undefined ? '' : String(value));
  useEffect(() => setText(value === undefined ? '' : String(value)), [value]);
  const commit = () => {
    const n = text.trim() === '' ? undefined : Number(text);
    onChange(n !== undefined && Number.isFinite(n) ? n : undefined);
  };
  return (
    <label className="flex w-24 flex-col gap-1 text-sm font-medium">
      {label}
      <Input value={text} inputMode="decimal" onChange={(e) => setText(e.target.value)} onBlur={commit} onKeyDown={(e) => e.key === 'Enter' && commit()} mono />
    </label>
  );
}

function TimeFilter({ label, value, onChange }: { label: string; value: string | undefined; onChange: (v: string | undefined) => void }) {
  // UTC ISO 8601 text like every other time in Seisift (the browser's date-time picker shows the
  // reader's locale); empty leaves this end of the window open.
  return <UtcTimeInput optional label={label} value={value} onChange={onChange} className="font-medium" />;
}
