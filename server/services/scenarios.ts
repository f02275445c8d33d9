/**
 * The Scenarios screen's operations: which runs are in scope, each scenario's weight, the filtered
 * and sorted page of scenario rows, the weighted percentiles per region and day with the change
 * against the previous cycle, and the traders' saved views.
 *
 * Scope. With a run filter (runs=..., or a clustering, whose run it is) exactly those runs; else
 * the runs that have signal rows and were not rejected, narrowed by model and cycle; when no cycle
 * is given, only the latest cycle of each model.
 *
 * Weights (one per scenario = run and member):
 *  - every run in scope carries, before any call, the same total weight 1, shared equally by its
 *    members ("equal per run"): a deterministic run counts as much as a whole ensemble of the same
 *    model's sister run, and two models count alike;
 *  - the latest published regime call (state published, publishedAt set, newest publishedAt)
 *    overrides that for the runs it names (shared/api/weights.ts): basis "member", a scenario gets
 *    pct/100 of the named runs' total weight (one per named run); basis "cluster", a cluster's
 *    pct/100 is shared equally by its members; scenarios of a named run the call leaves out get 0;
 *  - the grid shows weightPct, the weight as % of all scenarios in scope; percentiles normalise
 *    the weights of whatever rows the filter keeps, so only ratios matter.
 */
import { and, asc, count, desc, eq, gte, ilike, inArray, isNotNull, lt, lte, ne, or, sql, type SQL } from 'drizzle-orm';
import {
  SCENARIO_QUANTITIES,
  type Band,
  type NumberFilter,
  type ScenarioFilter,
  type ScenarioPage,
  type ScenarioPageQuery,
  type ScenarioQuantity,
  type ScenarioRow,
  type ScenarioSummary,
  type SavedView,
  type ScopeRun,
  type SummaryRow,
} from '@shared/api/scenarios.ts';
import { callWeightsSchema } from '@shared/api/weights.ts';
import type { AnyPgColumn } from 'drizzle-orm/pg-core';
import type { Database } from '../db/client.ts';
import { regimeCalls, regionClimatology, regions, runClusterings, runs, savedViews, signalRows } from '../db/schema.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';
import { notFound } from '../errors.ts';
import { weightedPercentiles } from '../science/statistics.ts';
import { memberPercents, type CallClustering } from './call-weights.ts';

export interface WeightSource {
  kind: 'call' | 'equal';
  callId: string | null;
  publishedAt: string | null;
}

/** The runs of a request, each scenario's weight (% of scope) and where the weights came from. */
export interface Scope {
  runs: ScopeRun[];
  /** key `${runId}:${member}` -> weight as % of the scope */
  weightPct: Map<string, number>;
  weights: WeightSource;
  /** members allowed by a cluster filter, or null */
  clusterMembers: { runId: string; members: number[] } | null;
  /** the newest signal row id when the scope was resolved */
  dataVersion: number;
}

const scenarioKey = (runId: string, member: number) => `${runId}:${member}`;

async function clusterFilter(db: Database, f: ScenarioFilter): Promise<Scope['clusterMembers']> {
  if (!f.clustering) return null;
  const [row] = await db.select({ runId: runClusterings.runId, clusters: runClusterings.clusters }).from(runClusterings).where(eq(runClusterings.id, f.clustering));
  if (!row) throw notFound('No run clustering with that id.');
  const clusters = row.clusters as Array<{ id: number; members: number[] }>;
  const chosen = f.clusters?.length ? clusters.filter((c) => f.clusters!.includes(c.id)) : clusters;
  return { runId: row.runId, members: [...new Set(chosen.flatMap((c) => c.members))].sort((a, b) => a - b) };
}

const hasSignals = sql`exists (select 1 from ${signalRows} where ${signalRows.runId} = ${runs.id})`;

type RunWithMembers = ScopeRun & { members: number[] | null };

async function candidateRuns(db: Database, where: SQL | undefined): Promise<RunWithMembers[]> {
  const rows = await db
    .select({ id: runs.id, model: runs.model, cycle: runs.cycle, isEnsemble: runs.isEnsemble, members: runs.members })
    .from(runs)
    .where(and(isNotNull(runs.model), isNotNull(runs.cycle), ne(runs.state, 'rejected'), hasSignals, where));
  return rows.map((r) => ({ id: r.id, model: r.model!, cycle: r.cycle!.toISOString(), isEnsemble: r.isEnsemble ?? false, members: r.members }));
}

