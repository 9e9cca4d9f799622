import type { DisplayUnits, QueueQuery } from '@shared/schemas/queue';

/**
 * The addresses of the GET requests the first screens make, in one place without dependencies:
 * the query options build their requests from these, and `app/early-requests.ts` starts the very
 * same requests before the app's code has loaded (an answer is taken only by a request for the
 * identical address, so the two can never disagree).
 */

/** The list filters a screen holds (everything of GET /api/queue but the cursor and page size). */
export type QueueFilters = Omit<Partial<QueueQuery>, 'cursor' | 'limit'> & { sort: QueueQuery['sort'] };

/** The states the queue shows when the URL names none: what still waits for an analyst. */
export const workingStates = ['new', 'returned', 'in review'] as const;

/** The filters of a queue address without search params (what `parseFilters` gives for an empty query; tested). */
export function defaultQueueFilters(): QueueFilters {
  return { sort: 'score', state: [...workingStates] };
}

/** Page size of the queue screen's list. */
export const QUEUE_PAGE_SIZE = 500;

/** The analyst's display filter as the traces endpoint takes it (units, band or none, phase). */
export type DisplayRequest = { units: DisplayUnits; band: readonly [number, number] | null; phase: 'causal' | 'zero-phase' };

/** The query string of GET /api/queue for `f` (lists comma-separated; empty values left out). */
export function queueSearch(f: QueueFilters, extra: { cursor?: string; limit?: number } = {}): string {
  const p = new URLSearchParams();
  const list = (k: string, v: readonly string[] | undefined) => {
    if (v && v.length > 0) p.set(k, v.join(','));
  };
  list('state', f.state);
  list('station', f.station);
  list('flag', f.flag);
  list('label', f.label);
  if (f.scoreMin !== undefined) p.set('scoreMin', String(f.scoreMin));
  if (f.scoreMax !== undefined) p.set('scoreMax', String(f.scoreMax));
  if (f.from) p.set('from', f.from);
  if (f.to) p.set('to', f.to);
  p.set('sort', f.sort);
  if (extra.cursor) p.set('cursor', extra.cursor);
  if (extra.limit) p.set('limit', String(extra.limit));
  return p.toString();
}

/** Points per curve of the review screen's whole-window traces. */
export const REVIEW_TRACE_POINTS = 1600;

/** Points per trace of the event screen (min/max buckets): about two per screen pixel of a wide plot. */
export const EVENT_TRACE_POINTS = 2400;

/** GET addresses, by what they answer. */
export const apiUrls = {
  /** Who is signed in, or null (never a 401). */
  session: '/api/auth/session',
  /** Who is signed in (401 when nobody is). */
  me: '/api/auth/me',
  /** One page of the queue under `f`. */
  queuePage: (f: QueueFilters, cursor?: string, limit = QUEUE_PAGE_SIZE) => `/api/queue?${queueSearch(f, { cursor, limit })}`,
  /** The event index (which event holds which group and window). */
  eventIndex: '/api/events?limit=1000',
  /** One queue item's detail. */
  item: (id: number) => `/api/queue/items/${id}`,
  /**
   * An item's display traces over [from, to) s (the whole window when null), about `points` points
   * per curve; with `display`, also the analyst's display trace in those units and band.
   */
  itemTraces: (id: number, from: number | null, to: number | null, points: number, display: DisplayRequest | null = null) => {
    const qs = new URLSearchParams({ points: String(points) });
    if (from !== null) qs.set('from', from.toFixed(3));
    if (to !== null) qs.set('to', to.toFixed(3));
    if (display) {
      qs.set('units', display.units);
      qs.set('phase', display.phase);
      if (display.band) {
        qs.set('fmin', String(display.band[0]));
        qs.set('fmax', String(display.band[1]));
      }
    }
    return `/api/queue/items/${id}/traces?${qs.toString()}`;
  },
  /** The windows most like item `id`'s. */
  itemMatches: (id: number) => `/api/similarity/items/${id}/matches`,
  /** One event. */
  event: (id: number) => `/api/events/${id}`,
  /** Every member window's traces of event `id`. */
  eventTraces: (id: number, points: number) => `/api/events/${id}/traces?points=${points}`,
  /** Stations, distances and predicted arrivals of event `id` from its preferred origin. */
  eventGeometry: (id: number) => `/api/events/${id}/geometry`,
} as const;
