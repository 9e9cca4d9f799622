import { Router } from 'express';
import { z } from 'zod';
import { familiesQuerySchema, similarityCaution, type FamiliesResponse } from '@shared/schemas/similarity';
import type { AppContext } from '@server/context';
import { currentUser, requireUser } from '@server/auth/authenticate';
import { parseInput } from '@server/http/validate';
import { authorizedStations, requirePermission } from '@server/policies/authorize';
import { loadFamilies } from './families';
import { itemMatches } from './item-matches';
import { similaritySettings } from './settings';

const idParams = z.object({ id: z.string().regex(/^\d{1,15}$/, 'must be a queue item id (a whole number)').transform(Number) });

/**
 * "Seen before" (issue 19), mounted at /api/similarity:
 * - `GET /items/:id/matches`: the item's best matches with overlays and the suggested label
 *   (queue.view; operators see their stations' items only, others 404)
 * - `GET /families?station=&minValue=0.7&minSize=2`: families of windows matching each other
 *   (dashboard.view: supervisors)
 */
export function similarityRouter(ctx: AppContext): Router {
  const router = Router();
  const db = ctx.database.db;
  const settings = similaritySettings();
  router.use(requireUser);

  router.get('/items/:id/matches', requirePermission('queue.view'), async (req, res) => {
    const user = currentUser(req);
    const { id } = parseInput(idParams, req.params, 'params');
    // The rows are read here; the window's band-pass for the overlays runs in the analysis pool.
    res.json(await itemMatches(db, id, authorizedStations(user, 'queue.view'), settings.resemblesAt, (input) => ctx.analysisPool.overlays(input)));
  });

  router.get('/families', requirePermission('dashboard.view'), async (req, res) => {
    const user = currentUser(req);
    const q = parseInput(familiesQuerySchema, req.query, 'query');
    const families = await loadFamilies(db, q, authorizedStations(user, 'dashboard.view'));
    const body: FamiliesResponse = { minValue: q.minValue, families, caution: similarityCaution };
    res.json(body);
  });

  return router;
}
