import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { eventDetailSchema, type EventDetail } from '@shared/schemas/events';
import { eventGeometrySchema } from '@shared/schemas/event-geometry';
import { eventTracesSchema } from '@shared/schemas/event-traces';
import { useEffect, useRef } from 'react';
import { apiUrls } from '@client/api/urls';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/** Query keys of the event screen (one factory; every event key starts with `['events']`). */
export const eventKeys = queryKeys.events;

/** Query options of every member window's pre-processed traces in one request (GET /api/events/:id/traces). */
export function eventTracesOptions(id: number, points: number) {
  return queryOptions({
    queryKey: eventKeys.traces(id, points),
    queryFn: ({ signal }) => apiRequest(eventTracesSchema, apiUrls.eventTraces(id, points), { signal }),
    staleTime: Infinity,
    placeholderData: keepPreviousData,
  });
}

/**
 * The event's traces, kept while the members stay the same: picks and relocations never fetch the
 * waveforms again. The request does not wait for the event itself (the screen starts it beside the
 * event's request, `usePrefetchEventTraces`); once `members` (the active members' item ids, from
 * the event) differ from the members the traces came with, they are fetched again.
 * @param members the active members' item ids, or null while the event is loading
 */
export function useEventTraces(id: number, members: readonly number[] | null, points: number) {
  const qc = useQueryClient();
  const q = useQuery(eventTracesOptions(id, points));
  const have = q.data ? q.data.members.map((m) => m.itemId).sort((a, b) => a - b).join(',') : null;
  const want = members ? [...members].sort((a, b) => a - b).join(',') : null;
  // Once per change of the members (never a loop, should the two lists never agree).
  const asked = useRef<string | null>(null);
  useEffect(() => {
    if (have === null || want === null || have === want || q.isFetching || asked.current === want) return;
    asked.current = want;
    void qc.invalidateQueries({ queryKey: eventKeys.traces(id, points) });
  }, [qc, id, points, have, want, q.isFetching]);
  return q;
}

/** Starts the event's traces request at once (before the event's own answer names its members). */
export function usePrefetchEventTraces(id: number, points: number): void {
  const qc = useQueryClient();
  useEffect(() => {
    void qc.prefetchQuery(eventTracesOptions(id, points));
  }, [qc, id, points]);
}

/** Query options of one event (origin, arrivals, picks, amplitudes, magnitudes). */
export function eventOptions(id: number) {
  return queryOptions({ queryKey: eventKeys.detail(id), queryFn: ({ signal }) => apiRequest(eventDetailSchema, apiUrls.event(id), { signal }) });
}

/** One event. */
export function useEvent(id: number) {
  return useQuery(eventOptions(id));
}

/** Query options of the event's geometry as seen from origin `originId` (the preferred one when asked). */
export function eventGeometryOptions(id: number, originId: number | null) {
  return queryOptions({ queryKey: eventKeys.geometry(id, originId), queryFn: ({ signal }) => apiRequest(eventGeometrySchema, apiUrls.eventGeometry(id), { signal }) });
}

/** The stations of the event's network with distances and predicted arrivals from its preferred origin. */
export function useEventGeometry(id: number, originId: number | null) {
  return useQuery({ ...eventGeometryOptions(id, originId), placeholderData: (prev) => prev });
}

/** An analyst's pick as the screen sends it. */
export type PickInput = {
  streamId: string;
  phase: 'P' | 'S';
  /** ISO 8601 UTC with up to microseconds. */
  time: string;
  uncertaintyS: number;
  onset: 'impulsive' | 'emergent' | 'questionable';
  polarity: 'positive' | 'negative' | 'undecidable';
};

/** Every change the event screen makes; each answers with the event located again. */
export type EventChange =
  | { kind: 'add-pick'; pick: PickInput }
  | { kind: 'update-pick'; pickId: number; pick: PickInput }
  | { kind: 'delete-pick'; pickId: number }
  | { kind: 'accept'; pickIds?: number[] }
  | { kind: 'relocate'; fixedDepthKm?: number }
  | { kind: 'label'; eventType: string | null; typeCertainty: string | null; evaluationStatus?: string };

function send(id: number, version: number, c: EventChange): Promise<EventDetail> {
  const base = `/api/events/${id}`;
  switch (c.kind) {
    case 'add-pick':
      return apiRequest(eventDetailSchema, `${base}/picks`, { method: 'POST', body: { ...c.pick, eventVersion: version } });
    case 'update-pick':
      return apiRequest(eventDetailSchema, `${base}/picks/${c.pickId}`, { method: 'PUT', body: { ...c.pick, eventVersion: version } });
    case 'delete-pick':
      return apiRequest(eventDetailSchema, `${base}/picks/${c.pickId}`, { method: 'DELETE', query: { eventVersion: version } });
    case 'accept':
      return apiRequest(eventDetailSchema, `${base}/picks/accept`, { method: 'POST', body: { ...(c.pickIds ? { pickIds: c.pickIds } : {}), eventVersion: version } });
    case 'relocate':
      return apiRequest(eventDetailSchema, `${base}/relocate`, { method: 'POST', body: { ...(c.fixedDepthKm === undefined ? {} : { fixedDepthKm: c.fixedDepthKm }), eventVersion: version } });
    case 'label':
      return apiRequest(eventDetailSchema, `${base}/label`, {
        method: 'PUT',
        body: { eventType: c.eventType, typeCertainty: c.typeCertainty, ...(c.evaluationStatus ? { evaluationStatus: c.evaluationStatus } : {}), eventVersion: version },
      });
  }
}

/**
 * One mutation for every change: sends the event version it holds (the server answers 409 when
 * someone else changed the event meanwhile) and puts the relocated event in the cache at once.
 */
export function useEventChange(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (c: EventChange) => {
      const current = qc.getQueryData<EventDetail>(eventKeys.detail(id));
      if (!current) throw new Error('The event is not loaded yet');
      return send(id, current.event.version, c);
    },
    onSuccess: (detail) => {
      qc.setQueryData(eventKeys.detail(id), detail);
    },
    onError: () => void qc.invalidateQueries({ queryKey: eventKeys.detail(id) }),
  });
}
