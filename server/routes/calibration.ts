import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../app.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import { createCalibrationSet, listCalibrationSets } from '../services/calibration.ts';

/** The body of POST /api/calibration-sets: a base version and the parameters to change. */
const newSetSchema = z
  .object({
    basedOn: z.number().int().min(1),
    name: z.string().trim().max(200).optional(),
    note: z.string().max(4000).optional(),
    // Checked against shared/calibration.ts after merging with the base version (422 with each problem).
    parameters: z.record(z.string(), z.unknown()).default({}),
  })
  .strict();

/**
 * GET /api/calibration-sets (signed-in): every version, newest first.
 * POST /api/calibration-sets (meteorologist): a new version from a base version and a full or
 * partial parameter set. There is no PUT: a version is never edited.
 */
export function calibrationRouter({ db }: AppDeps): Router {
  const router = Router();
  router.get('/calibration-sets', async (_req, res) => {
    res.json({ sets: await listCalibrationSets(db.db) });
  });
  router.post('/calibration-sets', async (req, res) => {
    const user = currentUser(req);
    const body = newSetSchema.parse(req.body);
    const set = await createCalibrationSet(db.db, { ...body, parameters: body.parameters as never }, user.id, auditContext(req));
    res.status(201).json({ set });
  });
  return router;
}
