import { z } from 'zod';
import { latestWindowsQuerySchema, latestWindowsSchema } from '@shared/schemas/data-period';
import { eventReturnBodySchema, eventReturnResultSchema } from '@shared/schemas/event-return';
import {
  applyThresholdsBodySchema,
  candidateEventSchema,
  dashboardQuerySchema,
  evaluationSchema,
  exportQuerySchema,
  groupLabelBodySchema,
  groupLabelResultSchema,
  inboxConfirmBodySchema,
  inboxReturnBodySchema,
  inboxViewSchema,
  rescoreBodySchema,
  returnBodySchema,
  reviewQuerySchema,
  reviewRowSchema,
  setStatusBodySchema,
  thresholdValuesSchema,
} from '@shared/schemas/supervisor';
import { jsonResponse, okSchema, type ApiOperation } from '@server/openapi/operation';
import { candidateQuery, idParams, proposedQuery, stationParams } from './router';

const inbox = jsonResponse("The supervisor's inbox after the action", inboxViewSchema);
const countsPerDay = z.array(z.number());

/** GET /api/supervisor/thresholds/:stationId (thresholds.ts ThresholdReport). */
const thresholdReportSchema = z.object({
  stationId: z.number(),
  station: z.string(),
  current: thresholdValuesSchema,
  proposed: thresholdValuesSchema.nullable(),
  labelled: z.object({ events: z.number(), noise: z.number() }),
  asShown: evaluationSchema,
  currentEvaluation: evaluationSchema,
  proposedEvaluation: evaluationSchema.nullable(),
  curve: z.array(z.object({ eventZ: z.number() }).passthrough()).meta({ description: 'Precision and recall as eventZ rises' }),
  unreadable: z.number(),
});

/** GET /api/supervisor/dashboard (dashboard.ts DashboardData). */
const dashboardSchema = z.object({
  days: z.array(z.string()),
  itemsPerStation: z.array(z.object({ station: z.string(), counts: countsPerDay })),
  flagMix: z.array(z.object({ flag: z.string(), counts: countsPerDay })),
  medianTriageMinutes: z.array(z.number().nullable()),
  triageCount: countsPerDay,
  workload: z.array(z.object({ analyst: z.string(), actions: z.number() })),
  falseAlarmRate: z.array(z.number().nullable()),
  flaggedWithTruth: countsPerDay,
  flaggedBeforeBaseline: countsPerDay,
});

