import { useQueryClient } from '@tanstack/react-query';
import { useCallback, useEffect, useMemo, useState, useSyncExternalStore } from 'react';
import { useNavigate } from 'react-router';
import { can } from '@shared/auth/policies';
import { roleSchema, type Role } from '@shared/auth/roles';
import type { QueueRow } from '@shared/schemas/queue';
import { useEventIndex } from '@client/api/events/event-index';
import { useMe, useQueueList } from '@client/api/queue/get-queue';
import { applyRow, postItemAction } from '@client/api/queue/item-actions';
import { liveArrivals } from '@client/api/queue/live-patch';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { isTypingTarget, KeyHelp } from '@client/components/ui/key-help';
import { Kbd } from '@client/components/ui/kbd';
import { Loading } from '@client/components/ui/skeleton';
import { useToast } from '@client/components/ui/toast';
import { TriageCaution } from '@client/components/ui/triage-caution';
import { paths } from '@client/config/paths';
import { usePrefetchQueueItem } from '@client/features/queue/hooks/use-prefetch-item';
import { useQueueFilters } from '@client/features/queue/hooks/use-queue-filters';
import { useQueueScroll } from '@client/features/queue/hooks/use-queue-scroll';
import { distinguishingReasons } from '@client/features/queue/lib/distinguishing-reason';
import { collapseEventGroups, type GroupedRow } from '@client/features/queue/lib/event-groups';
import { queryKeys } from '@client/lib/query-keys';
import { whenOpened } from '@client/lib/screen-opening';
import { useNow } from './age';
import { queueColumns } from './queue-columns';
import { QueueFilterBar } from './queue-filter-bar';
import { GroupDialog } from './queue-group-dialog';
import { queueKeysHelp } from './queue-keys';
import { QueueTable } from './queue-table';
import { formatCount } from '@client/lib/text-order';

/**
 * The live review queue: filters in the URL, counts per state, a virtualised table that stays
 * smooth at 10 000 rows, rows arriving live without moving the analyst's place ("N new above"),
 * and keyboard-first work (J/K, Enter, C, X, ?). An event group is one row (where its highest-ranked
 * loaded member sits) that opens its event; its other member windows show beneath it on demand (X or
 * the ▸ button), and J/K walk over them like any row.
 */
