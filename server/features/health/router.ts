import { Router } from 'express';
import type { AppContext } from '@server/context';
import type { ClusterHealth } from '@server/cluster/cluster-link';
import { pingDatabase } from '@server/db/availability';

/**
 * GET /api/health: the database state and the app version; in the multi-instance mode also Redis,
 * the analysis workers connected to the job queue and its jobs. 200 when all is well, 503 with
 * Retry-After when the database is down, or (multi-instance mode) Redis is down or no worker is
 * connected, since uploads cannot be analysed then.
 */
export function healthRouter(ctx: AppContext): Router {
  const router = Router();
  router.get('/', async (_req, res) => {
    const started = performance.now();
    let database: { ok: boolean; latencyMs?: number; error?: string };
    const cluster: Promise<ClusterHealth> | null = ctx.cluster ? ctx.cluster.health() : null;
    try {
      await Promise.race([
        pingDatabase(ctx.database.db),
        new Promise((_, reject) => setTimeout(() => reject(new Error('timed out after 2 s')), 2000)),
      ]);
      database = { ok: true, latencyMs: Math.round((performance.now() - started) * 10) / 10 };
    } catch (err) {
      database = { ok: false, error: err instanceof Error ? err.message : 'unreachable' };
    }
    const parts = cluster ? await cluster : null;
    const ok = database.ok && (!parts || (parts.redis.ok && (parts.workers?.connected ?? 0) > 0));
    // A monitor or load balancer retrying a 503 learns when to come back (as the API's 503s say).
    if (!ok) res.setHeader('Retry-After', '5');
    res.status(ok ? 200 : 503).json({ status: ok ? 'ok' : 'degraded', version: ctx.version, mode: parts ? 'cluster' : 'single', database, ...(parts ?? {}) });
  });
  return router;
}
