import { Router } from 'express';
import type { AppDeps } from '../app.ts';
import { notFound } from '../errors.ts';

/** GET /api/dev/outbox: development only, the mails the local mail catcher received. */
export function outboxRouter({ mail }: AppDeps): Router {
  const router = Router();
  router.get('/dev/outbox', async (_req, res) => {
    if (!mail?.catcher) throw notFound('No local mail catcher runs here: mail goes to the configured mail server.');
    res.json({ mails: await mail.catcher.list() });
  });
  return router;
}
