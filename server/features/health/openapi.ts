import { z } from 'zod';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';

const partSchema = z.object({ ok: z.boolean(), latencyMs: z.number().optional(), error: z.string().optional() });

/** The health answer (router.ts). */
export const healthResponseSchema = z.object({
  status: z.enum(['ok', 'degraded']),
  version: z.string(),
  /** `single`: one process does everything; `cluster`: app instances and analysis workers on Redis (issue 20). */
  mode: z.enum(['single', 'cluster']),
  database: partSchema,
  /** Multi-instance mode only: Redis, the analysis worker processes connected to it and the queue's jobs. */
  redis: partSchema.optional(),
  workers: z.object({ connected: z.number().int(), names: z.array(z.string()) }).nullable().optional(),
  jobs: z.object({ waiting: z.number().int(), active: z.number().int(), delayed: z.number().int(), failed: z.number().int() }).nullable().optional(),
});

/** /api/health as router.ts serves it. */
export const healthOperations: ApiOperation[] = [
  {
    method: 'get',
    path: '/api/health',
    summary: 'Whether the database answers (within 2 s), and the app version; in the multi-instance mode also Redis and the analysis workers',
    auth: 'public',
    responses: {
      200: jsonResponse('Healthy', healthResponseSchema),
      503: jsonResponse('The database is down, or (multi-instance mode) Redis is down or no analysis worker is connected (Retry-After: 5)', healthResponseSchema),
    },
  },
];
