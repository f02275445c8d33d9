/**
 * The processing chain of a run after its file has been read:
 *   one job per member: for each valid time, QG diagnosis in the thread pool -> omega parts to
 *   the derived store -> a diagnosis row; then the member's derivers (regional signals) run;
 *   when every member is done: the ensemble mean omega, and the run is ready.
 * Every step is idempotent (delivery is at least once) and resumable: a step whose file and row
 * exist is skipped, so a job killed half-way continues where it stopped.
 */
import { and, eq, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { runDiagnostics, runMembers, runs } from '../db/schema.ts';
import { IngestError, openRun, type RunInfo, type RunReader } from '../ingest/index.ts';
import type { OmegaPool } from '../jobs/omega-pool.ts';
import { QUEUE_NAMES, type JobHandler } from '../jobs/queue.ts';
import { QgInputError } from '../science/qg/errors.ts';
import { hasOmega, readOmegaPart, writeOmegaParts, OMEGA_PARTS, type OmegaPart } from './derived-store.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';
import type { RunsDeps } from './runs.ts';
import { runFilePath } from './storage.ts';

export interface MemberJob {
  runId: string;
  member: number;
}

type RunRow = typeof runs.$inferSelect;

/** Work that follows the diagnosis of one member (regional signals, ...). Must be idempotent. */
export type MemberDeriver = (ctx: { deps: PipelineDeps; run: RunRow; member: number; reader: RunReader }) => Promise<void>;

export interface PipelineDeps extends RunsDeps {
  pool: OmegaPool;
  derivers: MemberDeriver[];
}

/** Share of a member's progress that the diagnosis takes when derivers follow it. */
const DIAGNOSIS_SHARE = 0.7;

/** Called once the file has been read: one member row and one job per member. */
export async function startDiagnosis(deps: RunsDeps, runId: string, info: RunInfo): Promise<void> {
  await deps.db.db
    .insert(runMembers)
    .values(info.members.map((member) => ({ runId, member })))
    .onConflictDoNothing();
  await deps.db.db.update(runs).set({ state: 'diagnosing', progress: 0.05, updatedAt: new Date() }).where(eq(runs.id, runId));
  for (const member of info.members) await deps.queue.send(QUEUE_NAMES.processMember, { runId, member } satisfies MemberJob);
}

async function setMember(deps: RunsDeps, job: MemberJob, values: Partial<typeof runMembers.$inferInsert>): Promise<void> {
  await deps.db.db
    .update(runMembers)
    .set({ ...values, updatedAt: new Date() })
    .where(and(eq(runMembers.runId, job.runId), eq(runMembers.member, job.member)));
}

/** Run progress: 5 % for reading, the rest shared equally by the members. */
async function refreshRunProgress(deps: RunsDeps, runId: string): Promise<void> {
  await deps.db.db.execute(sql`
    UPDATE runs SET progress = 0.05 + 0.95 * coalesce((SELECT avg(progress) FROM run_members WHERE run_id = ${runId}), 0),
                    updated_at = now()
    WHERE id = ${runId} AND state IN ('diagnosing', 'deriving')`);
}

async function diagnoseMember(deps: PipelineDeps, run: RunRow, member: number, reader: RunReader): Promise<void> {
  const { info } = reader;
  const hasModelOmega = info.variables.some((v) => v.name === 'w');
  const done = await deps.db.db
    .select({ step: runDiagnostics.step })
    .from(runDiagnostics)
    .where(and(eq(runDiagnostics.runId, run.id), eq(runDiagnostics.member, member)));
  const doneSteps = new Set(done.map((d) => d.step));
  const share = deps.derivers.length ? DIAGNOSIS_SHARE : 1;
  for (const [index, step] of info.steps.entries()) {
    if (doneSteps.has(step) && hasOmega(deps.config.storageDir, run.id, member, step)) continue;
    const [z, t, w] = await Promise.all([
      reader.readField('z', member, step),
      reader.readField('t', member, step),
      hasModelOmega ? reader.readField('w', member, step) : Promise.resolve(null),
    ]);
    const result = await deps.pool.run({ member, step, axes: info.axes, z, t, w });
    await writeOmegaParts(deps.config.storageDir, run.id, member, step, {
      total: result.omega,
      vorticity: result.omegaVorticity,
      thickness: result.omegaThickness,
      qvector: result.omegaQVector,
    });
    const stats = levelStats(result.omega, info);
    await deps.db.db
      .insert(runDiagnostics)
      .values({
        runId: run.id,
        member,
        step,
        f0: result.f0,
        residual: result.residual.total,
        solveMs: result.solveMs,
        sigma: Array.from(result.sigma),
        omegaMin: stats.map((s) => s.min),
        omegaMean: stats.map((s) => s.mean),
        omegaMax: stats.map((s) => s.max),
        correlation: result.patternCorrelation ? result.patternCorrelation.map((c) => c ?? Number.NaN) : null,
        warnings: result.warnings,
      })
      .onConflictDoNothing();
    await setMember(deps, { runId: run.id, member }, { progress: (share * (index + 1)) / info.steps.length });
    await refreshRunProgress(deps, run.id);
  }
}

/** Per-level min, area-weighted mean and max of a [level][lat][lon] field over the interior. */
function levelStats(field: ArrayLike<number>, info: RunInfo): { min: number; mean: number; max: number }[] {
  const { lat, lon, levels } = info.axes;
  const nx = lon.length;
  const ny = lat.length;
  return Array.from(levels, (_p, k) => {
    let min = Infinity;
    let max = -Infinity;
    let sum = 0;
    let weight = 0;
    for (let j = 1; j < ny - 1; j++) {
      const w = Math.cos((lat[j] * Math.PI) / 180);
      for (let i = 1; i < nx - 1; i++) {
        const v = field[k * ny * nx + j * nx + i];
        if (!Number.isFinite(v)) continue;
        if (v < min) min = v;
        if (v > max) max = v;
        sum += w * v;
        weight += w;
      }
    }
    return weight > 0 ? { min, mean: sum / weight, max } : { min: 0, mean: 0, max: 0 };
  });
}

/** Job handler for one member of one run. */
export function processMemberHandler(deps: PipelineDeps): JobHandler<MemberJob> {
  return async (job: PgBoss.JobWithMetadata<MemberJob>) => {
    const { runId, member } = job.data;
    const [run] = await deps.db.db.select().from(runs).where(eq(runs.id, runId));
    if (!run || run.state === 'rejected' || run.state === 'ready') return;
    const [row] = await deps.db.db
      .select()
      .from(runMembers)
      .where(and(eq(runMembers.runId, runId), eq(runMembers.member, member)));
    if (!row) return;
    if (row.state === 'done') {
      await finishRunIfComplete(deps, runId);
      return;
    }
    await setMember(deps, job.data, { state: 'diagnosing', attempts: row.attempts + 1, message: null });
    let reader: RunReader | null = null;
    try {
      reader = await openRun(runFilePath(deps.config.storageDir, run.checksum));
      await diagnoseMember(deps, run, member, reader);
      if (deps.derivers.length) {
        await setMember(deps, job.data, { state: 'deriving' });
        for (const derive of deps.derivers) await derive({ deps, run, member, reader });
      }
      await setMember(deps, job.data, { state: 'done', progress: 1 });
    } catch (err) {
      const permanent = err instanceof QgInputError || err instanceof IngestError;
      if (permanent || job.retryCount >= job.retryLimit) {
        const message = permanent ? (err as Error).message : `failed after ${job.retryCount + 1} attempts: ${(err as Error).message}`;
        await setMember(deps, job.data, { state: 'failed', message });
      } else {
        await setMember(deps, job.data, { state: 'waiting', message: `attempt ${job.retryCount + 1} failed, retrying: ${(err as Error).message}` });
        throw err;
      }
    } finally {
      await reader?.close();
    }
    await refreshRunProgress(deps, runId);
    await finishRunIfComplete(deps, runId);
  };
}

/**
 * When every member is done: the ensemble mean omega (ensembles only), then the run is ready.
 * When some failed and none is still working, the run says so and waits for a retry.
 */
export async function finishRunIfComplete(deps: RunsDeps, runId: string): Promise<void> {
  const members = await deps.db.db.select().from(runMembers).where(eq(runMembers.runId, runId));
  if (members.length === 0) return;
  const failed = members.filter((m) => m.state === 'failed');
  const working = members.filter((m) => m.state !== 'done' && m.state !== 'failed');
  if (working.length > 0) return;
  if (failed.length > 0) {
    const list = failed.map((m) => m.member).join(', ');
    await deps.db.db
      .update(runs)
      .set({ message: `${failed.length} member(s) failed (${list}): see each member's message and retry it from the run view.`, updatedAt: new Date() })
      .where(eq(runs.id, runId));
    return;
  }
  const [run] = await deps.db.db.select().from(runs).where(eq(runs.id, runId));
  if (!run || run.state === 'ready') return;
  if (members.length > 1 && run.steps) await writeEnsembleMean(deps, run, members.map((m) => m.member));
  await deps.db.db
    .update(runs)
    .set({ state: 'ready', progress: 1, message: null, updatedAt: new Date() })
    .where(and(eq(runs.id, runId), sql`${runs.state} <> 'ready'`));
}

async function writeEnsembleMean(deps: RunsDeps, run: RunRow, members: number[]): Promise<void> {
  const storage = deps.config.storageDir;
  for (const step of run.steps ?? []) {
    if (hasOmega(storage, run.id, 'mean', step)) continue;
    const sums = {} as Record<OmegaPart, Float64Array>;
    for (const part of OMEGA_PARTS) {
      let sum: Float64Array | null = null;
      for (const member of members) {
        const field = await readOmegaPart(storage, run.id, member, step, part);
        sum ??= new Float64Array(field.length);
        for (let i = 0; i < field.length; i++) sum[i] += field[i];
      }
      for (let i = 0; i < sum!.length; i++) sum![i] /= members.length;
      sums[part] = sum!;
    }
    await writeOmegaParts(storage, run.id, 'mean', step, sums);
  }
}

/** A failed member goes back to waiting and gets a fresh job. */
export async function retryMember(
  deps: RunsDeps,
  runId: string,
  member: number,
  audit: Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>,
): Promise<boolean> {
  const updated = await deps.db.db.transaction(async (tx) => {
    const rows = await tx
      .update(runMembers)
      .set({ state: 'waiting', message: null, progress: 0, updatedAt: new Date() })
      .where(and(eq(runMembers.runId, runId), eq(runMembers.member, member), eq(runMembers.state, 'failed')))
      .returning();
    if (rows.length) await recordAudit(tx, { ...audit, action: 'run.member_retry', objectType: 'run', objectId: runId, detail: { member } });
    return rows;
  });
  if (updated.length === 0) return false;
  await deps.db.db.update(runs).set({ message: null, updatedAt: new Date() }).where(eq(runs.id, runId));
  await deps.queue.send(QUEUE_NAMES.processMember, { runId, member } satisfies MemberJob);
  return true;
}
