import { Router } from 'express';
import type { AppInfo } from '@shared/api/app-info.ts';
import type { AppDeps } from '../app.ts';

/** GET /api/app-info: public; tells the client which environment it talks to. */
export function appInfoRouter({ config }: AppDeps): Router {
  const router = Router();
  router.get('/app-info', (_req, res) => {
    const body: AppInfo = { environment: config.env, version: config.codeVersion, devTools: !config.isProduction };
    res.json(body);
  });
  return router;
}
