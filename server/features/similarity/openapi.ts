import { z } from 'zod';
import { familiesQuerySchema, familiesResponseSchema, itemMatchesResponseSchema } from '@shared/schemas/similarity';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';

const idParams = z.object({ id: z.string().regex(/^\d{1,15}$/) });

/** /api/similarity as router.ts serves it. */
export const similarityOperations: ApiOperation[] = [
  {
    method: 'get',
    path: '/api/similarity/items/:id/matches',
    summary: "A queue item's best matches against its station's templates, with overlays and the label the best labelled match suggests",
    auth: 'session',
    permission: 'queue.view',
    params: idParams,
    responses: { 200: jsonResponse('Matches', itemMatchesResponseSchema) },
  },
  {
    method: 'get',
    path: '/api/similarity/families',
    summary: 'Families: windows of a station that match each other at or above minValue, with their label mix and hours of day',
    auth: 'session',
    permission: 'dashboard.view',
    query: familiesQuerySchema,
    responses: { 200: jsonResponse('Families', familiesResponseSchema) },
  },
];
