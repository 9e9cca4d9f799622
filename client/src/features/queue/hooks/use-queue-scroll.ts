import { useVirtualizer } from '@tanstack/react-virtual';
import { useCallback, useLayoutEffect, useRef } from 'react';
import type { QueueRow } from '@shared/schemas/queue';
import { liveArrivals } from '@client/api/queue/live-patch';

/** Height of one queue row, px (fixed, so the virtualiser can place rows without measuring; one line, so 20+ rows fit 1440×900). */
export const QUEUE_ROW_PX = 28;

/** The list's paging, as the infinite query gives it. */
type Paging = { hasNextPage: boolean; isFetchingNextPage: boolean; fetchNextPage: () => Promise<unknown> };

/**
 * Scrolling the queue: the virtualiser over `rows`, the analyst's place kept when rows arrive above
 * it, the next page fetched near the end, and how many live arrivals sit above the first visible row.
 */
export function useQueueScroll(rows: QueueRow[], list: Paging) {
  const scrollRef = useRef<HTMLDivElement>(null);
  const virtual = useVirtualizer({ count: rows.length, getScrollElement: () => scrollRef.current, estimateSize: () => QUEUE_ROW_PX, overscan: 12 });

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
        const want = idx * QUEUE_ROW_PX - a.offset;
        if (Math.abs(want - el.scrollTop) >= 1) el.scrollTop = want;
      }
    }
  }, [rows]);
  const onScroll = useCallback(() => {
    const el = scrollRef.current;
    if (!el) return;
    const idx = Math.min(rows.length - 1, Math.floor(el.scrollTop / QUEUE_ROW_PX));
    const r = rows[idx];
    anchor.current = r ? { id: r.id, offset: idx * QUEUE_ROW_PX - el.scrollTop } : null;
    if (list.hasNextPage && !list.isFetchingNextPage && el.scrollTop + el.clientHeight > rows.length * QUEUE_ROW_PX - 40 * QUEUE_ROW_PX) void list.fetchNextPage();
  }, [rows, list]);

  const topIndex = firstVisible?.index ?? 0;
  const newAbove = liveArrivals.size() === 0 ? 0 : rows.slice(0, topIndex).filter((r) => liveArrivals.has(r.id)).length;
  return { scrollRef, virtual, onScroll, newAbove };
}
