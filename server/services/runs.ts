/**
 * Model runs: accepting an upload, reading it into the canonical grid, listing runs.
 */
import type { Readable } from 'node:stream';
import { desc, eq, inArray } from 'drizzle-orm';
import type { Run } from '@shared/api/runs.ts';
import type { Config } from '../config.ts';
import type { DbHandle } from '../db/client.ts';
import { runMembers, runs, type RunGrid } from '../db/schema.ts';
import { AppError, notFound } from '../errors.ts';
import { IngestError, openRun, sniffFormat, type RunInfo } from '../ingest/index.ts';
import type { JobHandler, JobQueue, RunJob } from '../jobs/queue.ts';
import { QUEUE_NAMES } from '../jobs/queue.ts';
import type { Logger } from '../logger.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';
import { startDiagnosis } from './pipeline.ts';
import { discardUpload, keepUpload, runFilePath, streamToStorage } from './storage.ts';

export interface RunsDeps {
  db: DbHandle;
  config: Config;
  queue: JobQueue;
  logger: Logger;
}

type RunRow = typeof runs.$inferSelect;

export function toRunDto(row: RunRow): Run {
  return {
    ...row,
    cycle: row.cycle ? row.cycle.toISOString() : null,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

export async function listRuns(db: DbHandle, limit = 200): Promise<Run[]> {
  const rows = await db.db.select().from(runs).orderBy(desc(runs.createdAt)).limit(limit);
  return rows.map(toRunDto);
}

export async function getRun(db: DbHandle, id: string): Promise<Run> {
  const [row] = await db.db.select().from(runs).where(eq(runs.id, id));
  if (!row) throw notFound('No run with that id.');
  return toRunDto(row);
}

/**
 * Stores an uploaded file under its SHA-256 and queues its reading. The same file uploaded again
 * is answered with the run that already exists. A file that is no model run at all is refused at
 * once, before anything is kept.
 */
export async function acceptUpload(
  deps: RunsDeps,
  source: Readable,
  meta: {
    fileName: string;
    userId: string | null;
    audit: Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;
    /** the desk's name for the model, overriding the file's */
    model?: string;
  },
): Promise<{ run: Run; duplicate: boolean }> {
  const { db, config } = deps;
  const upload = await streamToStorage(source, config.storageDir, config.uploadLimitBytes);
  const existing = await findByChecksum(db, upload.checksum);
  if (existing) {
    await discardUpload(upload);
    await recordAudit(db.db, { ...meta.audit, action: 'run.upload_duplicate', objectType: 'run', objectId: existing.id, detail: { checksum: upload.checksum } });
    return { run: toRunDto(existing), duplicate: true };
  }
  let format: string;
  try {
    format = await sniffFormat(upload.tempPath);
  } catch (err) {
    await discardUpload(upload);
    if (err instanceof IngestError) {
      await recordAudit(db.db, { ...meta.audit, action: 'run.upload_refused', detail: { reason: err.message, sizeBytes: upload.sizeBytes } });
      throw new AppError(422, 'not_a_model_run', err.message);
    }
    throw err;
  }
  await keepUpload(upload, config.storageDir);
  const inserted = await db.db.transaction(async (tx) => {
    const [row] = await tx
      .insert(runs)
      .values({
        checksum: upload.checksum,
        sizeBytes: upload.sizeBytes,
        fileName: cleanFileName(meta.fileName),
        format,
        uploadedBy: meta.userId,
        model: meta.model ?? null,
      })
      .onConflictDoNothing({ target: runs.checksum })
      .returning();
    if (row) {
      await recordAudit(tx, {
        ...meta.audit,
        action: 'run.upload',
        objectType: 'run',
        objectId: row.id,
        detail: { checksum: upload.checksum, sizeBytes: upload.sizeBytes, format, fileName: row.fileName },
      });
    }
    return row;
  });
  if (!inserted) {
    // A concurrent upload of the same file won the race.
    return { run: toRunDto((await findByChecksum(db, upload.checksum))!), duplicate: true };
  }
  await deps.queue.send(QUEUE_NAMES.readRun, { runId: inserted.id } satisfies RunJob);
  return { run: toRunDto(inserted), duplicate: false };
}

async function findByChecksum(db: DbHandle, checksum: string): Promise<RunRow | undefined> {
  const [row] = await db.db.select().from(runs).where(eq(runs.checksum, checksum));
  return row;
}

/** Display only: strip any path and control characters, keep it short. */
function cleanFileName(name: string): string {
  const base = name.split(/[\\/]/).pop() ?? '';
  // eslint-disable-next-line no-control-regex
  const clean = base.replace(/[\u0000-\u001f\u007f]/g, '').trim().slice(0, 200);
  return clean || 'upload';
}

/** The canonical grid must carry what the QG diagnosis needs (SCIENCE.md section 1). */
export function checkRunUsable(info: RunInfo): void {
  const names = new Set(info.variables.map((v) => v.name));
  const missing = (['z', 't'] as const).filter((n) => !names.has(n));
  if (missing.length) {
    const words = missing.map((n) => (n === 'z' ? 'geopotential (or geopotential height)' : 'temperature'));
    throw new IngestError('variables', `the file has no ${words.join(' and no ')} on pressure levels; both are needed`);
  }
  if (info.axes.levels.length < 3) {
    throw new IngestError('levels', `the file has ${info.axes.levels.length} pressure level(s); at least 3 are needed`);
  }
  if (info.steps.length === 0) throw new IngestError('time', 'the file has no forecast steps');
}

function describeGrid(info: RunInfo): RunGrid {
  const { lat, lon } = info.axes;
  return {
    nlat: lat.length,
    nlon: lon.length,
    latFirst: lat[lat.length - 1],
    latLast: lat[0],
    lonFirst: lon[0],
    lonLast: lon[lon.length - 1],
    dlat: lat.length > 1 ? Math.abs(lat[1] - lat[0]) : 0,
    dlon: lon.length > 1 ? Math.abs(lon[1] - lon[0]) : 0,
  };
}

async function setRun(db: DbHandle, id: string, values: Partial<typeof runs.$inferInsert>): Promise<void> {
  await db.db.update(runs).set({ ...values, updatedAt: new Date() }).where(eq(runs.id, id));
}

/** Job handler: reads the stored file's headers into the run row, then starts the diagnosis. Idempotent: a run past reading is left alone. */
export function readRunHandler(deps: RunsDeps): JobHandler<RunJob> {
  return async (job) => {
    const { db, config } = deps;
    const [row] = await db.db
      .select()
      .from(runs)
      .where(eq(runs.id, job.data.runId));
    if (!row || !['received', 'reading'].includes(row.state)) return;
    await setRun(db, row.id, { state: 'reading', progress: 0.02, message: null });
    try {
      const reader = await openRun(runFilePath(config.storageDir, row.checksum));
      try {
        const info = reader.info;
        checkRunUsable(info);
        await setRun(db, row.id, {
          format: info.format,
          model: row.model ?? info.model,
          cycle: new Date(info.referenceTime),
          members: info.members,
          isEnsemble: info.isEnsemble,
          steps: info.steps,
          levelsHpa: Array.from(info.axes.levels, (p) => p / 100),
          variables: info.variables.map((v) => v.name),
          grid: describeGrid(info),
          progress: 0.05,
        });
        await startDiagnosis(deps, row.id, info);
      } finally {
        await reader.close();
      }
    } catch (err) {
      if (err instanceof IngestError) {
        await setRun(db, row.id, { state: 'rejected', message: err.message });
        return;
      }
      if (job.retryCount >= job.retryLimit) {
        await setRun(db, row.id, { state: 'rejected', message: `The file could not be read after ${job.retryCount + 1} attempts: ${(err as Error).message}` });
        return;
      }
      throw err;
    }
  };
}

export async function runsByIds(db: DbHandle, ids: string[]): Promise<Run[]> {
  if (ids.length === 0) return [];
  return (await db.db.select().from(runs).where(inArray(runs.id, ids))).map(toRunDto);
}

export async function listRunMembers(db: DbHandle, runId: string) {
  const rows = await db.db.select().from(runMembers).where(eq(runMembers.runId, runId)).orderBy(runMembers.member);
  return rows.map((m) => ({ member: m.member, state: m.state, progress: m.progress, message: m.message, attempts: m.attempts, updatedAt: m.updatedAt.toISOString() }));
}
