import { useCallback, useMemo } from 'react';
import { useSearchParams } from 'react-router';
import { queueQuerySchema } from '../../../../../shared/schemas/queue';
import type { QueueFilters } from '../api/get-queue';

/** The states the queue shows when the URL names none: what still waits for an analyst. */
export const workingStates = ['new', 'returned', 'in review'] as const;

/**
 * The queue filters, kept in the URL's search params (so a view can be bookmarked, shared and
 * survives a reload). Params are those of GET /api/queue; `state=all` lifts the state filter.
 * Invalid params are ignored one by one (the rest still apply).
 */
export function useQueueFilters(): {
  filters: QueueFilters;
  setFilters: (next: Partial<QueueFilters>) => void;
  /** Sets the `state` param as written: '' (the working states), 'all', or a comma list. */
  setStateParam: (value: string) => void;
  search: string;
} {
  const [params, setParams] = useSearchParams();
  const search = params.toString();
  const filters = useMemo<QueueFilters>(() => parseFilters(new URLSearchParams(search)), [search]);
  const setFilters = useCallback(
    (next: Partial<QueueFilters>) => {
      setParams(
        (prev) => {
          const p = new URLSearchParams(prev);
          for (const [k, v] of Object.entries(next)) {
            if (v === undefined || v === null || v === '' || (Array.isArray(v) && v.length === 0)) p.delete(k);
            else p.set(k, Array.isArray(v) ? v.join(',') : String(v));
          }
          return p;
        },
        { replace: true },
      );
    },
    [setParams],
  );
  const setStateParam = useCallback(
    (value: string) =>
      setParams(
        (prev) => {
          const p = new URLSearchParams(prev);
          if (value === '') p.delete('state');
          else p.set('state', value);
          return p;
        },
        { replace: true },
      ),
    [setParams],
  );
  return { filters, setFilters, setStateParam, search };
}

/** Filters from search params (see useQueueFilters). */
export function parseFilters(p: URLSearchParams): QueueFilters {
  const out: QueueFilters = { sort: 'score' };
  const one = <K extends keyof QueueFilters>(key: K) => {
    const raw = p.get(key);
    if (raw === null || raw === '') return;
    const r = queueQuerySchema.safeParse({ [key]: raw });
    if (r.success) out[key] = r.data[key] as QueueFilters[K];
  };
  (['station', 'flag', 'label', 'scoreMin', 'scoreMax', 'from', 'to', 'sort'] as const).forEach(one);
  const state = p.get('state');
  if (state === 'all') out.state = undefined;
  else if (state === null || state === '') out.state = [...workingStates];
  else {
    const r = queueQuerySchema.safeParse({ state });
    out.state = r.success ? r.data.state : [...workingStates];
  }
  return out;
}
