import { Router } from 'express';
import type { AppDeps } from '../app.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import { listActiveRegions, replaceRegions } from '../services/regions.ts';

/**
 * GET /api/regions (signed-in): the active regions with their area.
 * PUT /api/regions (admin): a GeoJSON FeatureCollection (shared/regions.ts) replacing the active
 * set; 422 with `details.issues` (one { featureIndex, id, message } per problem) changes nothing.
 */
export function regionsRouter({ db }: AppDeps): Router {
  const router = Router();
  router.get('/regions', async (_req, res) => {
    res.json({ regions: await listActiveRegions(db.db) });
  });
  router.put('/regions', async (req, res) => {
    const user = currentUser(req);
    res.json({ regions: await replaceRegions(db.db, req.body, user.id, auditContext(req)) });
  });
  return router;
}