/** Keeps, per model, only the runs of its latest cycle. */
function latestCycleOfEachModel<T extends ScopeRun>(rs: T[]): T[] {
  const latest = new Map<string, string>();
  for (const r of rs) if (!latest.has(r.model) || r.cycle > latest.get(r.model)!) latest.set(r.model, r.cycle);
  return rs.filter((r) => r.cycle === latest.get(r.model));
}

async function scopeRuns(db: Database, f: ScenarioFilter, cluster: Scope['clusterMembers']): Promise<RunWithMembers[]> {
  const runIds = f.runs?.length ? f.runs : cluster ? [cluster.runId] : null;
  if (runIds) return candidateRuns(db, inArray(runs.id, runIds));
  const where = and(f.model ? eq(runs.model, f.model) : undefined, f.cycle ? eq(runs.cycle, new Date(f.cycle)) : undefined);
  const found = await candidateRuns(db, where);
  return f.cycle ? found : latestCycleOfEachModel(found);
}

/** For each model in `current`, its runs of the latest earlier cycle. */
export async function previousCycleRuns(db: Database, current: ScopeRun[]): Promise<RunWithMembers[]> {
  const out: RunWithMembers[] = [];
  const models = new Map<string, string>();
  for (const r of current) if (!models.has(r.model) || r.cycle < models.get(r.model)!) models.set(r.model, r.cycle);
  for (const [model, cycle] of models) {
    const earlier = await candidateRuns(db, and(eq(runs.model, model), lt(runs.cycle, new Date(cycle))));
    out.push(...latestCycleOfEachModel(earlier));
  }
  return out;
}

async function membersOf(db: Database, rs: RunWithMembers[]): Promise<Map<string, number[]>> {
  const out = new Map<string, number[]>();
  const unknown = rs.filter((r) => !r.members?.length).map((r) => r.id);
  for (const r of rs) if (r.members?.length) out.set(r.id, [...r.members]);
  if (unknown.length) {
    const found = await db.selectDistinct({ runId: signalRows.runId, member: signalRows.member }).from(signalRows).where(inArray(signalRows.runId, unknown));
    for (const row of found) out.set(row.runId, [...(out.get(row.runId) ?? []), row.member]);
  }
  return out;
}

/** The latest published regime call's weights, if any. */
async function latestPublishedWeights(db: Database) {
  const [call] = await db
    .select({ id: regimeCalls.id, weights: regimeCalls.weights, publishedAt: regimeCalls.publishedAt })
    .from(regimeCalls)
    .where(and(eq(regimeCalls.state, 'published'), isNotNull(regimeCalls.publishedAt)))
    .orderBy(desc(regimeCalls.publishedAt))
    .limit(1);
  if (!call) return null;
  const parsed = callWeightsSchema.safeParse(call.weights);
  if (!parsed.success) return null;
  const w = parsed.data;
  let clustering: CallClustering | null = null;
  if (w.basis === 'cluster') {
    const [row] = await db.select({ runId: runClusterings.runId, clusters: runClusterings.clusters }).from(runClusterings).where(eq(runClusterings.id, w.clusteringId!));
    if (!row) return null;
    clustering = { runId: row.runId, clusters: row.clusters as CallClustering['clusters'] };
  }
  const { pct, namedRuns: named } = memberPercents(w, clustering);
  return { source: { kind: 'call' as const, callId: call.id, publishedAt: call.publishedAt!.toISOString() }, pct, named };
}

type PublishedWeights = Awaited<ReturnType<typeof latestPublishedWeights>>;

