import { QueryClient } from '@tanstack/react-query';
import { describe, expect, it } from 'vitest';
import type { QueuePage, QueueRow } from '@shared/schemas/queue';
import type { QueueFilters } from '@client/api/urls';
import type { QueueListData } from '@client/api/queue/get-queue';
import { queryKeys } from '@client/lib/query-keys';
import { applyChanges, liveArrivals, patchRow } from '@client/api/queue/live-patch';
import { queueRow as row } from './queue-row';

const page = (items: QueueRow[], nextCursor: string | null): QueuePage => ({
  items,
  nextCursor,
  counts: { new: items.length, 'in review': 0, labelled: 0, dismissed: 0, escalated: 0, confirmed: 0, returned: 0 },
  total: items.length,
});
const ids = (qc: QueryClient, f: QueueFilters) => qc.getQueryData<QueueListData>(queryKeys.queue.list(f))?.pages.flatMap((p) => p.items.map((r) => r.id));

describe('live changes into the query cache', () => {
  const f: QueueFilters = { sort: 'score', state: ['new', 'in review'] };
  const seed = (next: string | null) => {
    const qc = new QueryClient();
    qc.setQueryData<QueueListData>(queryKeys.queue.list(f), { pages: [page([row(1, 9), row(2, 7)], 'c1'), page([row(3, 5), row(4, 3)], next)], pageParams: [undefined, 'c1'] });
    return qc;
  };

  it('inserts a new row where the score order puts it, and marks it as a new arrival', () => {
    const qc = seed(null);
    patchRow(qc, row(10, 6), 'created');
    expect(ids(qc, f)).toEqual([1, 2, 10, 3, 4]);
    expect(liveArrivals.has(10)).toBe(true);
    liveArrivals.seen(10);
    expect(liveArrivals.has(10)).toBe(false);
  });

  it('leaves a row that sorts past the loaded pages for a later page; skips rows outside the filters', () => {
    const qc = seed('c2');
    patchRow(qc, row(11, 1), 'created');
    patchRow(qc, row(12, 8, { station: 'XX.KV02', state: 'labelled' }), 'created');
    expect(ids(qc, f)).toEqual([1, 2, 3, 4]);
  });

  it('updates a listed row in place (its place is kept) and ignores an older version', () => {
    const qc = seed(null);
    patchRow(qc, row(2, 7, { state: 'in review', version: 2, claimedBy: { id: 'u1', displayName: 'Ana' } }), 'updated');
    patchRow(qc, row(2, 7, { version: 1 }), 'updated');
    const data = qc.getQueryData<QueueListData>(queryKeys.queue.list(f));
    expect(data?.pages[0]?.items[1]).toMatchObject({ id: 2, state: 'in review', version: 2, claimedBy: { displayName: 'Ana' } });
    expect(ids(qc, f)).toEqual([1, 2, 3, 4]);
  });

  it('leaves the list as it is (no new data, no redraw) for a row it already holds at that version: the echo of a change of its own', () => {
    const qc = seed(null);
    const claimed = row(2, 7, { state: 'in review', version: 2, claimedBy: { id: 'u1', displayName: 'Ana' } });
    patchRow(qc, claimed, 'updated');
    const before = qc.getQueryData<QueueListData>(queryKeys.queue.list(f));
    let notified = 0;
    const unsubscribe = qc.getQueryCache().subscribe((e) => {
      if (e.type === 'updated') notified += 1;
    });
    patchRow(qc, claimed, 'updated');
    patchRow(qc, row(2, 7, { version: 1 }), 'updated');
    unsubscribe();
    expect(qc.getQueryData<QueueListData>(queryKeys.queue.list(f))).toBe(before);
    expect(notified).toBe(0);
  });

  it('applyChanges patches from summaries and marks an open item stale when its version moves on', async () => {
    const qc = seed(null);
    qc.setQueryData(queryKeys.queue.item(3), { version: 1 });
    applyChanges(qc, [{ seq: 5, resource: 'item', id: 3, kind: 'updated', version: 2, summary: row(3, 5, { version: 2, state: 'in review' }), at: '2026-03-14T09:00:00.000Z' }]);
    expect(qc.getQueryState(queryKeys.queue.item(3))?.isInvalidated).toBe(true);
    expect(qc.getQueryData<QueueListData>(queryKeys.queue.list(f))?.pages[1]?.items[0]?.state).toBe('in review');
  });

  it('a candidate_event change marks its members in place, order kept, without a version step', () => {
    const qc = seed(null);
    applyChanges(qc, [
      { seq: 9, resource: 'candidate_event', id: 12, kind: 'created', version: 1, summary: { anchorItemId: 2, itemIds: [2, 4], stationCount: 2, firstArrival: '2026-03-14T09:00:20.000Z' }, at: '2026-03-14T09:00:30.000Z' },
    ]);
    const rows = qc.getQueryData<QueueListData>(queryKeys.queue.list(f))?.pages.flatMap((p) => p.items) ?? [];
    expect(rows.map((r) => r.id)).toEqual([1, 2, 3, 4]);
    expect(rows.map((r) => r.candidateEvent?.id ?? null)).toEqual([null, 12, null, 12]);
    expect(rows.find((r) => r.id === 4)?.candidateEvent?.stationCount).toBe(2);
    expect(rows.every((r) => r.version === 1)).toBe(true);
  });

  it('an event change refreshes the group → event map when events come or go, and an open event that is behind', () => {
    const qc = new QueryClient();
    qc.setQueryData(queryKeys.events.index, new Map([[12, 4]]));
    qc.setQueryData(queryKeys.events.detail(4), { event: { version: 3 } });
    qc.setQueryData(queryKeys.events.detail(5), { event: { version: 7 } });
    // Another analyst relocated event 4 (version 3 → 4); event 5 is up to date.
    applyChanges(qc, [
      { seq: 20, resource: 'event', id: 4, kind: 'updated', version: 4, summary: {}, at: '2026-03-14T09:01:00.000Z' },
      { seq: 21, resource: 'event', id: 5, kind: 'updated', version: 7, summary: {}, at: '2026-03-14T09:01:00.000Z' },
    ]);
    expect(qc.getQueryState(queryKeys.events.detail(4))?.isInvalidated).toBe(true);
    expect(qc.getQueryState(queryKeys.events.detail(5))?.isInvalidated).toBe(false);
    expect(qc.getQueryState(queryKeys.events.index)?.isInvalidated).toBe(false);
    // A new event (built from a group, or one merged away) changes the map.
    applyChanges(qc, [{ seq: 22, resource: 'event', id: 6, kind: 'created', version: 1, summary: {}, at: '2026-03-14T09:02:00.000Z' }]);
    expect(qc.getQueryState(queryKeys.events.index)?.isInvalidated).toBe(true);
  });
});
