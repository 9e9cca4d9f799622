import { queueQuerySchema } from '@shared/schemas/queue';
import { workingStates, type QueueFilters } from '@client/api/urls';

/**
 * Filters from search params (the URL of the queue screen, also read by the review screen for its
 * next/previous order). Params are those of GET /api/queue; `state=all` lifts the state filter and
 * no `state` means the working states. Invalid params are ignored one by one (the rest still apply).
 */
export function parseFilters(p: URLSearchParams): QueueFilters {
  const out: QueueFilters = { sort: 'score' };
  const one = <K extends keyof QueueFilters>(key: K) => {
    const raw = p.get(key);
    if (raw === null || raw === '') return;
    const r = queueQuerySchema.safeParse({ [key]: raw });
    if (r.success) out[key] = r.data[key];
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
