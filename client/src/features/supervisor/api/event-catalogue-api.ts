import { queryOptions } from '@tanstack/react-query';
import { eventDetailSchema, eventListSchema, velocityModelViewSchema, type VelocityModelView } from '@shared/schemas/events';
import { eventReturnResultSchema } from '@shared/schemas/event-return';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/**
 * The supervisor's calls to the events API (server/features/events/router.ts) and the event return
 * (server/features/supervision/event-return.ts). Keys sit under the review part of the supervisor
 * keys, so a live change of an event or item refetches them with the review list.
 */

/** The events whose first arrival lies in [from, to), newest first (at most 1000). */
export const eventCatalogueQuery = (from: string, to: string) =>
  queryOptions({
    queryKey: queryKeys.supervisor.catalogueEvents(from, to),
    queryFn: ({ signal }) => apiRequest(eventListSchema, '/api/events', { query: { from, to, limit: '1000' }, signal }),
  });

/** One event with its member windows (for a catalogue row opened on demand). */
export const eventMembersQuery = (id: number) =>
  queryOptions({
    queryKey: queryKeys.supervisor.catalogueEvent(id),
    queryFn: ({ signal }) => apiRequest(eventDetailSchema, `/api/events/${id}`, { signal }),
  });

/** The event fields a status change sends back unchanged (PUT /label replaces type and certainty too). */
export type EventStatusTarget = { id: number; version: number; eventType: string | null; typeCertainty: string | null };

/** Sets an event's QuakeML evaluation status (PUT /api/events/:id/label; needs review.evaluate). */
export function setEventStatus(ev: EventStatusTarget, evaluationStatus: string) {
  return apiRequest(eventDetailSchema, `/api/events/${ev.id}/label`, {
    method: 'PUT',
    body: { eventType: ev.eventType, typeCertainty: ev.typeCertainty, evaluationStatus, eventVersion: ev.version },
  });
}

/** Returns an event to the analysts with a comment (status back to preliminary). */
export function returnEventToAnalysts(id: number, eventVersion: number, comment: string) {
  return apiRequest(eventReturnResultSchema, `/api/supervisor/events/${id}/return`, { method: 'POST', body: { eventVersion, comment } });
}

/** A network's velocity model and ML settings. */
export const velocityModelQuery = (network: string) =>
  queryOptions({
    queryKey: queryKeys.supervisor.velocityModel(network),
    queryFn: ({ signal }) => apiRequest(velocityModelViewSchema, `/api/events/velocity-models/${encodeURIComponent(network)}`, { signal }),
  });

/** What the velocity-model form sends. */
export type VelocityModelInput = Pick<VelocityModelView, 'name' | 'layers' | 'stationCorrections'> & { version?: number };

/** Saves a network's velocity model (velocity-model.edit); events located afterwards use it. */
export function saveVelocityModel(network: string, body: VelocityModelInput) {
  return apiRequest(velocityModelViewSchema, `/api/events/velocity-models/${encodeURIComponent(network)}`, { method: 'PUT', body });
}
