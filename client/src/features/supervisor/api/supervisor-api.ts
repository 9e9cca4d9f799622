import { queryOptions } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { latestWindowsSchema } from '@shared/schemas/data-period';
import { evaluationSchema, inboxEntryViewSchema, inboxViewSchema, reviewRowSchema, type confirmLabelSchema, type ThresholdValues } from '@shared/schemas/supervisor';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/**
 * The supervisor screens' calls to /api/supervisor (server/features/supervision/router.ts), each with
 * a zod schema of its answer and, for reads, a TanStack Query options factory; requests go through
 * the one API client (lib/api-client.ts).
 */

const qs = (params: Record<string, string | number | undefined>) => {
  const u = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== '') u.set(k, String(v));
  return u.toString();
};

// Inbox.

/** One inbox entry (shared with the server, which documents it in its OpenAPI description). */
export const inboxEntrySchema = inboxEntryViewSchema;
/** One inbox entry. */
export type InboxEntry = z.infer<typeof inboxEntrySchema>;
const inboxSchema = inboxViewSchema;

/** The signed-in supervisor's inbox. */
export const inboxQuery = () => queryOptions({ queryKey: queryKeys.supervisor.inbox, queryFn: () => apiRequest(inboxSchema, '/api/supervisor/inbox') });

/**
 * An inbox action: read, acknowledge, confirm (with `label` when the item has no event label yet),
 * or return with a comment.
 */
export function inboxAction(id: number, action: 'read' | 'acknowledge' | 'confirm' | 'return', extra: { comment?: string; label?: ConfirmLabelInput } = {}) {
  const body = action === 'return' ? { comment: extra.comment } : action === 'confirm' && extra.label ? { label: extra.label } : {};
  return apiRequest(inboxSchema, `/api/supervisor/inbox/${id}/${action}`, { method: 'POST', body });
}

/** The label a supervisor gives when confirming an escalation that has none. */
export type ConfirmLabelInput = z.input<typeof confirmLabelSchema>;

// Review.

/** Filters of the review list. */
export interface ReviewFilters {
  station?: string;
  type?: string;
  analyst?: string;
  status?: string;
  from?: string;
  to?: string;
}

/** The review list under `f`. */
export const reviewQuery = (f: ReviewFilters) =>
  queryOptions({
    queryKey: queryKeys.supervisor.review(f),
    queryFn: () => apiRequest(z.object({ items: z.array(reviewRowSchema) }), `/api/supervisor/review?${qs({ ...f })}`),
  });

/** Sets a labelled item's evaluation status. */
export function setStatus(itemId: number, version: number, status: string, comment: string) {
  return apiRequest(z.object({ ok: z.boolean() }), `/api/supervisor/review/items/${itemId}/status`, { method: 'POST', body: { version, status, comment } });
}

/** Returns a labelled item to the queue with a comment. */
export function returnItem(itemId: number, version: number, comment: string) {
  return apiRequest(z.object({ ok: z.boolean() }), `/api/supervisor/review/items/${itemId}/return`, { method: 'POST', body: { version, comment } });
}

// Candidate events.

const candidateSchema = lazySchema(() =>
  z.object({
    id: z.number(),
    anchorItemId: z.number(),
    firstArrival: z.string(),
    lastArrival: z.string(),
    stationCount: z.number(),
    members: z.array(z.object({ itemId: z.number(), station: z.string(), stationId: z.number(), arrival: z.string(), state: z.string(), flag: z.string(), score: z.number(), labelType: z.string().nullable(), version: z.number() })),
  }),
);
/** A candidate event. */
export type CandidateEvent = z.infer<typeof candidateSchema>;

/** Candidate events whose first arrival is in [from, to). */
export const candidateEventsQuery = (from: string, to: string) =>
  queryOptions({
    queryKey: queryKeys.supervisor.candidates(from, to),
    queryFn: () => apiRequest(z.object({ events: z.array(candidateSchema) }), `/api/supervisor/candidate-events?${qs({ from, to })}`),
  });

