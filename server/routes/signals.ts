import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../app.ts';
import { listRunSignals } from '../services/signals.ts';

const params = z.object({ id: z.uuid({ message: 'run id must be a UUID' }) });
const query = z.object({ member: z.coerce.number().int().min(0).max(9999).optional() });

/** GET /api/runs/:id/signals[?member=N] (signed-in): { rows } (shared/api/signals.ts). */
export function signalsRouter({ db }: AppDeps): Router {
  const router = Router();
  router.get('/runs/:id/signals', async (req, res) => {
    const { id } = params.parse(req.params);
    const { member } = query.parse(req.query);
    res.json({ rows: await listRunSignals(db.db, id, member) });
  });
  return router;
}
