import { z } from 'zod';
import {
  dismissBodySchema,
  escalateBodySchema,
  labelBodySchema,
  queueItemDetailSchema,
  queuePageSchema,
  queueQuerySchema,
  queueRowSchema,
  tracesQuerySchema,
  tracesResponseSchema,
  versionBodySchema,
} from '@shared/schemas/queue';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';
import { idParams } from './router';

const stale = { description: 'conflict: the version is stale or the state does not allow it (names who changed it)' };

/** /api/queue as router.ts serves it. */
export const queueOperations: ApiOperation[] = [
  {
    method: 'get',
    path: '/api/queue',
    summary: 'The review queue: filters, keyset cursor, counts per state (operators see their stations only)',
    auth: 'session',
    permission: 'queue.view',
    query: queueQuerySchema,
    responses: { 200: jsonResponse('A page of rows', queuePageSchema) },
  },
  { method: 'get', path: '/api/queue/items/:id', summary: "One item with the engine's analysis", auth: 'session', permission: 'queue.view', params: idParams, responses: { 200: jsonResponse('The item', queueItemDetailSchema) } },
  {
    method: 'get',
    path: '/api/queue/items/:id/traces',
    summary: 'Display traces of every channel (pre-processed, both bands, STA/LTA, spectrogram), decimated to about `points` points',
    auth: 'session',
    permission: 'queue.view',
    params: idParams,
    query: tracesQuerySchema,
    responses: { 200: jsonResponse('Traces', tracesResponseSchema) },
  },
  { method: 'post', path: '/api/queue/items/:id/claim', summary: 'Claim a waiting item (new or returned → in review)', auth: 'session', permission: 'queue.claim', params: idParams, body: { schema: versionBodySchema }, responses: { 200: jsonResponse('The claimed row', queueRowSchema), 409: stale } },
  { method: 'post', path: '/api/queue/items/:id/release', summary: 'Release your claim (in review → new)', auth: 'session', permission: 'queue.claim', params: idParams, body: { schema: versionBodySchema }, responses: { 200: jsonResponse('The released row', queueRowSchema), 409: stale } },
  {
    method: 'post',
    path: '/api/queue/items/:id/keepalive',
    summary: 'Keep your claim from lapsing while you work on the item',
    auth: 'session',
    permission: 'queue.claim',
    params: idParams,
    responses: { 200: jsonResponse('The new claim time', z.object({ claimedAt: z.string() })), 409: { description: 'conflict: not under your claim any more' } },
  },
  { method: 'post', path: '/api/queue/items/:id/label', summary: 'Label your claimed item as an event (QuakeML type, certainty, picks, note)', auth: 'session', permission: 'queue.label', params: idParams, body: { schema: labelBodySchema }, responses: { 200: jsonResponse('The labelled row', queueRowSchema), 409: stale } },
  { method: 'post', path: '/api/queue/items/:id/dismiss', summary: 'Dismiss your claimed item as noise, with a reason', auth: 'session', permission: 'queue.dismiss', params: idParams, body: { schema: dismissBodySchema }, responses: { 200: jsonResponse('The dismissed row', queueRowSchema), 409: stale } },
  {
    method: 'post',
    path: '/api/queue/items/:id/escalate',
    summary: 'Escalate your claimed item to the supervisors (mail and inbox)',
    auth: 'session',
    permission: 'queue.escalate',
    params: idParams,
    body: { schema: escalateBodySchema },
    responses: { 200: jsonResponse('The escalated row', queueRowSchema), 409: stale },
  },
];
