import { Router } from 'express';
import type { AppDeps } from '../app.ts';
import { checkHealth } from '../services/health.ts';

/** GET /api/health: open to all (load balancers, the start script); tells whether the database answers. */
export function healthRouter({ db, config }: AppDeps): Router {
  const router = Router();
  router.get('/health', async (_req, res) => {
    const health = await checkHealth(db, config.codeVersion);
    res.status(health.db === 'ok' ? 200 : 503).json(health);
  });
  return router;
}
