/**
 * What a snapshot seals: for the chosen filters, the scenario rows (signal rows with their run,
 * member, region and weight), the weighted P10/P50/P90 per run, region, day and quantity, the
 * latest published regime call version, the runs with their input checksums, the calibration set
 * versions, the code version and the time. Everything is plain JSON (ISO strings for times,
 * finite numbers), in a fixed order, so the same database state gives the same bytes.
 */
import { and, asc, desc, eq, gte, inArray, lte, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { CAUTIONS } from '@shared/cautions.ts';
import { callWeightsSchema, type CallWeights } from '@shared/api/weights.ts';
import { calibrationSets, regimeCalls, regions, runClusterings, runs, signalRows } from '../db/schema.ts';
import { unprocessable } from '../errors.ts';
import { scenarioSpread } from '../science/statistics.ts';
import type { JsonObject, JsonValue } from '../seal/canonical-json.ts';
import type { DbExecutor } from './audit.ts';
import { memberPercents, type CallClustering } from './call-weights.ts';

const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'a day as YYYY-MM-DD');

/** POST /api/snapshots body's `filters`. Left out: the latest cycle of each model, every region and day. */
export const snapshotFiltersSchema = z
  .object({
    regionIds: z.array(z.string().min(1).max(100)).max(500).optional(),
    kind: z.enum(['hydro', 'solar']).optional(),
    dayFrom: day.optional(),
    dayTo: day.optional(),
    models: z.array(z.string().min(1).max(100)).max(50).optional(),
    runIds: z.array(z.uuid({ message: 'run ids are UUIDs' })).max(200).optional(),
  })
  .strict()
  .refine((f) => !f.dayFrom || !f.dayTo || f.dayFrom <= f.dayTo, { message: 'dayFrom must not be after dayTo', path: ['dayFrom'] });
export type SnapshotFilters = z.infer<typeof snapshotFiltersSchema>;

/** The quantities summarised, with the units the rows carry (shared/api/signals.ts). */
export const SNAPSHOT_QUANTITIES = {
  precipMm: 'mm/day',
  snowShare: 'fraction 0..1',
  cloudPct: '%',
  ghiKwhM2: 'kWh/m²/day',
  solarGwh: 'GWh/day',
  inflowGwh: 'GWh/day',
} as const;
export type SnapshotQuantity = keyof typeof SNAPSHOT_QUANTITIES;
const QUANTITIES = Object.keys(SNAPSHOT_QUANTITIES) as SnapshotQuantity[];

/** Guard against sealing something no one could open: the document is held in memory and in one row. */
export const MAX_SNAPSHOT_ROWS = 200_000;

export interface ScenarioKey {
  runId: string;
  member: number;
}

/** A published call's weights with the clustering its cluster basis refers to. */
export interface CallWeighting {
  weights: CallWeights;
  clustering: CallClustering | null;
}

const scenarioKey = (s: ScenarioKey) => `${s.runId}:${s.member}`;

/**
 * Scenario weights from the latest published regime call (shared/api/weights.ts), normalised to
 * sum 1 within each run: a run the call names gets the call's weights (a cluster's weight shared
 * equally by its members; members the call does not mention get 0); a run the call does not
 * name, or no call at all, gets equal weights. Percentiles are taken across a run's members, so
 * this per-run normalisation is what the percentiles see.
 * The call is read by memberPercents (call-weights.ts), as for the traders' grid, which keeps the
 * call's weights across runs instead (it shows % of the whole scope).
 */
export function scenarioWeightsFromCall(scenarios: readonly ScenarioKey[], call: CallWeighting | null): Map<string, number> {
  const { pct: raw, namedRuns } = call ? memberPercents(call.weights, call.clustering) : { pct: new Map<string, number>(), namedRuns: new Set<string>() };
  const byRun = new Map<string, ScenarioKey[]>();
  for (const s of scenarios) {
    const list = byRun.get(s.runId) ?? [];
    if (!list.some((x) => x.member === s.member)) list.push(s);
    byRun.set(s.runId, list);
  }
  const out = new Map<string, number>();
  for (const [runId, members] of byRun) {
    const named = namedRuns.has(runId);
    const values = members.map((s) => (named ? (raw.get(scenarioKey(s)) ?? 0) : 1));
    const total = values.reduce((a, b) => a + b, 0);
    members.forEach((s, i) => out.set(scenarioKey(s), total > 0 ? values[i] / total : 0));
  }
  return out;
}

type CallRow = typeof regimeCalls.$inferSelect;

/** The latest published regime call, or null when none was published. */
export async function latestPublishedCall(db: DbExecutor): Promise<CallRow | null> {
  const [row] = await db
    .select()
    .from(regimeCalls)
    .where(eq(regimeCalls.state, 'published'))
    .orderBy(desc(regimeCalls.publishedAt), desc(regimeCalls.version))
    .limit(1);
  return row ?? null;
}

