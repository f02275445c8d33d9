import busboy from 'busboy';
import { Router, type Request } from 'express';
import type { Readable } from 'node:stream';
import { z } from 'zod';
import type { AppDeps } from '../app.ts';
import { AppError, badRequest } from '../errors.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import { retryMember } from '../services/pipeline.ts';
import { acceptUpload, getRun, listRunMembers, listRuns, type RunsDeps } from '../services/runs.ts';

const idParam = z.object({ id: z.uuid({ message: 'run id must be a UUID' }) });
/** Optional form field "model", sent before the file: the desk's name for the model when the file's own is unhelpful. */
const modelField = z
  .string()
  .trim()
  .max(40, 'the model name is at most 40 characters')
  .regex(/^[\w .+-]*$/, 'the model name may hold letters, digits, spaces and . + - _')
  .optional()
  .transform((v) => (v ? v : undefined));
const memberParam = idParam.extend({ member: z.coerce.number().int().min(0).max(9999) });

/** GET /api/runs, GET /api/runs/:id, POST /api/runs (multipart, field "file"). */
export function runsRouter(deps: AppDeps): Router {
  const router = Router();
  const services: RunsDeps = { db: deps.db, config: deps.config, queue: deps.queue, logger: deps.logger };

  router.get('/runs', async (_req, res) => {
    res.json({ runs: await listRuns(deps.db) });
  });

  router.get('/runs/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ run: await getRun(deps.db, id) });
  });

  router.post('/runs', async (req, res) => {
    const user = currentUser(req);
    const audit = auditContext(req);
    const result = await receiveSingleFile(req, (stream, fileName, fields) =>
      acceptUpload(services, stream, { fileName, userId: user.id, audit, model: modelField.parse(fields.model) }),
    );
    res.status(result.duplicate ? 200 : 201).json(result);
  });

  router.get('/runs/:id/members', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ members: await listRunMembers(deps.db, id) });
  });

  router.post('/runs/:id/members/:member/retry', async (req, res) => {
    const { id, member } = memberParam.parse(req.params);
    if (!(await retryMember(services, id, member, auditContext(req)))) {
      throw new AppError(409, 'not_failed', 'Only a member that failed can be retried.');
    }
    res.status(202).json({ retried: { runId: id, member } });
  });

  return router;
}

/** Streams the one file of a multipart request into `handle`, with the text fields sent before it; other parts are ignored. */
function receiveSingleFile<T>(req: Request, handle: (stream: Readable, fileName: string, fields: Record<string, string>) => Promise<T>): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    if (!req.is('multipart/form-data')) {
      reject(badRequest('Send the file as multipart/form-data in a field named "file".'));
      return;
    }
    let bb: busboy.Busboy;
    try {
      bb = busboy({ headers: req.headers, limits: { files: 1, fields: 10 } });
    } catch (err) {
      reject(badRequest(`The upload is not well-formed multipart: ${(err as Error).message}`));
      return;
    }
    let work: Promise<T> | null = null;
    const fields: Record<string, string> = {};
    bb.on('field', (name, value) => {
      if (!work) fields[name] = value;
    });
    bb.on('file', (field, stream, info) => {
      if (field !== 'file' || work) {
        stream.resume();
        return;
      }
      try {
        work = handle(stream, info.filename ?? 'upload', fields);
      } catch (err) {
        stream.resume();
        reject(err);
        return;
      }
      work.then(resolve, (err) => {
        stream.resume();
        reject(err);
      });
    });
    bb.on('error', (err) => reject(badRequest(`The upload is not well-formed multipart: ${(err as Error).message}`)));
    bb.on('close', () => {
      if (!work) reject(badRequest('No file was sent: put the model run in a form field named "file".'));
    });
    req.on('aborted', () => reject(new AppError(400, 'upload_aborted', 'The upload was interrupted. Nothing was stored.')));
    req.pipe(bb);
  });
}
