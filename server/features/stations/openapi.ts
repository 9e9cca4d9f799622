import { z } from 'zod';
import { processingProfileSchema } from '@shared/schemas/processing-profile';
import {
  baselineViewSchema,
  channelInputSchema,
  idParamSchema,
  stationCreateSchema,
  stationDetailSchema,
  stationSummarySchema,
  stationUpdateSchema,
  tokenCreateSchema,
  tokenCreatedSchema,
  tokenViewSchema,
} from '@shared/schemas/station';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';
import { childParamSchema, healthQuerySchema } from './router';
import { importApplySchema } from './stationxml-import';

const nullableDb = z.array(z.number().nullable());

/** GET /api/stations/:id/health (station-health.ts StationHealth). */
const stationHealthSchema = z.object({
  psd: z.array(
    z.object({ streamId: z.string(), windowId: z.number(), windowStart: z.string(), freqs: z.array(z.number()), db: nullableDb, physical: z.boolean(), units: z.string(), nlnm: nullableDb, nhnm: nullableDb }),
  ),
  noiseModels: z.object({ freqs: z.array(z.number()), nlnm: nullableDb, nhnm: nullableDb }),
  trend: z.array(z.object({ windowStart: z.string(), db: z.number().nullable(), units: z.string().nullable(), flag: z.string(), channel: z.string() })),
  qc: z.array(z.object({ windowId: z.number(), windowStart: z.string(), streamId: z.string(), code: z.string(), severity: z.string(), message: z.string() })),
  baseline: baselineViewSchema,
  items: z.array(z.object({ id: z.number(), state: z.string(), flag: z.string(), score: z.number(), windowStart: z.string() })),
  days: z.number(),
});

const xmlBody = (extra: z.ZodObject) => ({
  contentType: 'multipart/form-data' as const,
  schema: extra.extend({ file: z.string().meta({ format: 'binary', description: 'FDSN StationXML 1.x document' }) }),
});

/** /api/stations as router.ts serves it. */
export const stationOperations: ApiOperation[] = [
  { method: 'get', path: '/api/stations', summary: 'Stations you may see', auth: 'session', permission: 'station.view', responses: { 200: jsonResponse('Stations', z.object({ stations: z.array(stationSummarySchema) })) } },
  {
    method: 'post',
    path: '/api/stations',
    summary: 'Register a station',
    auth: 'session',
    permission: 'station.create',
    body: { schema: stationCreateSchema },
    responses: { 201: jsonResponse('Registered', z.object({ station: stationDetailSchema })), 409: { description: 'NET.STA is already registered' } },
  },
  {
    method: 'post',
    path: '/api/stations/import/preview',
    summary: 'Preview what a StationXML document would change (new/changed/unchanged, field diffs)',
    auth: 'session',
    permission: 'station.view',
    body: xmlBody(z.object({})),
    responses: { 200: jsonResponse('Preview with previewHash', z.object({ previewHash: z.string() }).passthrough()), 413: { description: 'Larger than 10 MB' }, 422: { description: 'Not StationXML (names the element)' } },
  },
  {
    method: 'post',
    path: '/api/stations/import/apply',
    summary: 'Apply a previewed StationXML document in one transaction',
    auth: 'session',
    permission: 'station.view',
    body: xmlBody(importApplySchema),
    responses: { 200: jsonResponse('Applied preview', z.object({}).passthrough()), 409: { description: 'The registry or file changed since the preview' } },
  },
  {
    method: 'get',
    path: '/api/stations/:id',
    summary: 'A station with channels, profile and baseline',
    auth: 'session',
    permission: 'station.view',
    params: idParamSchema,
    responses: { 200: jsonResponse('Station', z.object({ station: stationDetailSchema, baseline: baselineViewSchema })) },
  },
  {
    method: 'patch',
    path: '/api/stations/:id',
    summary: "Edit a station's name, coordinates or site description",
    auth: 'session',
    permission: 'station.edit',
    params: idParamSchema,
    body: { schema: stationUpdateSchema },
    responses: { 200: jsonResponse('Updated', z.object({ station: stationDetailSchema })) },
  },
  {
    method: 'put',
    path: '/api/stations/:id/profile',
    summary: "Replace the station's processing profile (checked against every channel's 0.45·fs)",
    auth: 'session',
    permission: 'station.edit',
    params: idParamSchema,
    body: { schema: processingProfileSchema },
    responses: { 200: jsonResponse('Stored profile', z.object({ profile: processingProfileSchema })) },
  },
  {
    method: 'post',
    path: '/api/stations/:id/channels',
    summary: 'Add or replace a channel (by location and code)',
    auth: 'session',
    permission: 'station.edit',
    params: idParamSchema,
    body: { schema: channelInputSchema },
    responses: { 201: jsonResponse('Station with channels', z.object({ station: stationDetailSchema })) },
  },
  { method: 'delete', path: '/api/stations/:id/channels/:childId', summary: 'Remove a channel', auth: 'session', permission: 'station.edit', params: childParamSchema, responses: { 204: { description: 'Removed' } } },
  { method: 'get', path: '/api/stations/:id/tokens', summary: "The station's ingest tokens (never the secrets)", auth: 'session', permission: 'token.manage', params: idParamSchema, responses: { 200: jsonResponse('Tokens', z.object({ tokens: z.array(tokenViewSchema) })) } },
  {
    method: 'post',
    path: '/api/stations/:id/tokens',
    summary: 'Create an ingest token; the secret is in this answer only',
    auth: 'session',
    permission: 'token.manage',
    params: idParamSchema,
    body: { schema: tokenCreateSchema },
    responses: { 201: jsonResponse('Created', tokenCreatedSchema) },
  },
  { method: 'post', path: '/api/stations/:id/tokens/:childId/revoke', summary: 'Revoke an ingest token', auth: 'session', permission: 'token.manage', params: childParamSchema, responses: { 200: jsonResponse('Revoked', z.object({ token: tokenViewSchema })) } },
  {
    method: 'get',
    path: '/api/stations/:id/health',
    summary: 'Latest PSD per channel vs NLNM/NHNM, noise trend, QC findings, baseline, recent items',
    auth: 'session',
    permission: 'station.view',
    params: idParamSchema,
    query: healthQuerySchema,
    responses: { 200: jsonResponse('Health', stationHealthSchema) },
  },
];
