import { Router } from 'express';
import type { AppContext } from '@server/context';
import { buildOpenApiDocument } from './document';

/** GET /api/openapi.json: the generated OpenAPI 3 document (public, cached per process). */
export function openApiRouter(ctx: AppContext): Router {
  const router = Router();
  let cached: string | undefined;
  router.get('/', (_req, res) => {
    cached ??= JSON.stringify(buildOpenApiDocument(ctx.version));
    res.type('application/json').send(cached);
  });
  return router;
}
