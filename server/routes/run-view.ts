import { Router } from 'express';
import { z, type ZodType } from 'zod';
import { diagnosticsQuerySchema, omegaQuerySchema, sectionQuerySchema } from '@shared/api/run-view.ts';
import type { AppDeps } from '../app.ts';
import { badRequest } from '../errors.ts';
import { getDiagnostics, getOmegaMap, getSection, type RunViewDeps } from '../services/run-view.ts';

const idParam = z.object({ id: z.uuid({ message: 'run id must be a UUID' }) });

/** Parses with the schema or answers 400 naming each field at fault in plain words. */
function parseOr400<T>(schema: ZodType<T>, value: unknown): T {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const parts = result.error.issues.map((i) => {
    if (i.code === 'unrecognized_keys') return `unknown query parameter(s): ${i.keys.join(', ')}`;
    const where = i.path.join('.');
    return where ? `${where}: ${i.message}` : i.message;
  });
  throw badRequest(parts.join('; '), result.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })));
}

/** GET /api/runs/:id/diagnostics, /omega, /section: read-only, any signed-in role. */
export function runViewRouter(deps: AppDeps): Router {
  const router = Router();
  const services: RunViewDeps = { db: deps.db, storageDir: deps.config.storageDir };

  router.get('/runs/:id/diagnostics', async (req, res) => {
    const { id } = parseOr400(idParam, req.params);
    const q = parseOr400(diagnosticsQuerySchema, req.query);
    res.json(await getDiagnostics(services, id, q.member));
  });

  router.get('/runs/:id/omega', async (req, res) => {
    const { id } = parseOr400(idParam, req.params);
    const q = parseOr400(omegaQuerySchema, req.query);
    res.json(await getOmegaMap(services, id, q));
  });

  router.get('/runs/:id/section', async (req, res) => {
    const { id } = parseOr400(idParam, req.params);
    const q = parseOr400(sectionQuerySchema, req.query);
    res.json(await getSection(services, id, q));
  });

  return router;
}