/** Each scenario's weight as % of the scope (rule in the file comment). */
export async function scenarioWeights(
  db: Database,
  rs: RunWithMembers[],
  published?: PublishedWeights,
): Promise<{ weightPct: Map<string, number>; weights: WeightSource }> {
  const [members, call] = await Promise.all([membersOf(db, rs), published === undefined ? latestPublishedWeights(db) : Promise.resolve(published)]);
  const raw = new Map<string, number>();
  const namedInScope = rs.filter((r) => call?.named.has(r.id)).length;
  for (const r of rs) {
    const ms = members.get(r.id) ?? [];
    for (const m of ms) {
      const key = scenarioKey(r.id, m);
      raw.set(key, call?.named.has(r.id) ? ((call.pct.get(key) ?? 0) / 100) * namedInScope : 1 / ms.length);
    }
  }
  const total = [...raw.values()].reduce((s, x) => s + x, 0);
  const weightPct = new Map([...raw].map(([k, v]) => [k, total > 0 ? (100 * v) / total : 0]));
  const used = call && namedInScope > 0;
  return { weightPct, weights: used ? call.source : { kind: 'equal', callId: null, publishedAt: null } };
}

/**
 * What a scope depends on, read in one round trip: the newest signal row, the newest published
 * call and the latest change to any run. A scope is reused while this stays the same.
 */
async function dataVersion(db: Database): Promise<{ signals: number; key: string }> {
  const [row] = await db
    .select({
      signals: sql<number>`coalesce((select max(${signalRows.id}) from ${signalRows}), 0)`.mapWith(Number),
      calls: sql<string>`(select max(${regimeCalls.publishedAt}) from ${regimeCalls} where ${regimeCalls.state} = 'published')::text`,
      runs: sql<string>`(select max(${runs.updatedAt})::text || count(*)::text from ${runs})`,
    })
    .from(sql`(select 1) as one`);
  return { signals: row.signals, key: `${row.signals}|${row.calls}|${row.runs}` };
}

const SCOPE_TTL_MS = 30_000;
const scopeCache = new Map<string, { at: number; scope: Promise<Scope> }>();

async function computeScope(db: Database, f: ScenarioFilter, signals: number): Promise<Scope> {
  // independent look-ups in parallel: a request waits for the slowest, not their sum
  const [{ clusterMembers, rs }, published] = await Promise.all([
    clusterFilter(db, f).then(async (clusterMembers) => ({ clusterMembers, rs: await scopeRuns(db, f, clusterMembers) })),
    latestPublishedWeights(db),
  ]);
  const { weightPct, weights } = await scenarioWeights(db, rs, published);
  return { runs: rs.map(({ id, model, cycle, isEnsemble }) => ({ id, model, cycle, isEnsemble })), weightPct, weights, clusterMembers, dataVersion: signals };
}

/** The scope of a filter, reused while no run, signal row or published call has changed. */
export async function resolveScope(db: Database, f: ScenarioFilter): Promise<Scope> {
  const version = await dataVersion(db);
  const key = JSON.stringify([f.runs, f.model, f.cycle, f.clustering, f.clusters, version.key]);
  const now = Date.now();
  const hit = scopeCache.get(key);
  if (hit && now - hit.at < SCOPE_TTL_MS) return hit.scope;
  const scope = computeScope(db, f, version.signals);
  scopeCache.set(key, { at: now, scope });
  scope.catch(() => scopeCache.delete(key));
  for (const [k, v] of scopeCache) if (scopeCache.size > 64 || now - v.at >= SCOPE_TTL_MS) scopeCache.delete(k);
  return scope;
}

// ---------------------------------------------------------------------------------------------
// Rows
// ---------------------------------------------------------------------------------------------

const climatologyJoin = and(eq(regionClimatology.regionId, signalRows.regionId), eq(regionClimatology.month, sql`extract(month from ${signalRows.day})::int`));
/** Precipitation minus the month's climatology, scaled to the hours the day's steps covered. */
const anomalyExpr = sql<number | null>`(${signalRows.precipMm} - ${regionClimatology.precipMmPerDay} * ${signalRows.hoursCovered} / 24.0)::real`;

/** weightPct of each row, looked up in the scope's arrays (only when sorting or filtering by it). */
function weightExpr(scope: Scope): SQL {
  const keys = [...scope.weightPct.keys()];
  const values = keys.map((k) => scope.weightPct.get(k)!);
  return sql`coalesce((${sql.param(values)}::float8[])[array_position(${sql.param(keys)}::text[], ${signalRows.runId}::text || ':' || ${signalRows.member})], 0)`;
}

