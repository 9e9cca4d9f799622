import { acceptPicksBodySchema, amplitudeBodySchema, eventCreateBodySchema, eventDetailSchema, eventLabelBodySchema, eventListQuerySchema, eventListSchema, memberBodySchema, networkParamsSchema, pickBodySchema, pickUpdateBodySchema, relocateBodySchema, velocityModelBodySchema, velocityModelViewSchema, EVENT_CAUTION } from '@shared/schemas/events';
import { eventGeometrySchema } from '@shared/schemas/event-geometry';
import { eventTracesQuerySchema, eventTracesSchema } from '@shared/schemas/event-traces';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';
import { amplitudeParams, eventParams, memberParams, pickParams, versionQuery } from './router';

const event = jsonResponse(`The event after the change, located again. ${EVENT_CAUTION}`, eventDetailSchema);
const changeErrors = { 409: { description: 'conflict: the event changed meanwhile (eventVersion), or the pick or member exists already' }, 422: { description: 'unprocessable: the pick is not on a member window, or the event cannot be located (the reason)' } };

/** /api/events as router.ts serves it. */
export const eventOperations: ApiOperation[] = [
  {
    method: 'get',
    path: '/api/events/velocity-models/:network',
    summary: "A network's velocity model and ML settings (Seisift's placeholder until a supervisor sets one)",
    auth: 'session',
    permission: 'event.view',
    params: networkParamsSchema,
    responses: { 200: jsonResponse('The model', velocityModelViewSchema) },
  },
  {
    method: 'put',
    path: '/api/events/velocity-models/:network',
    summary: "Set a network's 1-D velocity model (top depth, Vp, Vs; the last layer a half-space) and ML station corrections",
    auth: 'session',
    permission: 'velocity-model.edit',
    params: networkParamsSchema,
    body: { schema: velocityModelBodySchema },
    responses: { 200: jsonResponse('The saved model', velocityModelViewSchema), 409: { description: 'conflict: the model changed meanwhile (version)' } },
  },
  {
    method: 'get',
    path: '/api/events',
    summary: 'Events by first arrival, newest first, each with its preferred origin and ML',
    description: EVENT_CAUTION,
    auth: 'session',
    permission: 'event.view',
    query: eventListQuerySchema,
    responses: { 200: jsonResponse(`The events. ${EVENT_CAUTION}`, eventListSchema) },
  },
  { method: 'post', path: '/api/events', summary: 'Assemble an event from windows (queue items) that no candidate group joined; automatic picks, then located', auth: 'session', permission: 'event.edit', body: { schema: eventCreateBodySchema }, responses: { 201: event, 404: { description: 'not_found: no such queue item' }, 409: { description: 'conflict: a window is already in an event' } } },
  { method: 'get', path: '/api/events/:id', summary: 'One event: origin with its 68 % ellipse, arrivals and residuals, picks, amplitudes, magnitudes, members', description: EVENT_CAUTION, auth: 'session', permission: 'event.view', params: eventParams, responses: { 200: jsonResponse(`The event. ${EVENT_CAUTION}`, eventDetailSchema) } },
  { method: 'post', path: '/api/events/:id/picks', summary: "Add an analyst's pick on a member window's channel; the event relocates from the analysts' picks", auth: 'session', permission: 'event.pick', params: eventParams, body: { schema: pickBodySchema }, responses: { 201: event, ...changeErrors } },
  { method: 'post', path: '/api/events/:id/picks/accept', summary: "Take automatic suggestions over as the analyst's picks (all when pickIds is absent)", auth: 'session', permission: 'event.pick', params: eventParams, body: { schema: acceptPicksBodySchema }, responses: { 200: event, ...changeErrors } },
  { method: 'put', path: '/api/events/:id/picks/:pickId', summary: "Change an analyst's pick", auth: 'session', permission: 'event.pick', params: pickParams, body: { schema: pickUpdateBodySchema }, responses: { 200: event, ...changeErrors } },
  { method: 'delete', path: '/api/events/:id/picks/:pickId', summary: "Remove an analyst's pick", auth: 'session', permission: 'event.pick', params: pickParams, query: versionQuery, responses: { 200: event, ...changeErrors } },
  { method: 'put', path: '/api/events/:id/amplitudes', summary: 'Re-pick the Wood-Anderson amplitude of a horizontal channel (replaces the automatic reading)', auth: 'session', permission: 'event.edit', params: eventParams, body: { schema: amplitudeBodySchema }, responses: { 200: event, ...changeErrors } },
  { method: 'delete', path: '/api/events/:id/amplitudes/:streamId', summary: "Drop an analyst's amplitude: the automatic reading counts again", auth: 'session', permission: 'event.edit', params: amplitudeParams, query: versionQuery, responses: { 200: event, ...changeErrors } },
  { method: 'post', path: '/api/events/:id/members', summary: 'Add a window (queue item) to the event', auth: 'session', permission: 'event.edit', params: eventParams, body: { schema: memberBodySchema }, responses: { 200: event, ...changeErrors } },
  { method: 'delete', path: '/api/events/:id/members/:itemId', summary: 'Take a window out of the event', auth: 'session', permission: 'event.edit', params: memberParams, query: versionQuery, responses: { 200: event, ...changeErrors } },
  { method: 'post', path: '/api/events/:id/relocate', summary: 'Locate the event again (optionally with the depth fixed)', auth: 'session', permission: 'event.edit', params: eventParams, body: { schema: relocateBodySchema }, responses: { 200: event, ...changeErrors } },
  { method: 'put', path: '/api/events/:id/label', summary: "Set the event's type and certainty (and, for a supervisor, its evaluation status)", auth: 'session', permission: 'event.edit', params: eventParams, body: { schema: eventLabelBodySchema }, responses: { 200: event, 409: changeErrors[409] } },
  {
    method: 'get',
    path: '/api/events/:id/geometry',
    summary: "The event network's stations, its members, and each station's distance, azimuth and predicted first P and S arrivals from the preferred origin",
    auth: 'session',
    permission: 'event.view',
    params: eventParams,
    responses: { 200: jsonResponse(`Stations and predictions. ${EVENT_CAUTION}`, eventGeometrySchema) },
  },
  {
    method: 'get',
    path: '/api/events/:id/traces',
    summary: "Every channel of the event's member windows in one answer: the engine's pre-processed trace (detrended, tapered, ÷ flat sensitivity), min/max-decimated to about `points` points",
    auth: 'session',
    permission: 'event.view',
    params: eventParams,
    query: eventTracesQuerySchema,
    responses: { 200: jsonResponse("The member windows' traces", eventTracesSchema) },
  },
];
