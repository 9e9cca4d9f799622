import type { QueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import type { ChangeMessage } from '@shared/realtime';
import { compareQueueRows, queueRowMatches, queueRowSchema, type QueueRow } from '@shared/schemas/queue';
import type { QueueFilters } from '@client/api/urls';
import { getQueuePage, type QueueListData } from './get-queue';
import { queryKeys } from '@client/lib/query-keys';

/**
 * Feeding live changes into the TanStack Query cache:
 * - a change whose summary is a queue row patches that row in every cached list in place (its
 *   place in the list does not move, so the analyst's place is kept), or, for a row not yet listed
 *   that matches a list's filters, inserts it where the list's order puts it — but only inside the
 *   part already loaded (rows further down arrive with later pages);
 * - the counts per state of each list are refreshed with one small request per burst of changes;
 * - an open item whose version moved on is refetched;
 * - a change without a usable summary invalidates the lists;
 * - an event change refreshes which group opens which event, and an open event that is behind.
 */

type Listener = () => void;
const arrived = new Set<number>();
const listeners = new Set<Listener>();
let arrivedVersion = 0;

/** Ids that arrived over the live channel in this session and the analyst has not looked at yet. */
export const liveArrivals = {
  has: (id: number) => arrived.has(id),
  size: () => arrived.size,
  /** Marks an item as seen (selected or opened). */
  seen(id: number) {
    if (arrived.delete(id)) bump();
  },
  add(id: number) {
    arrived.add(id);
    bump();
  },
  // An arrow function, so useSyncExternalStore can take it unbound.
  subscribe: (fn: Listener) => {
    listeners.add(fn);
    return () => listeners.delete(fn);
  },
  version: () => arrivedVersion,
};

function bump() {
  arrivedVersion++;
  for (const fn of listeners) fn();
}

const filtersOf = (key: readonly unknown[]): QueueFilters | null => {
  const f = key[2];
  return typeof f === 'object' && f !== null && 'sort' in f ? (f as QueueFilters) : null;
};

let countTimer: ReturnType<typeof setTimeout> | null = null;

/** Refreshes the counts per state of every cached list (one request per list), debounced by 300 ms. */
export function scheduleCountRefresh(qc: QueryClient): void {
  if (countTimer) return;
  countTimer = setTimeout(() => {
    countTimer = null;
    for (const [key] of qc.getQueriesData<QueueListData>({ queryKey: queryKeys.queue.lists })) {
      const f = filtersOf(key);
      if (!f) continue;
      getQueuePage(f, undefined, 1)
        .then((page) =>
          qc.setQueryData<QueueListData>(key, (old) =>
            old ? { ...old, pages: old.pages.map((p) => ({ ...p, counts: page.counts, total: page.total })) } : old,
          ),
        )
        .catch(() => undefined);
    }
  }, 300);
}

/**
 * Puts one row into every cached list (see the module comment).
 * @param kind 'created' rows are remembered as new arrivals (marked on the queue screen)
 */
export function patchRow(qc: QueryClient, row: QueueRow, kind: ChangeMessage['kind']): void {
  for (const [key, data] of qc.getQueriesData<QueueListData>({ queryKey: queryKeys.queue.lists })) {
    const f = filtersOf(key);
    if (!f || !data) continue;
    let found = false;
    let changed = false;
    const pages = data.pages.map((p) => {
      const i = p.items.findIndex((r) => r.id === row.id);
      if (i < 0) return p;
      found = true;
      const current = p.items[i];
      if (current && current.version >= row.version) return p;
      changed = true;
      const items = p.items.slice();
      items[i] = row;
      return { ...p, items };
    });
    if (!found && kind !== 'deleted' && queueRowMatches(row, f)) {
      const cmp = compareQueueRows(f.sort);
      const lastPage = pages[pages.length - 1];
      const lastRow = lastPage?.items[lastPage.items.length - 1];
      const withinLoaded = !lastPage?.nextCursor || (lastRow !== undefined && cmp(row, lastRow) < 0);
      if (withinLoaded) {
        let placed = false;
        for (let k = 0; k < pages.length && !placed; k++) {
          const p = pages[k];
          if (!p) continue;
          const at = p.items.findIndex((r) => cmp(row, r) < 0);
          const isLast = k === pages.length - 1;
          if (at >= 0 || isLast) {
            const items = p.items.slice();
            items.splice(at >= 0 ? at : items.length, 0, row);
            pages[k] = { ...p, items };
            placed = true;
            changed = true;
          }
        }
      }
    }
    // A row the list already holds at this version (the live echo of one's own change, after its
    // answer was applied) leaves the list as it is: no new data, so no screen draws again for it.
    if (changed) qc.setQueryData<QueueListData>(key, { ...data, pages });
  }
  if (kind === 'created') liveArrivals.add(row.id);
}

/** Summary of a candidate_event change (server/features/events/candidate-events.ts regroupAround). */
const groupSummarySchema = lazySchema(() => z.object({ itemIds: z.array(z.number().int()), stationCount: z.number().int() }));

/**
 * Marks the members of candidate event `eventId` in every cached list (their rows' versions do not
 * move: grouping is not an item change) and refetches open details of those items, so the group
 * marker and panel appear as soon as the group forms.
 */
export function patchGroup(qc: QueryClient, eventId: number, group: z.infer<typeof groupSummarySchema>): void {
  const members = new Set(group.itemIds);
  const mark = { id: eventId, stationCount: group.stationCount };
  for (const [key, data] of qc.getQueriesData<QueueListData>({ queryKey: queryKeys.queue.lists })) {
    if (!data) continue;
    let changed = false;
    const pages = data.pages.map((p) => {
      if (!p.items.some((r) => members.has(r.id))) return p;
      changed = true;
      return { ...p, items: p.items.map((r) => (members.has(r.id) ? { ...r, candidateEvent: mark } : r)) };
    });
    if (changed) qc.setQueryData<QueueListData>(key, { ...data, pages });
  }
  for (const id of members) if (qc.getQueryData(queryKeys.queue.item(id))) void qc.invalidateQueries({ queryKey: queryKeys.queue.item(id) });
}

/** Applies a batch of live changes to the cache. */
export function applyChanges(qc: QueryClient, changes: readonly ChangeMessage[]): void {
  let needLists = false;
  for (const c of changes) {
    if (c.resource === 'candidate_event') {
      const g = groupSummarySchema.safeParse(c.summary);
      if (c.kind !== 'deleted' && g.success) patchGroup(qc, c.id, g.data);
      void qc.invalidateQueries({ queryKey: queryKeys.queue.candidateEvent(c.id) });
      continue;
    }
    if (c.resource === 'event') {
      // A new or merged event changes which group opens which event; an open event screen
      // that is behind (another analyst moved a pick or relocated) is refetched.
      if (c.kind !== 'updated') void qc.invalidateQueries({ queryKey: queryKeys.events.index });
      const shown = qc.getQueryData<{ event: { version: number } }>(queryKeys.events.detail(c.id));
      if (shown && (c.kind === 'deleted' || shown.event.version < c.version)) void qc.invalidateQueries({ queryKey: queryKeys.events.detail(c.id) });
      continue;
    }
    if (c.resource !== 'item') continue;
    const row = queueRowSchema.safeParse(c.summary);
    if (row.success) patchRow(qc, row.data, c.kind);
    else {
      needLists = true;
      if (c.kind === 'created') liveArrivals.add(c.id);
    }
    const open = qc.getQueryData<{ version: number }>(queryKeys.queue.item(c.id));
    if (open && open.version < c.version) void qc.invalidateQueries({ queryKey: queryKeys.queue.item(c.id) });
  }
  if (needLists) scheduleListRefetch(qc);
  scheduleCountRefresh(qc);
}

let listTimer: ReturnType<typeof setTimeout> | null = null;

/** Refetches the lists once per burst of changes that could not be patched (500 ms). */
function scheduleListRefetch(qc: QueryClient): void {
  if (listTimer) return;
  listTimer = setTimeout(() => {
    listTimer = null;
    void qc.invalidateQueries({ queryKey: queryKeys.queue.lists });
  }, 500);
}

/** The server could not replay what was missed: every queue query is refetched. */
export function refetchAll(qc: QueryClient): void {
  void qc.invalidateQueries({ queryKey: queryKeys.queue.all });
  void qc.invalidateQueries({ queryKey: queryKeys.events.all });
}
