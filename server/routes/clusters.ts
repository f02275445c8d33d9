import { Router } from 'express';
import { z } from 'zod';
import { clusteringRequestSchema } from '@shared/api/clusters.ts';
import type { AppDeps } from '../app.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import { createClustering, getClustering, listClusterings } from '../services/clusters.ts';

const idParam = z.object({ id: z.uuid({ message: 'id must be a UUID' }) });

/** POST/GET /api/runs/:id/clusterings, GET /api/clusterings/:id. */
export function clustersRouter(deps: AppDeps): Router {
  const router = Router();

  router.get('/runs/:id/clusterings', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ clusterings: await listClusterings(deps.db, id) });
  });

  router.post('/runs/:id/clusterings', async (req, res) => {
    const { id } = idParam.parse(req.params);
    const body = clusteringRequestSchema.parse(req.body ?? {});
    const result = await createClustering(deps, id, body, { userId: currentUser(req).id, audit: auditContext(req) });
    res.status(result.created ? 201 : 200).json({ clustering: result.clustering });
  });

  router.get('/clusterings/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ clustering: await getClustering(deps.db, id) });
  });

  return router;
}
