import { Router, type Request, type Response } from 'express';
import { z } from 'zod';
import { createSavedViewSchema, scenarioFilterSchema, scenarioPageQuerySchema } from '@shared/api/scenarios.ts';
import type { AppDeps } from '../app.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import { prepareExport, writeCsv, writeXlsx, type ExportRequest } from '../services/scenario-export.ts';
import { createSavedView, deleteSavedView, listSavedViews, scenarioPage, scenarioSummary } from '../services/scenarios.ts';

const sortSchema = scenarioPageQuerySchema.transform((q) => ({ sort: q.sort, dir: q.dir }));
const viewIdParam = z.object({ id: z.uuid({ message: 'a saved view id is a UUID' }) });

function exportName(ext: string): string {
  return `liftwise-scenarios-${new Date().toISOString().slice(0, 16).replace(/[-:T]/g, '')}Z.${ext}`;
}

/**
 * GET /api/scenarios (page), /api/scenarios/summary, /api/scenarios/export.xlsx|csv, and the
 * person's saved views under /api/scenario-views.
 */
export function scenariosRouter(deps: AppDeps): Router {
  const router = Router();
  const db = deps.db.db;

  router.get('/scenarios', async (req, res) => {
    res.json(await scenarioPage(db, scenarioPageQuerySchema.parse(req.query)));
  });

  router.get('/scenarios/summary', async (req, res) => {
    res.json(await scenarioSummary(db, scenarioFilterSchema.parse(req.query)));
  });

  const exportRoute = (format: 'xlsx' | 'csv') => async (req: Request, res: Response) => {
    const request: ExportRequest = {
      filter: scenarioFilterSchema.parse(req.query),
      sort: sortSchema.parse(req.query),
      who: auditContext(req),
      codeVersion: deps.config.codeVersion,
    };
    const prepared = await prepareExport(db, format, request);
    res.setHeader(
      'Content-Type',
      format === 'xlsx' ? 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' : 'text/csv; charset=utf-8',
    );
    res.setHeader('Content-Disposition', `attachment; filename="${exportName(format)}"`);
    res.setHeader('X-Row-Count', String(prepared.total));
    try {
      await (format === 'xlsx' ? writeXlsx : writeCsv)(db, request, prepared, res);
    } catch (err) {
      // The headers are gone: the only honest signal left is a broken download.
      req.log.error({ err }, 'scenario export failed while streaming');
      res.destroy(err as Error);
    }
  };
  router.get('/scenarios/export.xlsx', exportRoute('xlsx'));
  router.get('/scenarios/export.csv', exportRoute('csv'));

  router.get('/scenario-views', async (req, res) => {
    res.json({ views: await listSavedViews(db, currentUser(req).id) });
  });

  router.post('/scenario-views', async (req, res) => {
    const input = createSavedViewSchema.parse(req.body);
    res.status(201).json({ view: await createSavedView(db, currentUser(req).id, input, auditContext(req)) });
  });

  router.delete('/scenario-views/:id', async (req, res) => {
    const { id } = viewIdParam.parse(req.params);
    await deleteSavedView(db, currentUser(req).id, id, auditContext(req));
    res.status(204).end();
  });

  return router;
}