/** Labels every member of a candidate event. */
export function labelCandidate(id: number, label: { eventType: string; certainty: string; note: string }) {
  return apiRequest(z.object({ members: z.array(z.object({ itemId: z.number(), result: z.string(), reason: z.string().optional() })) }), `/api/supervisor/candidate-events/${id}/label`, { method: 'POST', body: { label } });
}

// Thresholds.

const thresholdValues = lazySchema(() => z.object({ eventZ: z.number(), noiseZ: z.number(), centroidMaxFactor: z.number() }));
const reportSchema = lazySchema(() =>
  z.object({
    stationId: z.number(),
    station: z.string(),
    current: thresholdValues,
    proposed: thresholdValues.nullable(),
    labelled: z.object({ events: z.number(), noise: z.number() }),
    asShown: evaluationSchema,
    currentEvaluation: evaluationSchema,
    proposedEvaluation: evaluationSchema.nullable(),
    curve: z.array(evaluationSchema.extend({ eventZ: z.number() })),
    unreadable: z.number(),
  }),
);
/** A thresholds report. */
export type ThresholdReport = z.infer<typeof reportSchema>;

/** The thresholds report of a station, with proposed values when given. */
export const thresholdsQuery = (stationId: number, proposed: ThresholdValues | null) =>
  queryOptions({
    queryKey: queryKeys.supervisor.thresholds(stationId, proposed),
    queryFn: () => apiRequest(reportSchema, `/api/supervisor/thresholds/${stationId}?${proposed ? qs({ ...proposed }) : ''}`),
  });

/** Applies thresholds to a station (no re-scoring). */
export function applyThresholds(stationId: number, thresholds: ThresholdValues) {
  return apiRequest(reportSchema, `/api/supervisor/thresholds/${stationId}/apply`, { method: 'POST', body: { thresholds } });
}

/** Re-scores a station's items in [from, to). */
export function rescore(stationId: number, from: string, to: string) {
  return apiRequest(z.object({ rescored: z.number(), flagChanged: z.number(), skipped: z.number() }), `/api/supervisor/thresholds/${stationId}/rescore`, { method: 'POST', body: { from, to } });
}

/** The station list (id and codes) for the station picker. */
export const stationsQuery = () =>
  queryOptions({
    queryKey: queryKeys.supervisor.stations,
    queryFn: async () => {
      const body = await apiRequest(z.unknown(), '/api/stations');
      const list = z.array(z.object({ id: z.number(), network: z.string(), code: z.string() }));
      const direct = list.safeParse(body);
      if (direct.success) return direct.data;
      return z.object({ stations: list }).parse(body).stations;
    },
  });

// Dashboard.

const dashboardSchema = lazySchema(() =>
  z.object({
    days: z.array(z.string()),
    itemsPerStation: z.array(z.object({ station: z.string(), counts: z.array(z.number()) })),
    flagMix: z.array(z.object({ flag: z.string(), counts: z.array(z.number()) })),
    medianTriageMinutes: z.array(z.number().nullable()),
    triageCount: z.array(z.number()),
    workload: z.array(z.object({ analyst: z.string(), actions: z.number() })),
    falseAlarmRate: z.array(z.number().nullable()),
    flaggedWithTruth: z.array(z.number()),
    flaggedBeforeBaseline: z.array(z.number()),
  }),
);
/** The dashboard's numbers. */
export type Dashboard = z.infer<typeof dashboardSchema>;

/** The dashboard for [from, to). */
export const dashboardQuery = (from: string, to: string) =>
  queryOptions({ queryKey: queryKeys.supervisor.dashboard(from, to), queryFn: () => apiRequest(dashboardSchema, `/api/supervisor/dashboard?${qs({ from, to })}`) });

/** Window starts of the latest item and latest labelled event (all stations, or one), for default periods. */
export const latestWindowsQuery = (stationId?: number) =>
  queryOptions({
    queryKey: queryKeys.supervisor.latestWindows(stationId),
    queryFn: () => apiRequest(latestWindowsSchema, `/api/supervisor/latest-windows${stationId === undefined ? '' : `?${qs({ stationId: String(stationId) })}`}`),
  });

/** The export download URL. */
export function exportUrl(from: string, to: string, format: 'quakeml' | 'csv', status: string): string {
  return `/api/supervisor/export?${qs({ from, to, format, status })}`;
}