export function QueueScreen() {
  const { filters, setFilters, setStateParam, search } = useQueueFilters();
  const list = useQueueList(filters);
  const me = useMe();
  const mayClaim = can(me ? { roles: me.roles.filter((r): r is Role => roleSchema.safeParse(r).success), stationIds: [] } : null, 'queue.claim');
  const navigate = useNavigate();
  const toast = useToast();
  const qc = useQueryClient();
  const now = useNow();
  const loadedRows = useMemo(() => list.data?.pages.flatMap((p) => p.items) ?? [], [list.data]);
  const [expanded, setExpanded] = useState<ReadonlySet<number>>(() => new Set());
  const grouped = useMemo(() => collapseEventGroups(loadedRows, expanded), [loadedRows, expanded]);
  const rows = useMemo(() => grouped.map((g) => g.row), [grouped]);
  const placeOf = useMemo(() => new Map<number, GroupedRow<QueueRow>>(grouped.map((g) => [g.row.id, g])), [grouped]);
  const shownReason = useMemo(() => distinguishingReasons(loadedRows), [loadedRows]);
  const mayViewEvents = can(me ? { roles: me.roles.filter((r): r is Role => roleSchema.safeParse(r).success), stationIds: [] } : null, 'event.view');
  const eventIds = useEventIndex(mayViewEvents && loadedRows.some((r) => r.candidateEvent !== null));
  const eventMap = eventIds.data?.byGroup;
  const toggleGroup = useCallback(
    (g: number) =>
      setExpanded((s) => {
        const next = new Set(s);
        if (next.has(g)) next.delete(g);
        else next.add(g);
        return next;
      }),
    [],
  );
  const counts = list.data?.pages[0]?.counts;
  const total = list.data?.pages[0]?.total;
  const [selectedId, setSelectedId] = useState<number | null>(null);
  const [help, setHelp] = useState(false);
  const [groupOpen, setGroupOpen] = useState<number | null>(null);
  const arrivals = useSyncExternalStore(liveArrivals.subscribe, liveArrivals.version);
  const { scrollRef, virtual, onScroll, newAbove } = useQueueScroll(rows, list);

  const selectedIndex = selectedId === null ? -1 : rows.findIndex((r) => r.id === selectedId);
  // The selected window's review, fetched while the analyst reads its row: C or Enter draws it at once.
  const selectedOpensItem = selectedId !== null && !(placeOf.get(selectedId)?.role === 'group' && eventMap?.has(rows[selectedIndex]?.candidateEvent?.id ?? -1));
  usePrefetchQueueItem(selectedOpensItem ? (selectedId ?? undefined) : undefined, 300);
  const meId = me?.id;
  const openEvent = useCallback((eventId: number) => void navigate(`${paths.event.href}/${eventId}`), [navigate]);
  const columns = useMemo(
    () => queueColumns({ now, meId, placeOf, eventIdOf: (g) => eventMap?.get(g), expanded, onToggle: toggleGroup, onOpenEvent: openEvent, onGroup: setGroupOpen, shownReason }),
    // `arrivals` re-renders the marker column when the set changes.
    // eslint-disable-next-line react-hooks/exhaustive-deps
    [now, meId, arrivals, placeOf, eventMap, expanded, toggleGroup, openEvent, shownReason],
  );

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
  const toTop = useCallback(() => {
    scrollRef.current?.scrollTo({ top: 0 });
    select(0);
  }, [scrollRef, select]);
  const openItem = useCallback((r: QueueRow) => void navigate(`${paths.queueItem.href}/${r.id}${search ? `?${search}` : ''}`), [navigate, search]);
  // An event group's row opens its event (once it has one); every other row its window's review.
  const open = useCallback(
    (r: QueueRow) => {
      const eventId = r.candidateEvent && placeOf.get(r.id)?.role === 'group' ? eventMap?.get(r.candidateEvent.id) : undefined;
      if (eventId !== undefined) openEvent(eventId);
      else openItem(r);
    },
    [placeOf, eventMap, openEvent, openItem],
  );
  // A claim is for the window itself: its review, even from an event group's row. Not a mutation
  // hook: its pending state would draw the whole table once more before the review opens. A row
  // that waits (new, returned) opens at once, while the claim is on its way (the review draws from
  // the prefetched item and shows the claim when its row comes back); should the server refuse it
  // (somebody claimed it a moment before), the analyst is taken back to the queue, told why. Any
  // other row opens only once the server has granted the claim.
  const claim = useCallback(
    (r: QueueRow) => {
      const opensAtOnce = r.state === 'new' || r.state === 'returned';
      // The answer (and its live echo) wait until the review has drawn (the router holds them: app/router.tsx).
      if (opensAtOnce) openItem(r);
      postItemAction({ action: 'claim', id: r.id, version: r.version }).then(
        (row) => {
          if (!opensAtOnce) openItem(r);
          whenOpened(() => applyRow(qc, row, true), true);
        },
        (err: unknown) => {
          // Back to the queue, in place of the review, unless the analyst has already moved on.
          if (opensAtOnce && window.location.pathname === `${paths.queueItem.href}/${r.id}`) void navigate(`${paths.queue.href}${search ? `?${search}` : ''}`, { replace: true });
          void qc.invalidateQueries({ queryKey: queryKeys.queue.item(r.id) });
          toast.notify({ tone: 'danger', title: `Could not claim item ${r.id}`, body: err instanceof Error ? err.message : String(err) });
        },
      );
    },
    [qc, openItem, toast, navigate, search],
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
      } else if (e.key === 'x' && current?.candidateEvent) {
        const g = current.candidateEvent.id;
        // Hiding the members from one of them: the selection goes to the event's row.
        if (placeOf.get(current.id)?.role === 'member') setSelectedId(rows.find((r) => r.candidateEvent?.id === g && placeOf.get(r.id)?.role === 'group')?.id ?? null);
        toggleGroup(g);
      } else if (e.key === 'g') toTop();
      else if (e.key === '?') setHelp(true);
      else return;
      e.preventDefault();
    };
    window.addEventListener('keydown', onKey);
    return () => window.removeEventListener('keydown', onKey);
  }, [rows, selectedIndex, select, open, claim, mayClaim, toTop, toggleGroup, placeOf]);

  return (
    <div className="flex h-full min-h-0 flex-col gap-2">
      <header className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h1 className="text-xl font-semibold">Review queue</h1>
        <p className="text-sm text-ink-muted">
          {total === undefined ? 'Loading…' : `${formatCount(total)} item${total === 1 ? '' : 's'} in view`} · press <Kbd>?</Kbd> for keys
        </p>
        {/* Live arrivals above the analyst's place: in the header line, so the table keeps the height. */}
        <p className="text-sm" aria-live="polite">
          {newAbove > 0 ? (
            <button type="button" onClick={toTop} className="rounded-full border border-accent bg-surface px-3 py-0.5 font-medium text-accent-ink">
              ↑ {newAbove} just in above <Kbd>G</Kbd>
            </button>
          ) : null}
        </p>
        <Button size="sm" variant="quiet" className="ml-auto" onClick={() => void qc.invalidateQueries({ queryKey: queryKeys.queue.lists })}>
          Reload list
        </Button>
      </header>
      <TriageCaution variant="line" />
      <QueueFilterBar filters={filters} setFilters={setFilters} setStateParam={setStateParam} counts={counts} />
      <div className="relative flex min-h-0 flex-1 flex-col">
        {list.isPending ? (
          <Loading label="Loading the queue…" />
        ) : list.isError ? (
          <EmptyState title="The queue could not be loaded">{list.error.message}</EmptyState>
        ) : rows.length === 0 ? (
          <EmptyState title="Nothing waiting under these filters">New windows appear here as soon as they are scored.</EmptyState>
        ) : (
          <QueueTable
            rows={rows}
            placeOf={placeOf}
            columns={columns}
            selectedId={selectedId}
            sort={filters.sort}
            virtual={virtual}
            scrollRef={scrollRef}
            onScroll={onScroll}
            onSelect={select}
            onOpen={open}
            fetchingMore={list.isFetchingNextPage}
          />
        )}
      </div>
      <KeyHelp open={help} onClose={() => setHelp(false)} title="Queue keys" bindings={queueKeysHelp} />
      <GroupDialog eventId={groupOpen} onClose={() => setGroupOpen(null)} search={search} />
    </div>
  );
}
