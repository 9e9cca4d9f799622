import { z } from 'zod';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';

/** The health answer (router.ts). */
export const healthResponseSchema = z.object({
  status: z.enum(['ok', 'degraded']),
  version: z.string(),
  database: z.object({ ok: z.boolean(), latencyMs: z.number().optional(), error: z.string().optional() }),
});

/** /api/health as router.ts serves it. */
export const healthOperations: ApiOperation[] = [
  {
    method: 'get',
    path: '/api/health',
    summary: 'Whether the database answers (within 2 s), and the app version',
    auth: 'public',
    responses: { 200: jsonResponse('Healthy', healthResponseSchema), 503: jsonResponse('The database is down (Retry-After: 5)', healthResponseSchema) },
  },
];
