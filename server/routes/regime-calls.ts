import { Router, type RequestHandler } from 'express';
import { z } from 'zod';
import { correctionSchema } from '@shared/api/regime-calls.ts';
import type { AppDeps } from '../app.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import { conflict } from '../errors.ts';
import {
  createDraft,
  deleteDraft,
  getCall,
  isImmutableRefusal,
  listCalls,
  previewCall,
  publishCall,
  startCorrection,
  updateDraft,
} from '../services/regime-calls.ts';
import { sealAfterPublish } from '../services/snapshots.ts';

const idParam = z.object({ id: z.uuid({ message: 'regime call id must be a UUID' }) });

/** The database's immutability trigger answered: tell the client in plain words. */
function immutable(handler: RequestHandler): RequestHandler {
  return async (req, res, next) => {
    try {
      await handler(req, res, next);
    } catch (err) {
      next(isImmutableRefusal(err) ? conflict('This version is published and cannot be changed: start a correction instead.') : err);
    }
  };
}

/** /api/regime-calls: list, versions, drafts, preview, publish, corrections. */
export function regimeCallsRouter(deps: AppDeps): Router {
  const router = Router();

  router.get('/regime-calls', async (_req, res) => {
    res.json({ calls: await listCalls(deps.db) });
  });

  router.post('/regime-calls', async (req, res) => {
    res.status(201).json({ call: await createDraft(deps.db, req.body ?? {}, currentUser(req).id, auditContext(req)) });
  });

  router.get('/regime-calls/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json(await getCall(deps.db, id));
  });

  router.put(
    '/regime-calls/:id',
    immutable(async (req, res) => {
      const { id } = idParam.parse(req.params);
      res.json({ call: await updateDraft(deps.db, id, req.body ?? {}, auditContext(req)) });
    }),
  );

  router.delete(
    '/regime-calls/:id',
    immutable(async (req, res) => {
      const { id } = idParam.parse(req.params);
      await deleteDraft(deps.db, id, auditContext(req));
      res.status(204).end();
    }),
  );

  router.get('/regime-calls/:id/preview', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json(await previewCall(deps, id));
  });

  router.post(
    '/regime-calls/:id/publish',
    immutable(async (req, res) => {
      const { id } = idParam.parse(req.params);
      const result = await publishCall(deps, id, auditContext(req));
      // Development and tests deliver at once; elsewhere the sender's next tick would too.
      if (deps.mail) void deps.mail.sender.kick();
      // With SNAPSHOT_AFTER_PUBLISH, the published state is sealed once the publish has committed.
      await sealAfterPublish(deps, { callId: id, requestId: req.id });
      res.json(result);
    }),
  );

  router.post('/regime-calls/:id/corrections', async (req, res) => {
    const { id } = idParam.parse(req.params);
    const { reason } = correctionSchema.parse(req.body ?? {});
    res.status(201).json({ call: await startCorrection(deps.db, id, reason, currentUser(req).id, auditContext(req)) });
  });

  return router;
}
