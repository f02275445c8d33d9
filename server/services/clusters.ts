/**
 * Scenario clusters of an ensemble run (SCIENCE.md section 6): the 500 hPa geopotential of every
 * member at one step, read from the stored file, grouped by server/science/clusters.ts. A
 * clustering is stored once per (run, step, k, seed): the method is deterministic, so asking
 * again returns the stored row.
 */
import { and, desc, eq } from 'drizzle-orm';
import type { ClusterMeanFields, ClusteringDetail, ClusteringRequest, ClusteringSummary } from '@shared/api/clusters.ts';
import { DEFAULT_CLUSTER_SEED } from '@shared/api/clusters.ts';
import type { Config } from '../config.ts';
import type { DbHandle } from '../db/client.ts';
import { runClusterings, runs } from '../db/schema.ts';
import { AppError, notFound, unprocessable } from '../errors.ts';
import { IngestError, openRun, STANDARD_GRAVITY } from '../ingest/index.ts';
import { ClusterInputError, clusterEnsemble } from '../science/clusters.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';
import { runFilePath } from './storage.ts';

type AuditMeta = Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;
type ClusteringRow = typeof runClusterings.$inferSelect;

const LEVEL_PA = 50000;
/** Points kept per map: a cluster's mean field is thinned to about this many for storage and display. */
const MAP_POINTS = 4000;

export function toClusteringSummary(row: ClusteringRow): ClusteringSummary {
  return {
    id: row.id,
    runId: row.runId,
    step: row.step,
    k: row.k,
    seed: row.seed,
    silhouette: row.silhouette,
    explainedVariance: row.explainedVariance,
    clusters: row.clusters as ClusteringSummary['clusters'],
    createdAt: row.createdAt.toISOString(),
  };
}

export async function listClusterings(db: DbHandle, runId: string): Promise<ClusteringSummary[]> {
  const rows = await db.db.select().from(runClusterings).where(eq(runClusterings.runId, runId)).orderBy(desc(runClusterings.createdAt));
  return rows.map(toClusteringSummary);
}

export async function getClustering(db: DbHandle, id: string): Promise<ClusteringDetail> {
  const [row] = await db.db.select().from(runClusterings).where(eq(runClusterings.id, id));
  if (!row) throw notFound('No clustering with that id.');
  return { ...toClusteringSummary(row), meanFields: row.meanFields as ClusterMeanFields };
}