/** /api/supervisor as router.ts serves it. */
export const supervisionOperations: ApiOperation[] = [
  // Inbox.
  { method: 'get', path: '/api/supervisor/inbox', summary: 'Escalations sent to you, newest first, with the unread count', auth: 'session', permission: 'inbox.view', responses: { 200: jsonResponse('The inbox', inboxViewSchema) } },
  { method: 'post', path: '/api/supervisor/inbox/:id/read', summary: 'Mark an entry read', auth: 'session', permission: 'inbox.view', params: idParams, responses: { 200: inbox } },
  { method: 'post', path: '/api/supervisor/inbox/:id/acknowledge', summary: 'Acknowledge an entry ("I am on it")', auth: 'session', permission: 'inbox.view', params: idParams, responses: { 200: inbox, 409: { description: 'Already settled' } } },
  {
    method: 'post',
    path: '/api/supervisor/inbox/:id/confirm',
    summary: 'Confirm the escalated item; one without an event label needs `label`',
    auth: 'session',
    permission: 'review.evaluate',
    params: idParams,
    body: { schema: inboxConfirmBodySchema },
    responses: { 200: inbox, 409: { description: 'Already settled, changed, or already labelled while a label was given' }, 422: { description: 'label_required: the item has no event label' } },
  },
  {
    method: 'post',
    path: '/api/supervisor/inbox/:id/return',
    summary: 'Return the escalated item to the queue with a comment the analyst sees',
    auth: 'session',
    permission: 'review.evaluate',
    params: idParams,
    body: { schema: inboxReturnBodySchema },
    responses: { 200: inbox, 409: { description: 'Already settled' } },
  },

  // Review of labelled events.
  { method: 'get', path: '/api/supervisor/review', summary: 'Items labelled as events, to confirm or return', auth: 'session', permission: 'review.evaluate', query: reviewQuerySchema, responses: { 200: jsonResponse('Rows', z.object({ items: z.array(reviewRowSchema) })) } },
  {
    method: 'post',
    path: '/api/supervisor/review/items/:id/status',
    summary: 'Set the QuakeML evaluation status (confirmed, reviewed, final, rejected)',
    auth: 'session',
    permission: 'review.evaluate',
    params: idParams,
    body: { schema: setStatusBodySchema },
    responses: { 200: jsonResponse('Set', okSchema), 409: { description: 'Stale version, or not an event label' } },
  },
  {
    method: 'post',
    path: '/api/supervisor/review/items/:id/return',
    summary: 'Return a labelled or confirmed item to the queue with a comment',
    auth: 'session',
    permission: 'review.evaluate',
    params: idParams,
    body: { schema: returnBodySchema },
    responses: { 200: jsonResponse('Returned', okSchema), 409: { description: 'Stale version or a state that cannot be returned' } },
  },
  {
    method: 'post',
    path: '/api/supervisor/events/:id/return',
    summary: "Return an event to the analysts: status back to preliminary, the comment on each member window, labelled members back to the queue",
    auth: 'session',
    permission: 'review.evaluate',
    params: idParams,
    body: { schema: eventReturnBodySchema },
    responses: { 200: jsonResponse('Returned', eventReturnResultSchema), 404: { description: 'No such event (or none the supervisor may review)' }, 409: { description: 'The event changed since the version given' } },
  },
  {
    method: 'get',
    path: '/api/supervisor/items/:id/review-note',
    summary: "The supervisor's latest comment on an item, for the analyst's screen",
    auth: 'session',
    permission: 'queue.view',
    params: idParams,
    responses: {
      200: jsonResponse(
        'The note, or null',
        z.object({ note: z.object({ evaluationStatus: z.string().nullable(), comment: z.string().nullable(), returnComment: z.string().nullable(), returnedBy: z.string().nullable(), returnedAt: z.string().nullable() }).nullable() }),
      ),
    },
  },

  // Candidate events.
  { method: 'get', path: '/api/supervisor/candidate-events', summary: 'Candidate events (first triggers at several stations) in a period', auth: 'session', permission: 'queue.view', query: candidateQuery, responses: { 200: jsonResponse('Events', z.object({ events: z.array(candidateEventSchema) })) } },
  { method: 'get', path: '/api/supervisor/candidate-events/:id', summary: 'One candidate event with the members you may see', auth: 'session', permission: 'queue.view', params: idParams, responses: { 200: jsonResponse('The event', candidateEventSchema) } },
  {
    method: 'post',
    path: '/api/supervisor/candidate-events/:id/label',
    summary: 'Label every member with the event type only (the current item with its whole label); settled members are skipped',
    auth: 'session',
    permission: 'queue.label',
    params: idParams,
    body: { schema: groupLabelBodySchema },
    responses: { 200: jsonResponse('What happened to each member', groupLabelResultSchema) },
  },

  // Thresholds.
  {
    method: 'get',
    path: '/api/supervisor/thresholds/:stationId',
    summary: "A station's flag thresholds against its labelled history, and the same for proposed ones",
    auth: 'session',
    permission: 'thresholds.edit',
    params: stationParams,
    query: proposedQuery,
    responses: { 200: jsonResponse('The report', thresholdReportSchema) },
  },
  {
    method: 'post',
    path: '/api/supervisor/thresholds/:stationId/apply',
    summary: "Store new thresholds in the station's profile (from the next window on; nothing is re-scored)",
    auth: 'session',
    permission: 'thresholds.edit',
    params: stationParams,
    body: { schema: applyThresholdsBodySchema },
    responses: { 200: jsonResponse('The report under the new thresholds', thresholdReportSchema) },
  },
  {
    method: 'post',
    path: '/api/supervisor/thresholds/:stationId/rescore',
    summary: "Re-score the station's items whose window starts in [from, to) with its current profile and baseline",
    auth: 'session',
    permission: 'thresholds.edit',
    params: stationParams,
    body: { schema: rescoreBodySchema },
    responses: { 200: jsonResponse('Counts', z.object({ rescored: z.number(), flagChanged: z.number(), skipped: z.number() })), 413: { description: 'More items in the period than one request may re-score' } },
  },

  // Dashboard, data period, export.
  { method: 'get', path: '/api/supervisor/dashboard', summary: 'Items per day and station, flag mix, time to triage, workload, false alarms', auth: 'session', permission: 'dashboard.view', query: dashboardQuerySchema, responses: { 200: jsonResponse('The dashboard', dashboardSchema) } },
  { method: 'get', path: '/api/supervisor/latest-windows', summary: 'Where the data is in time (the screens default their period to it)', auth: 'session', permission: 'review.evaluate', query: latestWindowsQuerySchema, responses: { 200: jsonResponse('Latest windows', latestWindowsSchema) } },
  {
    method: 'get',
    path: '/api/supervisor/export',
    summary: 'Download the catalogue of a period as QuakeML 1.2 or CSV',
    auth: 'session',
    permission: 'catalogue.export',
    query: exportQuerySchema,
    responses: { 200: { description: 'The file (Content-Disposition: attachment); QuakeML or CSV by `format`', schema: z.string(), contentType: 'application/xml' } },
  },
];
