import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../app.ts';
import { auditContext } from '../auth/context.ts';
import { createRegimeName, listRegimeNames, updateRegimeName } from '../services/regime-names.ts';

const idParam = z.object({ id: z.coerce.number().int().positive({ message: 'regime name id must be a positive integer' }) });

/** GET (signed in), POST and PUT (admin) /api/regime-names. */
export function regimeNamesRouter(deps: AppDeps): Router {
  const router = Router();
  router.get('/regime-names', async (_req, res) => {
    res.json({ names: await listRegimeNames(deps.db) });
  });
  router.post('/regime-names', async (req, res) => {
    res.status(201).json({ name: await createRegimeName(deps.db, req.body, auditContext(req)) });
  });
  router.put('/regime-names/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ name: await updateRegimeName(deps.db, id, req.body, auditContext(req)) });
  });
  return router;
}
