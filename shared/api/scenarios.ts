import { z } from 'zod';

/**
 * The Scenarios screen's contract: one row per region, UTC day and scenario (a run's member),
 * filtered, sorted and paged on the server; weighted P10/P50/P90 per region and day; exports.
 *
 * Units: precipitation and its anomaly mm per day, snow share 0..1, cloud % (0..100),
 * GHI kWh/m2 per day, solar and inflow energy GWh per day, weight % of the scenarios in scope.
 */

/** The quantities of a scenario row, in the order of the grid's column groups. */
export const SCENARIO_QUANTITIES = ['precipMm', 'anomalyMm', 'snowShare', 'cloudPct', 'ghiKwhM2', 'solarGwh', 'inflowGwh'] as const;
export type ScenarioQuantity = (typeof SCENARIO_QUANTITIES)[number];

export const QUANTITY_LABELS: Record<ScenarioQuantity, { label: string; unit: string; digits: number }> = {
  precipMm: { label: 'Precipitation', unit: 'mm', digits: 1 },
  anomalyMm: { label: 'Anomaly', unit: 'mm', digits: 1 },
  snowShare: { label: 'Snow share', unit: '0–1', digits: 2 },
  cloudPct: { label: 'Cloud', unit: '%', digits: 0 },
  ghiKwhM2: { label: 'GHI', unit: 'kWh/m²', digits: 2 },
  solarGwh: { label: 'Solar', unit: 'GWh', digits: 2 },
  inflowGwh: { label: 'Inflow', unit: 'GWh', digits: 2 },
};

/**
 * Which way a change of each quantity points on the teal/amber scale: +1 when more means wetter or
 * cloudier (teal), -1 when more means drier or sunnier (amber: more solar energy or GHI means sunnier).
 */
export const WETTER_SIGN: Record<ScenarioQuantity, 1 | -1> = {
  precipMm: 1,
  anomalyMm: 1,
  snowShare: 1,
  cloudPct: 1,
  ghiKwhM2: -1,
  solarGwh: -1,
  inflowGwh: 1,
};

/** Columns the server sorts by (anything else is refused). */
export const SORT_COLUMNS = ['region', 'kind', 'day', 'model', 'cycle', 'member', 'weightPct', ...SCENARIO_QUANTITIES] as const;
export type SortColumn = (typeof SORT_COLUMNS)[number];

export const NUMBER_FILTER_OPS = ['eq', 'lt', 'lte', 'gt', 'gte'] as const;
export type NumberFilterOp = (typeof NUMBER_FILTER_OPS)[number];
export interface NumberFilter {
  column: ScenarioQuantity | 'weightPct';
  op: NumberFilterOp;
  value: number;
}

const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'a day is written YYYY-MM-DD');
/** a query parameter holding a comma-separated list (or repeated parameters) */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- coerced items take any input
const list = <T extends z.ZodType<unknown, any>>(item: T) =>
  z
    .union([z.string(), z.array(z.string())])
    .transform((v) => (Array.isArray(v) ? v : [v]).flatMap((s) => s.split(',')).map((s) => s.trim()).filter(Boolean))
    .pipe(z.array(item).max(500));

/**
 * Number filters as `column.op.value`, comma-separated: `precipMm.gte.5,cloudPct.lt.40`.
 * The column names are the quantities (and weightPct); the operators eq, lt, lte, gt, gte.
 */
const numberFilter = z.string().transform((s, ctx): NumberFilter => {
  const m = /^([A-Za-z]+)\.(eq|lt|lte|gt|gte)\.(-?\d+(?:\.\d+)?(?:e-?\d+)?)$/.exec(s);
  const columns: readonly string[] = [...SCENARIO_QUANTITIES, 'weightPct'];
  if (!m || !columns.includes(m[1])) {
    ctx.addIssue({ code: 'custom', message: `number filter "${s}" is not column.op.value with a known column (${columns.join(', ')}) and op eq, lt, lte, gt or gte` });
    return z.NEVER;
  }
  return { column: m[1] as NumberFilter['column'], op: m[2] as NumberFilterOp, value: Number(m[3]) };
});

/** The filters every scenarios route takes (query string). */
export const scenarioFilterSchema = z
  .object({
    regions: list(z.string().min(1).max(100)).optional(),
    kind: z.enum(['hydro', 'solar']).optional(),
    from: day.optional(),
    to: day.optional(),
    model: z.string().min(1).max(100).optional(),
    /** ISO date-time of the model cycle */
    cycle: z.iso.datetime({ offset: true }).optional(),
    runs: list(z.uuid({ message: 'a run id is a UUID' })).optional(),
    members: list(z.coerce.number().int().min(-1).max(9999)).optional(),
    /** the clustering (run_clusterings id) whose clusters `clusters` names */
    clustering: z.uuid({ message: 'clustering is the id of a run clustering' }).optional(),
    clusters: list(z.coerce.number().int().min(0).max(999)).optional(),
    /** quick filter: part of a region's id or name, or of the model's name */
    q: z.string().max(100).optional(),
    nf: list(numberFilter).optional(),
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'from must not be after to', path: ['from'] })
  .refine((f) => !f.clusters || f.clustering, { message: 'clusters need the clustering they belong to', path: ['clusters'] });