async function callWeighting(db: DbExecutor, call: CallRow | null): Promise<{ weighting: CallWeighting | null; note: string }> {
  if (!call) return { weighting: null, note: 'no published regime call: equal weights within each run' };
  const parsed = callWeightsSchema.safeParse(call.weights);
  if (!parsed.success) return { weighting: null, note: `the published call ${call.id} holds unreadable weights: equal weights within each run` };
  let clustering: CallWeighting['clustering'] = null;
  if (parsed.data.basis === 'cluster') {
    const [row] = await db.select().from(runClusterings).where(eq(runClusterings.id, parsed.data.clusteringId!));
    if (!row) return { weighting: null, note: `the clustering ${parsed.data.clusteringId} of the published call is missing: equal weights within each run` };
    const clusters = Array.isArray(row.clusters) ? (row.clusters as { id: string | number; members: number[] }[]) : [];
    clustering = { runId: row.runId, clusters: clusters.map((c) => ({ id: String(c.id), members: c.members ?? [] })) };
  }
  return { weighting: { weights: parsed.data, clustering }, note: `weights of regime call ${call.id} version ${call.version} (${parsed.data.basis} basis), normalised within each run` };
}

const iso = (d: Date | null) => (d ? d.toISOString() : null);
/** JSON numbers only: a float4 NaN or infinity from the database is sealed as null (absent). */
const finite = (v: number | null) => (v !== null && Number.isFinite(v) ? v : null);

function callContent(call: CallRow): JsonObject {
  return {
    id: call.id,
    seriesId: call.seriesId,
    version: call.version,
    publishedAt: iso(call.publishedAt),
    content: {
      validFrom: call.validFrom,
      validTo: call.validTo,
      regimes: call.regimes as JsonValue,
      confidence: call.confidence,
      weights: call.weights as JsonValue,
      keyRisks: call.keyRisks,
      narrative: call.narrative,
      linkedRunIds: call.linkedRunIds,
      correctionOf: call.correctionOf,
      correctionReason: call.correctionReason,
    },
  };
}

type RunRow = typeof runs.$inferSelect;

/** The chosen runs: the ids given, else every ready run with signal rows at its model's latest such cycle. */
async function chooseRuns(db: DbExecutor, filters: SnapshotFilters): Promise<RunRow[]> {
  const hasRows = sql`EXISTS (SELECT 1 FROM ${signalRows} WHERE ${signalRows.runId} = ${runs.id})`;
  const where: SQL[] = [];
  if (filters.runIds?.length) {
    where.push(inArray(runs.id, filters.runIds));
  } else {
    where.push(eq(runs.state, 'ready'), hasRows, sql`${runs.model} IS NOT NULL AND ${runs.cycle} IS NOT NULL`);
    where.push(sql`${runs.cycle} = (SELECT max(r2.cycle) FROM runs r2 WHERE r2.model = ${runs.model} AND r2.state = 'ready'
      AND EXISTS (SELECT 1 FROM signal_rows s2 WHERE s2.run_id = r2.id))`);
  }
  if (filters.models?.length) where.push(inArray(runs.model, filters.models));
  const rows = await db.select().from(runs).where(and(...where)).orderBy(asc(runs.model), asc(runs.cycle), asc(runs.id));
  if (filters.runIds?.length) {
    const missing = filters.runIds.filter((id) => !rows.some((r) => r.id === id));
    if (missing.length) throw unprocessable(`No run with id ${missing.join(', ')}${filters.models?.length ? ' among the chosen models' : ''}.`);
  }
  return rows;
}

export interface SnapshotContentSummary {
  filters: SnapshotFilters;
  models: string[];
  runCount: number;
  rowCount: number;
  regionCount: number;
  dayFrom: string | null;
  dayTo: string | null;
  regimeCall: { id: string; version: number } | null;
}

export interface BuiltContent {
  content: JsonObject;
  /** the short description stored beside the sealed document, for the list */
  summary: SnapshotContentSummary;
}

/**
 * Gathers the sealed content for `filters`. `takenAt` is the time the content was read.
 * @throws AppError 422 when nothing matches the filters, or the selection is too large to seal
 */
