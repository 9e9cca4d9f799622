import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { eventDetailSchema, type EventDetail } from '@shared/schemas/events';
import { eventGeometrySchema } from '@shared/schemas/event-geometry';
import { eventTracesSchema } from '@shared/schemas/event-traces';
import { apiRequest } from '@client/lib/api-client';

/** Query keys of the event screen (one factory; every event key starts with `['events']`). */
export const eventKeys = {
  all: ['events'] as const,
  detail: (id: number) => ['events', 'detail', id] as const,
  geometry: (id: number) => ['events', 'geometry', id] as const,
  traces: (id: number, members: string, points: number) => ['events', 'traces', id, members, points] as const,
};

/**
 * Every member window's pre-processed traces in one request (GET /api/events/:id/traces), kept
 * while the members stay the same (`members`: their item ids, the key): picks and relocations
 * never fetch the waveforms again.
 */
export function useEventTraces(id: number, members: readonly number[], points: number) {
  const key = members.join(',');
  return useQuery({
    queryKey: eventKeys.traces(id, key, points),
    queryFn: ({ signal }) => apiRequest(eventTracesSchema, `/api/events/${id}/traces`, { query: { points }, signal }),
    staleTime: Infinity,
    placeholderData: keepPreviousData,
  });
}

/** Query options of one event (origin, arrivals, picks, amplitudes, magnitudes). */
export function eventOptions(id: number) {
  return queryOptions({ queryKey: eventKeys.detail(id), queryFn: ({ signal }) => apiRequest(eventDetailSchema, `/api/events/${id}`, { signal }) });
}

/** One event. */
export function useEvent(id: number) {
  return useQuery(eventOptions(id));
}

/** The stations of the event's network with distances and predicted arrivals from its preferred origin. */
export function useEventGeometry(id: number, originId: number | null) {
  return useQuery({
    // The origin id is part of the key: a relocation gives new predictions.
    queryKey: [...eventKeys.geometry(id), originId] as const,
    queryFn: ({ signal }) => apiRequest(eventGeometrySchema, `/api/events/${id}/geometry`, { signal }),
    placeholderData: (prev) => prev,
  });
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
