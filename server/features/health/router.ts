import { Router } from 'express';
import type { AppContext } from '@server/context';
import { pingDatabase } from '@server/db/availability';

/** GET /api/health: the database state and the app version. 200 when ok, 503 when the database is down. */
export function healthRouter(ctx: AppContext): Router {
  const router = Router();
  router.get('/', async (_req, res) => {
    const started = performance.now();
    let database: { ok: boolean; latencyMs?: number; error?: string };
    try {
      await Promise.race([
        pingDatabase(ctx.database.db),
        new Promise((_, reject) => setTimeout(() => reject(new Error('timed out after 2 s')), 2000)),
      ]);
      database = { ok: true, latencyMs: Math.round((performance.now() - started) * 10) / 10 };
    } catch (err) {
      database = { ok: false, error: err instanceof Error ? err.message : 'unreachable' };
    }
    // A monitor or load balancer retrying a 503 learns when to come back (as the API's 503s say).
    if (!database.ok) res.setHeader('Retry-After', '5');
    res.status(database.ok ? 200 : 503).json({ status: database.ok ? 'ok' : 'degraded', version: ctx.version, database });
  });
  return router;
}
