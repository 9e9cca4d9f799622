import { useMutation, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { queueRowSchema, type QueueItemDetail, type QueueRow } from '@shared/schemas/queue';
import type { EventLabelInput, NoiseReason } from '@shared/schemas/label';
import { apiRequest, noContent } from '@client/lib/api-client';
import { patchRow } from './live-patch';
import { queryKeys } from '@client/lib/query-keys';

/** One analyst action and what it sends. */
export type ItemActionInput =
  | { action: 'claim' | 'release'; id: number; version: number }
  | { action: 'label'; id: number; version: number; label: EventLabelInput }
  | { action: 'dismiss'; id: number; version: number; noiseReason: NoiseReason; note?: string }
  | { action: 'escalate'; id: number; version: number; reason: string };

/**
 * Sends one action (POST /api/queue/items/:id/<action> with the version the analyst saw).
 * @throws ApiError (client/src/lib/api-client.ts) — 409 names who changed the item and how
 */
export function postItemAction(input: ItemActionInput): Promise<QueueRow> {
  const { action, id, ...body } = input;
  return apiRequest(queueRowSchema, `/api/queue/items/${id}/${action}`, { method: 'POST', body });
}

/** Keeps the analyst's claim alive (POST .../keepalive). */
export function postKeepAlive(id: number): Promise<unknown> {
  return apiRequest(noContent, `/api/queue/items/${id}/keepalive`, { method: 'POST' });
}

/**
 * A mutation for item actions: on success the returned row patches every cached list and the open
 * item at once (the live channel brings the same change to everyone else); on a 409 the item is
 * refetched so the screen shows what changed.
 */
export function useItemAction() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: postItemAction,
    onSuccess: (row, input) => applyRow(qc, row, input.action === 'claim' || input.action === 'release'),
    onError: (_err, input) => {
      void qc.invalidateQueries({ queryKey: queryKeys.queue.item(input.id) });
    },
  });
}

/**
 * Applies a row the server returned to the cache (lists and the item detail). A claim or release
 * changes nothing but what the row carries (state, holder, version), so an open item is patched
 * from it in place; other actions (a label, a dismissal) change more, so the item is refetched.
 * A fetch of the item still on its way may have left before the change (a claim opens the review
 * while its request is on the way, and the queue may be prefetching the item): it is cancelled
 * first, so it cannot bring the older state back for good, and a screen showing the item asks again.
 * @param rowSaysAll whether the row holds the whole change (claim, release)
 */
export function applyRow(qc: QueryClient, row: QueueRow, rowSaysAll = false): void {
  patchRow(qc, row, 'updated');
  const key = queryKeys.queue.item(row.id);
  const open = qc.getQueryData<QueueItemDetail>(key);
  if (rowSaysAll && open) {
    if (open.version < row.version) qc.setQueryData<QueueItemDetail>(key, { ...open, ...row });
    return;
  }
  void qc.cancelQueries({ queryKey: key }).then(() => qc.invalidateQueries({ queryKey: key }));
}
