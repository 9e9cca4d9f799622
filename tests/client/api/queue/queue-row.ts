import type { QueueRow } from '@shared/schemas/queue';

/**
 * A queue row as GET /api/queue lists it, for the cache tests (invented test input, not a check
 * value): waiting, never claimed, version 1, its creation second following its id.
 */
export const queueRow = (id: number, score: number, over: Partial<QueueRow> = {}): QueueRow => ({
  id,
  state: 'new',
  score,
  flag: 'needs eyes',
  reasons: [],
  station: 'XX.KV01',
  stationId: 1,
  windowStart: '2026-03-14T09:00:00.000Z',
  createdAt: `2026-03-14T09:00:${String(id % 60).padStart(2, '0')}.000Z`,
  updatedAt: '2026-03-14T09:00:00.000Z',
  version: 1,
  claimedBy: null,
  claimedAt: null,
  updatedBy: null,
  labelType: null,
  candidateEvent: null,
  ...over,
});
