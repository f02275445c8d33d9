import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../app.ts';
import { auditContext } from '../auth/context.ts';
import { createSubscription, deleteSubscription, listSubscriptions, updateSubscription } from '../services/subscriptions.ts';

const idParam = z.object({ id: z.uuid({ message: 'subscription id must be a UUID' }) });

/** GET/POST /api/subscriptions, PUT/DELETE /api/subscriptions/:id (admin). */
export function subscriptionsRouter(deps: AppDeps): Router {
  const router = Router();
  router.get('/subscriptions', async (_req, res) => {
    res.json({ subscriptions: await listSubscriptions(deps.db) });
  });
  router.post('/subscriptions', async (req, res) => {
    res.status(201).json({ subscription: await createSubscription(deps.db, req.body, auditContext(req)) });
  });
  router.put('/subscriptions/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ subscription: await updateSubscription(deps.db, id, req.body, auditContext(req)) });
  });
  router.delete('/subscriptions/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    await deleteSubscription(deps.db, id, auditContext(req));
    res.status(204).end();
  });
  return router;
}
