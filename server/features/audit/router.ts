import { Router } from 'express';
import { auditQuerySchema } from '@shared/auth/schemas';
import type { AppContext } from '@server/context';
import { parseInput } from '@server/http/validate';
import { requirePermission } from '@server/policies/authorize';
import { listAudit } from './audit';

/** /api/audit: the audit log for supervisors and admins (audit.view). */
export function auditRouter(ctx: AppContext): Router {
  const router = Router();
  /** GET /api/audit?limit&offset&action&actor&targetType&targetId&from&to → {rows, total, limit, offset} */
  router.get('/', requirePermission('audit.view'), async (req, res) => {
    const q = parseInput(auditQuerySchema, req.query, 'query');
    const page = await listAudit(ctx.database.db, q);
    res.json({ ...page, limit: q.limit, offset: q.offset });
  });
  return router;
}