/** Clusters a ready ensemble run at one step; returns the stored clustering and whether it is new. */
export async function createClustering(
  deps: { db: DbHandle; config: Config },
  runId: string,
  request: ClusteringRequest,
  meta: { userId: string | null; audit: AuditMeta },
): Promise<{ clustering: ClusteringDetail; created: boolean }> {
  const { db } = deps;
  const [run] = await db.db.select().from(runs).where(eq(runs.id, runId));
  if (!run) throw notFound('No run with that id.');
  if (!run.isEnsemble) throw unprocessable('Only an ensemble run can be clustered: this run has one member.');
  if (run.state !== 'ready') throw new AppError(409, 'not_ready', `The run is ${run.state}; cluster it once it is ready.`);
  const steps = run.steps ?? [];
  const step = request.step ?? steps[Math.floor((steps.length - 1) / 2)];
  if (step === undefined || !steps.includes(step)) {
    throw unprocessable(`The run has no step ${request.step} h; its steps are ${steps.join(', ')} h.`);
  }
  const seed = request.seed ?? DEFAULT_CLUSTER_SEED;
  const key = and(eq(runClusterings.runId, runId), eq(runClusterings.step, step), eq(runClusterings.k, request.k), eq(runClusterings.seed, seed));
  const [existing] = await db.db.select().from(runClusterings).where(key);
  if (existing) return { clustering: { ...toClusteringSummary(existing), meanFields: existing.meanFields as ClusterMeanFields }, created: false };

  const { heights, lat, lon, members } = await read500hPaHeights(runFilePath(deps.config.storageDir, run.checksum), step);
  let result;
  try {
    result = clusterEnsemble(heights, lat, { k: request.k, seed });
  } catch (err) {
    if (err instanceof ClusterInputError) throw unprocessable(err.message);
    throw err;
  }
  const clusters = result.clusters.map((c) => ({ id: c.id, members: c.members.map((m) => members[m]), size: c.size }));
  const meanFields = thinnedMeanFields(result.clusters.map((c) => c.meanField), lat, lon);

  const row = await db.db.transaction(async (tx) => {
    const [inserted] = await tx
      .insert(runClusterings)
      .values({
        runId,
        step,
        k: request.k,
        seed,
        silhouette: result.silhouette,
        explainedVariance: Array.from(result.explainedVariance),
        clusters,
        meanFields,
        createdBy: meta.userId,
      })
      .onConflictDoNothing()
      .returning();
    if (!inserted) return null;
    await recordAudit(tx, {
      ...meta.audit,
      action: 'clustering.create',
      objectType: 'run_clustering',
      objectId: inserted.id,
      detail: { runId, step, k: request.k, seed, silhouette: result.silhouette, sizes: clusters.map((c) => c.size) },
    });
    return inserted;
  });
  // Someone else stored the same clustering a moment earlier: answer with theirs.
  const stored = row ?? (await db.db.select().from(runClusterings).where(key))[0];
  return { clustering: { ...toClusteringSummary(stored), meanFields: stored.meanFields as ClusterMeanFields }, created: row !== null };
}

/** Every member's 500 hPa geopotential height (gpm) at one step, [lat][lon]. */
async function read500hPaHeights(file: string, step: number) {
  let reader;
  try {
    reader = await openRun(file);
  } catch (err) {
    if (err instanceof IngestError) throw unprocessable(`The stored run cannot be read: ${err.message}`);
    throw err;
  }
  try {
    const { axes, members } = reader.info;
    const level = Array.from(axes.levels).findIndex((p) => Math.abs(p - LEVEL_PA) < 1);
    if (level < 0) throw unprocessable('The run has no 500 hPa level: clustering uses the 500 hPa geopotential.');
    if (!reader.info.variables.some((v) => v.name === 'z')) throw unprocessable('The run has no geopotential (z): clustering needs it at 500 hPa.');
    const plane = axes.lat.length * axes.lon.length;
    const heights: Float32Array[] = [];
    for (const member of members) {
      const z = await reader.readField('z', member, step);
      const slab = z.subarray(level * plane, (level + 1) * plane);
      const gpm = Float32Array.from(slab, (v) => v / STANDARD_GRAVITY);
      if (gpm.some((v) => !Number.isFinite(v))) throw unprocessable(`Member ${member} has missing 500 hPa geopotential at step ${step} h.`);
      heights.push(gpm);
    }
    return { heights, lat: axes.lat, lon: axes.lon, members };
  } finally {
    await reader.close();
  }
}

/** Each cluster's mean field on every n-th row and column so that a map has about MAP_POINTS points; gpm to 0.1. */
export function thinnedMeanFields(fields: Float32Array[], lat: Float64Array, lon: Float64Array): ClusterMeanFields {
  const stride = Math.max(1, Math.ceil(Math.sqrt((lat.length * lon.length) / MAP_POINTS)));
  const rows = range(lat.length, stride);
  const cols = range(lon.length, stride);
  return {
    units: 'gpm',
    levelHpa: 500,
    lat: rows.map((j) => lat[j]),
    lon: cols.map((i) => lon[i]),
    fields: fields.map((f) => rows.flatMap((j) => cols.map((i) => round1(f[j * lon.length + i])))),
  };
}

function range(n: number, stride: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < n; i += stride) out.push(i);
  return out;
}

function round1(v: number): number | null {
  return Number.isFinite(v) ? Math.round(v * 10) / 10 : null;
}
