import { Router } from 'express';
import { z } from 'zod';
import type { AppDeps } from '../app.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import {
  exportSnapshotJson,
  exportSnapshotXlsx,
  getSnapshot,
  listSnapshots,
  publicKeyInfo,
  sealSnapshotNow,
  snapshotFiltersSchema,
  snapshotListQuerySchema,
  verifyOneSnapshot,
  verifySnapshotChain,
  type SnapshotDeps,
} from '../services/snapshots.ts';

const idParam = z.object({ id: z.coerce.number({ message: 'a snapshot id is a whole number' }).int().positive().max(Number.MAX_SAFE_INTEGER) });
const sealBody = z.object({ filters: snapshotFiltersSchema.optional() }).strict();

/**
 * Sealed snapshots: POST /api/snapshots (risk) seals; list, document, verify, chain, exports
 * (risk, admin); the public key (signed-in). Literal paths come before /:id.
 */
export function snapshotsRouter(deps: AppDeps): Router {
  const router = Router();
  const services: SnapshotDeps = { db: deps.db, config: deps.config, logger: deps.logger };

  router.post('/snapshots', async (req, res) => {
    const { filters } = sealBody.parse(req.body ?? {});
    const user = currentUser(req);
    const snapshot = await sealSnapshotNow(services, {
      filters: filters ?? {},
      sealedById: user.id,
      sealedBy: user.name,
      audit: auditContext(req),
      trigger: 'manual',
    });
    res.status(201).json({ snapshot });
  });

  router.get('/snapshots', async (req, res) => {
    res.json(await listSnapshots(deps.db, snapshotListQuerySchema.parse(req.query)));
  });

  router.get('/snapshots/public-key', (_req, res) => {
    res.json(publicKeyInfo(deps.config));
  });

  router.get('/snapshots/verify-chain', async (_req, res) => {
    res.json(await verifySnapshotChain(services));
  });

  router.get('/snapshots/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ snapshot: await getSnapshot(deps.db, id) });
  });

  router.get('/snapshots/:id/verify', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json(await verifyOneSnapshot(services, id));
  });

  router.get('/snapshots/:id/export.json', async (req, res) => {
    const { id } = idParam.parse(req.params);
    const file = await exportSnapshotJson(services, id, auditContext(req));
    res.setHeader('Content-Disposition', `attachment; filename="${file.fileName}"`);
    res.type('application/json').send(file.text);
  });

  router.get('/snapshots/:id/export.xlsx', async (req, res) => {
    const { id } = idParam.parse(req.params);
    const file = await exportSnapshotXlsx(services, id, auditContext(req));
    res.setHeader('Content-Disposition', `attachment; filename="${file.fileName}"`);
    res.type('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet').send(file.data);
  });

  return router;
}