export type ScenarioFilter = z.infer<typeof scenarioFilterSchema>;

export const scenarioPageQuerySchema = z.intersection(
  scenarioFilterSchema,
  z.object({
    sort: z.enum(SORT_COLUMNS).default('day'),
    dir: z.enum(['asc', 'desc']).default('asc'),
    offset: z.coerce.number().int().min(0).max(10_000_000).default(0),
    limit: z.coerce.number().int().min(1).max(1000).default(100),
  }),
);
export type ScenarioPageQuery = z.infer<typeof scenarioPageQuerySchema>;

export const scenarioRowSchema = z.object({
  runId: z.uuid(),
  model: z.string(),
  cycle: z.string(),
  isEnsemble: z.boolean(),
  member: z.number().int(),
  regionId: z.string(),
  region: z.string(),
  kind: z.string(),
  day: z.string(),
  precipMm: z.number().nullable(),
  /** precipitation minus the region's climatology for the month (scaled to the hours covered); null without climatology */
  anomalyMm: z.number().nullable(),
  snowShare: z.number().nullable(),
  cloudPct: z.number().nullable(),
  ghiKwhM2: z.number().nullable(),
  solarGwh: z.number().nullable(),
  inflowGwh: z.number().nullable(),
  hoursCovered: z.number(),
  /** the scenario's weight as % of all scenarios in scope (see server/services/scenarios.ts) */
  weightPct: z.number(),
});
export type ScenarioRow = z.infer<typeof scenarioRowSchema>;

export const weightSourceSchema = z.object({
  kind: z.enum(['call', 'equal']),
  callId: z.uuid().nullable(),
  publishedAt: z.string().nullable(),
});

export const scopeRunSchema = z.object({ id: z.uuid(), model: z.string(), cycle: z.string(), isEnsemble: z.boolean() });
export type ScopeRun = z.infer<typeof scopeRunSchema>;

export const scenarioPageSchema = z.object({
  rows: z.array(scenarioRowSchema),
  total: z.number().int(),
  offset: z.number().int(),
  limit: z.number().int(),
  runs: z.array(scopeRunSchema),
  weights: weightSourceSchema,
});
export type ScenarioPage = z.infer<typeof scenarioPageSchema>;

const band = z.object({ p10: z.number().nullable(), p50: z.number().nullable(), p90: z.number().nullable() });
export type Band = z.infer<typeof band>;
const quantityStats = band.extend({
  /** weighted P50 of the previous cycle of the same model(s) for the same valid day */
  previousP50: z.number().nullable(),
  /** p50 - previousP50 */
  changeP50: z.number().nullable(),
});
export type QuantityStats = z.infer<typeof quantityStats>;

export const summaryRowSchema = z.object({
  regionId: z.string(),
  region: z.string(),
  kind: z.string(),
  day: z.string(),
  scenarios: z.number().int(),
  stats: z.record(z.enum(SCENARIO_QUANTITIES), quantityStats),
});
export type SummaryRow = z.infer<typeof summaryRowSchema>;

export const scenarioSummarySchema = z.object({
  rows: z.array(summaryRowSchema),
  /** weighted P10/P50/P90 over every row of the filter (the grid's pinned rows) */
  overall: z.record(z.enum(SCENARIO_QUANTITIES), band),
  runs: z.array(scopeRunSchema),
  previousRuns: z.array(scopeRunSchema),
  weights: weightSourceSchema,
});
export type ScenarioSummary = z.infer<typeof scenarioSummarySchema>;

/** A saved grid view: AG Grid column state, its filter model and the URL query of the filters. */
export const savedViewStateSchema = z.object({
  query: z.string().max(4000),
  columnState: z.array(z.record(z.string(), z.unknown())).max(200).optional(),
  filterModel: z.record(z.string(), z.unknown()).optional(),
});
export const createSavedViewSchema = z.object({ name: z.string().trim().min(1).max(100), state: savedViewStateSchema });
export const savedViewSchema = z.object({ id: z.uuid(), name: z.string(), state: savedViewStateSchema, createdAt: z.string() });
export type SavedView = z.infer<typeof savedViewSchema>;
export const savedViewListSchema = z.object({ views: z.array(savedViewSchema) });

/** Serialises filters back to the query string the routes take (the URL a view is shared with). */
export function filterToQuery(f: Partial<ScenarioFilter> & Partial<Pick<ScenarioPageQuery, 'sort' | 'dir'>>): URLSearchParams {
  const p = new URLSearchParams();
  for (const [key, value] of Object.entries(f)) {
    if (value === undefined || value === null || value === '') continue;
    if (key === 'nf') p.set('nf', (value as NumberFilter[]).map((x) => `${x.column}.${x.op}.${x.value}`).join(','));
    else if (Array.isArray(value)) {
      if (value.length) p.set(key, value.join(','));
    } else p.set(key, String(value));
  }
  return p;
}
