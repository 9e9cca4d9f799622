import { z } from 'zod';
import { auditQuerySchema, auditRowSchema } from '@shared/auth/schemas';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';

/** /api/audit as router.ts serves it. */
export const auditOperations: ApiOperation[] = [
  {
    method: 'get',
    path: '/api/audit',
    summary: 'The audit log, newest first, filtered by action (or prefix), actor, target and period',
    auth: 'session',
    permission: 'audit.view',
    query: auditQuerySchema,
    responses: { 200: jsonResponse('A page of audit rows', z.object({ rows: z.array(auditRowSchema), total: z.number(), limit: z.number(), offset: z.number() })) },
  },
];
