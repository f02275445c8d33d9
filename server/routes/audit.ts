import { Router } from 'express';
import { auditQuerySchema } from '@shared/api/auth.ts';
import type { AppDeps } from '../app.ts';
import { listAudit, verifyAuditChain } from '../services/audit.ts';

/** GET /api/audit (filters, paging) and GET /api/audit/verify: risk and admin, per the permission table. */
export function auditRouter({ db }: AppDeps): Router {
  const router = Router();
  router.get('/audit', async (req, res) => {
    res.json(await listAudit(db.db, auditQuerySchema.parse(req.query)));
  });
  router.get('/audit/verify', async (_req, res) => {
    res.json(await verifyAuditChain(db.db));
  });
  return router;
}
