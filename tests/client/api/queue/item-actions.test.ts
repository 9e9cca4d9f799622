import { QueryClient } from '@tanstack/react-query';
import { describe, expect, it, vi } from 'vitest';
import type { QueueRow } from '@shared/schemas/queue';
import { applyRow } from '@client/api/queue/item-actions';
import { queryKeys } from '@client/lib/query-keys';
import { queueRow } from './queue-row';

/** Item 3 as the queue lists it, with `over` applied. */
const row = (over: Partial<QueueRow>): QueueRow => queueRow(3, 5, over);

describe('a row the server returned, into the cache', () => {
  it('patches an item already in the cache in place when the row says all (a claim)', () => {
    const qc = new QueryClient();
    qc.setQueryData(queryKeys.queue.item(3), { ...row({}), analysis: null });
    applyRow(qc, row({ state: 'in review', version: 2 }), true);
    expect(qc.getQueryData(queryKeys.queue.item(3))).toMatchObject({ state: 'in review', version: 2, analysis: null });
  });

  it('cancels a fetch of the item that left before the claim, so its older state never lands; the screen then gets the claimed item', async () => {
    const qc = new QueryClient();
    // The queue's prefetch of the selected item, on its way when C is pressed: it answers with the
    // item as it was before the claim, after the claim's own answer has come back.
    let answerOld: (v: QueueRow) => void = () => undefined;
    const fetched: string[] = [];
    const queryFn = vi.fn(() => {
      fetched.push(fetched.length === 0 ? 'before the claim' : 'after');
      return fetched.length === 1 ? new Promise<QueueRow>((resolve) => (answerOld = resolve)) : Promise.resolve(row({ state: 'in review', version: 2 }));
    });
    const options = { queryKey: queryKeys.queue.item(3), queryFn, staleTime: Infinity };
    void qc.prefetchQuery(options);
    applyRow(qc, row({ state: 'in review', version: 2 }), true);
    answerOld(row({}));
    await new Promise((r) => setTimeout(r, 20));
    expect(qc.getQueryData(queryKeys.queue.item(3))).toBeUndefined();
    // The review screen, opening the item, gets it as claimed.
    expect(await qc.ensureQueryData(options)).toMatchObject({ state: 'in review', version: 2 });
    expect(fetched).toEqual(['before the claim', 'after']);
  });
});