export async function buildSnapshotContent(db: DbExecutor, filters: SnapshotFilters, opts: { codeVersion: string; takenAt: Date }): Promise<BuiltContent> {
  const chosen = await chooseRuns(db, filters);
  if (chosen.length === 0) throw unprocessable('Nothing to seal: no processed run with regional signals matches the filters.');
  const where: SQL[] = [inArray(signalRows.runId, chosen.map((r) => r.id))];
  if (filters.regionIds?.length) where.push(inArray(signalRows.regionId, filters.regionIds));
  if (filters.kind) where.push(eq(regions.kind, filters.kind));
  if (filters.dayFrom) where.push(gte(signalRows.day, filters.dayFrom));
  if (filters.dayTo) where.push(lte(signalRows.day, filters.dayTo));
  const [{ n }] = await db.select({ n: sql<number>`count(*)::int` }).from(signalRows).innerJoin(regions, eq(regions.id, signalRows.regionId)).where(and(...where));
  if (n === 0) throw unprocessable('Nothing to seal: the chosen runs have no signal rows for these regions and days.');
  if (n > MAX_SNAPSHOT_ROWS) throw unprocessable(`The selection holds ${n} rows; a snapshot takes at most ${MAX_SNAPSHOT_ROWS}. Narrow the regions, days or models.`);

  const rows = await db
    .select({ s: signalRows, regionName: regions.name, regionKind: regions.kind })
    .from(signalRows)
    .innerJoin(regions, eq(regions.id, signalRows.regionId))
    .where(and(...where))
    .orderBy(asc(signalRows.runId), asc(signalRows.regionId), asc(signalRows.day), asc(signalRows.member));

  const call = await latestPublishedCall(db);
  const { weighting, note } = await callWeighting(db, call);
  const weights = scenarioWeightsFromCall(rows.map((r) => r.s), weighting);
  const runById = new Map(chosen.map((r) => [r.id, r]));
  const usedRuns = chosen.filter((r) => rows.some((x) => x.s.runId === r.id));
  const calibrationVersions = [...new Set(rows.map((r) => r.s.calibrationVersion))].sort((a, b) => a - b);
  const calibration = await db
    .select({ version: calibrationSets.version, name: calibrationSets.name, createdAt: calibrationSets.createdAt })
    .from(calibrationSets)
    .where(inArray(calibrationSets.version, calibrationVersions))
    .orderBy(asc(calibrationSets.version));

  const scenarioRows = rows.map(({ s }) => {
    const run = runById.get(s.runId)!;
    return {
      runId: s.runId,
      model: run.model,
      cycle: iso(run.cycle),
      member: s.member,
      regionId: s.regionId,
      day: s.day,
      precipMm: finite(s.precipMm),
      snowShare: finite(s.snowShare),
      cloudPct: finite(s.cloudPct),
      ghiKwhM2: finite(s.ghiKwhM2),
      solarGwh: finite(s.solarGwh),
      inflowGwh: finite(s.inflowGwh),
      weight: weights.get(`${s.runId}:${s.member}`) ?? 0,
      calibrationVersion: s.calibrationVersion,
    };
  });
  const regionList = [...new Map(rows.map((r) => [r.s.regionId, { id: r.s.regionId, name: r.regionName, kind: r.regionKind }])).values()].sort((a, b) =>
    a.id < b.id ? -1 : a.id > b.id ? 1 : 0,
  );
  const days = [...new Set(scenarioRows.map((r) => r.day))].sort();

  const content: JsonObject = {
    kind: 'liftwise.snapshot',
    contentVersion: 1,
    takenAt: opts.takenAt.toISOString(),
    codeVersion: opts.codeVersion,
    filters: JSON.parse(JSON.stringify(filters)) as JsonObject,
    regimeCall: call ? callContent(call) : null,
    weighting: { source: weighting ? 'regime-call' : 'equal', note },
    runs: usedRuns.map((r) => ({ runId: r.id, model: r.model, cycle: iso(r.cycle), checksum: r.checksum, fileName: r.fileName, isEnsemble: r.isEnsemble })),
    calibrationVersions,
    calibrationSets: calibration.map((c) => ({ version: c.version, name: c.name, createdAt: iso(c.createdAt) })),
    regions: regionList,
    units: SNAPSHOT_QUANTITIES,
    rows: scenarioRows,
    summary: summariseScenarios(scenarioRows),
    cautions: [...CAUTIONS],
  };
  return {
    content,
    summary: {
      filters,
      models: [...new Set(usedRuns.map((r) => r.model ?? '?'))],
      runCount: usedRuns.length,
      rowCount: scenarioRows.length,
      regionCount: regionList.length,
      dayFrom: days[0] ?? null,
      dayTo: days.at(-1) ?? null,
      regimeCall: call ? { id: call.id, version: call.version } : null,
    },
  };
}

type ScenarioRow = { runId: string; model: string | null; cycle: string | null; member: number; regionId: string; day: string; weight: number } & Record<
  SnapshotQuantity,
  number | null
>;

/**
 * Weighted P10/P50/P90 and mean across a run's members, per run, region, day and quantity
 * (server/science/statistics.ts). Members without a value, or with weight 0, take no part; a
 * group left with no weighted value has no summary entry.
 */
export function summariseScenarios(rows: readonly ScenarioRow[]): JsonObject[] {
  const groups = new Map<string, ScenarioRow[]>();
  for (const r of rows) {
    const key = `${r.runId}|${r.regionId}|${r.day}`;
    const list = groups.get(key) ?? [];
    list.push(r);
    groups.set(key, list);
  }
  const out: JsonObject[] = [];
  for (const list of groups.values()) {
    const first = list[0];
    for (const q of QUANTITIES) {
      const present = list.filter((r) => r[q] !== null && r.weight > 0);
      if (present.length === 0) continue;
      const spread = scenarioSpread(present.map((r) => r[q]!), present.map((r) => r.weight));
      out.push({
        runId: first.runId,
        model: first.model,
        cycle: first.cycle,
        regionId: first.regionId,
        day: first.day,
        quantity: q,
        unit: SNAPSHOT_QUANTITIES[q],
        p10: spread.p10,
        p50: spread.p50,
        p90: spread.p90,
        mean: spread.mean,
        scenarios: present.length,
      });
    }
  }
  return out;
}