function quantityColumn(column: ScenarioQuantity | 'weightPct', scope: Scope): SQL | AnyPgColumn {
  if (column === 'anomalyMm') return anomalyExpr;
  if (column === 'weightPct') return weightExpr(scope);
  return signalRows[column];
}

function numberCondition(nf: NumberFilter, scope: Scope): SQL {
  const col = quantityColumn(nf.column, scope);
  const ops = { eq: sql`=`, lt: sql`<`, lte: sql`<=`, gt: sql`>`, gte: sql`>=` };
  // real columns compared with a real literal, so that eq finds the stored float
  return sql`${col} ${ops[nf.op]} ${nf.value}::real`;
}

/** The WHERE of a filter over signal_rows joined with runs and regions (and climatology). */
export function rowConditions(f: ScenarioFilter, scope: Scope, options: { numberFilters?: boolean; clusters?: boolean } = {}): SQL {
  const conditions: (SQL | undefined)[] = [inArray(signalRows.runId, scope.runs.length ? scope.runs.map((r) => r.id) : ['00000000-0000-0000-0000-000000000000'])];
  if (f.regions?.length) conditions.push(inArray(signalRows.regionId, f.regions));
  if (f.kind) conditions.push(eq(regions.kind, f.kind));
  if (f.from) conditions.push(gte(signalRows.day, f.from));
  if (f.to) conditions.push(lte(signalRows.day, f.to));
  if (f.members?.length) conditions.push(inArray(signalRows.member, f.members));
  if (scope.clusterMembers && options.clusters !== false) {
    const { runId, members } = scope.clusterMembers;
    conditions.push(and(eq(signalRows.runId, runId), inArray(signalRows.member, members.length ? members : [-99999])));
  }
  if (f.q) {
    const pattern = `%${f.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    conditions.push(or(ilike(regions.name, pattern), ilike(regions.id, pattern), ilike(runs.model, pattern)));
  }
  if (options.numberFilters !== false) for (const nf of f.nf ?? []) conditions.push(numberCondition(nf, scope));
  return and(...conditions)!;
}

const rowColumns = {
  id: signalRows.id,
  runId: signalRows.runId,
  model: runs.model,
  cycle: runs.cycle,
  isEnsemble: runs.isEnsemble,
  member: signalRows.member,
  regionId: signalRows.regionId,
  region: regions.name,
  kind: regions.kind,
  day: signalRows.day,
  precipMm: signalRows.precipMm,
  anomalyMm: anomalyExpr,
  snowShare: signalRows.snowShare,
  cloudPct: signalRows.cloudPct,
  ghiKwhM2: signalRows.ghiKwhM2,
  solarGwh: signalRows.solarGwh,
  inflowGwh: signalRows.inflowGwh,
  hoursCovered: signalRows.hoursCovered,
};

function rowsQuery(db: Database) {
  return db
    .select(rowColumns)
    .from(signalRows)
    .innerJoin(runs, eq(runs.id, signalRows.runId))
    .innerJoin(regions, eq(regions.id, signalRows.regionId))
    .leftJoin(regionClimatology, climatologyJoin);
}


function orderBy(q: Pick<ScenarioPageQuery, 'sort' | 'dir'>, scope: Scope): SQL[] {
  const direction = q.dir === 'desc' ? sql`desc` : sql`asc`;
  const columns: Record<string, SQL | AnyPgColumn> = {
    region: sql`${regions.name}`,
    kind: sql`${regions.kind}`,
    day: signalRows.day,
    model: sql`${runs.model}`,
    cycle: sql`${runs.cycle}`,
    member: signalRows.member,
  };
  const primary = columns[q.sort] ?? quantityColumn(q.sort as ScenarioQuantity | 'weightPct', scope);
  // the unique key breaks ties, so paging never repeats or skips a row
  return [sql`${primary} ${direction} nulls last`, asc(signalRows.day), asc(signalRows.regionId), asc(signalRows.runId), asc(signalRows.member)];
}

type RawRow = Awaited<ReturnType<typeof rowsQuery>>[number];

function toScenarioRow({ id: _id, ...r }: RawRow, scope: Scope): ScenarioRow {
  return {
    ...r,
    model: r.model ?? '',
    cycle: r.cycle?.toISOString() ?? '',
    isEnsemble: r.isEnsemble ?? false,
    weightPct: scope.weightPct.get(scenarioKey(r.runId, r.member)) ?? 0,
  };
}

/** Which joins a filter and sort need: paging only joins what it filters or sorts by. */
function joinsNeeded(f: ScenarioFilter, sort?: string) {
  const anomaly = sort === 'anomalyMm' || (f.nf ?? []).some((x) => x.column === 'anomalyMm');
  return {
    regions: Boolean(f.kind || f.q || sort === 'region' || sort === 'kind'),
    runs: Boolean(f.q || sort === 'model' || sort === 'cycle'),
    climatology: anomaly,
  };
}

function narrowQuery<T extends Record<string, unknown>>(db: Database, columns: T, f: ScenarioFilter, sort?: string) {
  const need = joinsNeeded(f, sort);
  let q = db
    .select(columns as Record<string, never>)
    .from(signalRows)
    .$dynamic();
  if (need.runs) q = q.innerJoin(runs, eq(runs.id, signalRows.runId));
  if (need.regions) q = q.innerJoin(regions, eq(regions.id, signalRows.regionId));
  if (need.climatology) q = q.leftJoin(regionClimatology, climatologyJoin);
  return q;
}

type SortSpec = Pick<ScenarioPageQuery, 'sort' | 'dir'>;

/**
 * The ids of every row of a filter in the requested order. Ordering and paging run on signal_rows
 * alone (joined only where the filter or sort needs it), and the ordered ids are kept for
 * ORDER_TTL_MS per filter, sort, scope and data version: a trader paging through 50,000 rows, or
 * twenty traders on the same default view, sort once, and each page then reads only its own rows.
 * A new signal row, run or published call changes the key; an edited region name or climatology
 * shows within the TTL.
 */
const ORDER_TTL_MS = 30_000;
const ORDER_CACHE_SIZE = 32;
const orderCache = new Map<string, { at: number; ids: Promise<number[]> }>();

export function sortedIds(db: Database, f: ScenarioFilter, scope: Scope, q: SortSpec): Promise<number[]> {
  const filter = { ...f, sort: undefined, dir: undefined, offset: undefined, limit: undefined };
  const key = JSON.stringify([filter, q.sort, q.dir, scope.runs.map((r) => r.id), scope.weights.callId, scope.dataVersion]);
  const now = Date.now();
  const hit = orderCache.get(key);
  if (hit && now - hit.at < ORDER_TTL_MS) return hit.ids;
  const ids = narrowQuery(db, { id: signalRows.id }, f, q.sort)
    .where(rowConditions(f, scope))
    .orderBy(...orderBy(q, scope))
    .then((rows) => (rows as unknown as Array<{ id: number }>).map((r) => r.id));
  orderCache.delete(key);
  orderCache.set(key, { at: now, ids });
  ids.catch(() => orderCache.delete(key));
  for (const [k, v] of orderCache) if (orderCache.size > ORDER_CACHE_SIZE || now - v.at >= ORDER_TTL_MS) orderCache.delete(k);
  return ids;
}

/** The rows of the given ids, in that order. */
export async function rowsByIds(db: Database, ids: number[], scope: Scope): Promise<ScenarioRow[]> {
  if (!ids.length) return [];
  const rows = await rowsQuery(db).where(inArray(signalRows.id, ids));
  const byId = new Map(rows.map((r) => [r.id, r]));
  return ids.flatMap((id) => (byId.has(id) ? [toScenarioRow(byId.get(id)!, scope)] : []));
}

/** One page of rows in the requested order. */
export async function fetchRows(db: Database, f: ScenarioFilter, scope: Scope, q: Pick<ScenarioPageQuery, 'sort' | 'dir' | 'offset' | 'limit'>): Promise<ScenarioRow[]> {
  const ids = await sortedIds(db, f, scope, q);
  return rowsByIds(db, ids.slice(q.offset, q.offset + q.limit), scope);
}

export async function countRows(db: Database, f: ScenarioFilter, scope: Scope): Promise<number> {
  const [{ n }] = (await narrowQuery(db, { n: count() }, f).where(rowConditions(f, scope))) as unknown as Array<{ n: number }>;
  return n;
}

export async function scenarioPage(db: Database, q: ScenarioPageQuery): Promise<ScenarioPage> {
  const scope = await resolveScope(db, q);
  const ids = await sortedIds(db, q, scope, q);
  const rows = await rowsByIds(db, ids.slice(q.offset, q.offset + q.limit), scope);
  return { rows, total: ids.length, offset: q.offset, limit: q.limit, runs: scope.runs, weights: scope.weights };
}

// ---------------------------------------------------------------------------------------------
// Summary: weighted percentiles per region and day, change of P50 against the previous cycle
// ---------------------------------------------------------------------------------------------

/** What the summary needs of a row: where, when, its weight and its values. */
export interface WeightedValues {
  regionId: string;
  region: string;
  kind: string;
  day: string;
  weight: number;
  values: Record<ScenarioQuantity, number | null>;
}

/** Weighted P10/P50/P90 of one quantity over rows (null values take no part; none left: nulls). */
export function bandOf(rows: WeightedValues[], quantity: ScenarioQuantity): Band {
  const xs: number[] = [];
  const ws: number[] = [];
  for (const r of rows) {
    const v = r.values[quantity];
    if (v !== null && r.weight > 0) {
      xs.push(v);
      ws.push(r.weight);
    }
  }
  if (!xs.length) return { p10: null, p50: null, p90: null };
  const [p10, p50, p90] = weightedPercentiles(xs, ws, [10, 50, 90]);
  return { p10, p50, p90 };
}

function groupByRegionDay(rows: WeightedValues[]): Map<string, WeightedValues[]> {
  const groups = new Map<string, WeightedValues[]>();
  for (const r of rows) {
    const key = `${r.regionId}|${r.day}`;
    const g = groups.get(key);
    if (g) g.push(r);
    else groups.set(key, [r]);
  }
  return groups;
}

/**
 * Per region and day: weighted P10/P50/P90 of each quantity over the scenarios of `current`, the
 * weighted P50 of `previous` (the previous cycle) for the same region and day, and the change.
 */
export function summariseScenarios(current: WeightedValues[], previous: WeightedValues[]): SummaryRow[] {
  const before = groupByRegionDay(previous);
  const out: SummaryRow[] = [];
  for (const [key, group] of groupByRegionDay(current)) {
    const prior = before.get(key) ?? [];
    const stats = {} as SummaryRow['stats'];
    for (const q of SCENARIO_QUANTITIES) {
      const band = bandOf(group, q);
      const previousP50 = prior.length ? bandOf(prior, q).p50 : null;
      stats[q] = { ...band, previousP50, changeP50: band.p50 !== null && previousP50 !== null ? band.p50 - previousP50 : null };
    }
    const { regionId, region, kind, day } = group[0];
    out.push({ regionId, region, kind, day, scenarios: group.length, stats });
  }
  return out.sort((a, b) => (a.region === b.region ? a.day.localeCompare(b.day) : a.region.localeCompare(b.region)));
}

const valueColumns = {
  runId: signalRows.runId,
  member: signalRows.member,
  regionId: signalRows.regionId,
  day: signalRows.day,
  precipMm: signalRows.precipMm,
  anomalyMm: anomalyExpr,
  snowShare: signalRows.snowShare,
  cloudPct: signalRows.cloudPct,
  ghiKwhM2: signalRows.ghiKwhM2,
  solarGwh: signalRows.solarGwh,
  inflowGwh: signalRows.inflowGwh,
};
type ValueRow = { [K in keyof typeof valueColumns]: K extends 'member' ? number : K extends 'runId' | 'regionId' | 'day' ? string : number | null };

/** The rows of a filter as the summary needs them: narrow, with region names from one lookup. */
async function weightedValues(db: Database, f: ScenarioFilter, scope: Scope, options: { numberFilters?: boolean; clusters?: boolean } = {}): Promise<WeightedValues[]> {
  const [rows, names] = await Promise.all([
    narrowQuery(db, valueColumns, { ...f, nf: undefined }, 'anomalyMm').where(rowConditions(f, scope, options)) as unknown as Promise<ValueRow[]>,
    db.select({ id: regions.id, name: regions.name, kind: regions.kind }).from(regions),
  ]);
  const regionOf = new Map(names.map((r) => [r.id, r]));
  return rows.map((r) => ({
    regionId: r.regionId,
    region: regionOf.get(r.regionId)?.name ?? r.regionId,
    kind: regionOf.get(r.regionId)?.kind ?? '',
    day: r.day,
    weight: scope.weightPct.get(scenarioKey(r.runId, r.member)) ?? 0,
    values: { precipMm: r.precipMm, anomalyMm: r.anomalyMm, snowShare: r.snowShare, cloudPct: r.cloudPct, ghiKwhM2: r.ghiKwhM2, solarGwh: r.solarGwh, inflowGwh: r.inflowGwh },
  }));
}

/**
 * The summary of a filter. The previous cycle is compared under the same region, kind, day,
 * member and quick filters; the column (number) filters and the cluster filter belong to the
 * current runs and are not applied to it.
 */
export async function scenarioSummary(db: Database, f: ScenarioFilter): Promise<ScenarioSummary> {
  const scope = await resolveScope(db, f);
  const prevRuns = await previousCycleRuns(db, scope.runs);
  const prevWeights = await scenarioWeights(db, prevRuns);
  const prevScope: Scope = {
    runs: prevRuns.map(({ id, model, cycle, isEnsemble }) => ({ id, model, cycle, isEnsemble })),
    ...prevWeights,
    clusterMembers: null,
    dataVersion: scope.dataVersion,
  };
  const [current, previous] = await Promise.all([
    weightedValues(db, f, scope),
    prevRuns.length ? weightedValues(db, f, prevScope, { numberFilters: false, clusters: false }) : Promise.resolve([]),
  ]);
  const overall = Object.fromEntries(SCENARIO_QUANTITIES.map((q) => [q, bandOf(current, q)])) as ScenarioSummary['overall'];
  return { rows: summariseScenarios(current, previous), overall, runs: scope.runs, previousRuns: prevScope.runs, weights: scope.weights };
}

/** Input checksums, calibration set versions and code versions behind the rows of a scope. */
export async function provenance(db: Database, scope: Scope) {
  if (!scope.runs.length) return [];
  return db
    .selectDistinct({
      runId: signalRows.runId,
      inputChecksum: signalRows.inputChecksum,
      calibrationVersion: signalRows.calibrationVersion,
      codeVersion: signalRows.codeVersion,
    })
    .from(signalRows)
    .where(inArray(signalRows.runId, scope.runs.map((r) => r.id)))
    .orderBy(signalRows.runId, signalRows.inputChecksum);
}

// ---------------------------------------------------------------------------------------------
// Saved views: a person's own column state and filters
// ---------------------------------------------------------------------------------------------

type AuditWho = Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;

function toSavedView(row: typeof savedViews.$inferSelect): SavedView {
  return { id: row.id, name: row.name, state: row.state as SavedView['state'], createdAt: row.createdAt.toISOString() };
}

export async function listSavedViews(db: Database, userId: string): Promise<SavedView[]> {
  const rows = await db.select().from(savedViews).where(eq(savedViews.userId, userId)).orderBy(asc(savedViews.name));
  return rows.map(toSavedView);
}

export async function createSavedView(db: Database, userId: string, input: Pick<SavedView, 'name' | 'state'>, who: AuditWho): Promise<SavedView> {
  return db.transaction(async (tx) => {
    const [row] = await tx.insert(savedViews).values({ userId, name: input.name, state: input.state }).returning();
    await recordAudit(tx, { ...who, action: 'scenario_view.create', objectType: 'saved_view', objectId: row.id, detail: { name: row.name } });
    return toSavedView(row);
  });
}

/** Deletes one of the person's own views; someone else's view is "not found" to them. */
export async function deleteSavedView(db: Database, userId: string, id: string, who: AuditWho): Promise<void> {
  await db.transaction(async (tx) => {
    const [row] = await tx.delete(savedViews).where(and(eq(savedViews.id, id), eq(savedViews.userId, userId))).returning();
    if (!row) throw notFound('No saved view of yours with that id.');
    await recordAudit(tx, { ...who, action: 'scenario_view.delete', objectType: 'saved_view', objectId: id, detail: { name: row.name } });
  });
}
