/**
 * The screen's filters live in the URL (so a view is shared as a link). These helpers read the
 * ones the filter bar edits and turn the grid's sort and column filters into the API's terms.
 */
import { SCENARIO_QUANTITIES, type NumberFilterOp } from '@shared/api/scenarios.ts';

/** URL parameters the filter bar owns; sort, dir and nf come from the grid. */
export const FILTER_PARAMS = ['regions', 'kind', 'from', 'to', 'model', 'cycle', 'runs', 'members', 'clustering', 'clusters', 'q'] as const;
export type FilterParam = (typeof FILTER_PARAMS)[number];

/** The query the API receives: the URL's filters (without the client-only ones). */
export function apiQuery(search: URLSearchParams, drop: string[] = ['region', 'quantity']): URLSearchParams {
  const out = new URLSearchParams(search);
  for (const key of drop) out.delete(key);
  return out;
}

interface AgNumberFilter {
  filterType?: string;
  type?: string;
  filter?: number | null;
  filterTo?: number | null;
}

const AG_TO_OP: Record<string, NumberFilterOp> = {
  equals: 'eq',
  lessThan: 'lt',
  lessThanOrEqual: 'lte',
  greaterThan: 'gt',
  greaterThanOrEqual: 'gte',
};

/** AG Grid's number filter model -> the API's `nf` list (column.op.value). */
export function numberFiltersFromModel(model: Record<string, unknown> | null | undefined): string {
  const parts: string[] = [];
  const columns: readonly string[] = [...SCENARIO_QUANTITIES, 'weightPct'];
  for (const [column, raw] of Object.entries(model ?? {})) {
    const f = raw as AgNumberFilter;
    if (!columns.includes(column) || f.filterType !== 'number' || f.filter === null || f.filter === undefined) continue;
    if (f.type === 'inRange') {
      parts.push(`${column}.gte.${f.filter}`);
      if (f.filterTo !== null && f.filterTo !== undefined) parts.push(`${column}.lte.${f.filterTo}`);
    } else if (f.type && AG_TO_OP[f.type]) parts.push(`${column}.${AG_TO_OP[f.type]}.${f.filter}`);
  }
  return parts.join(',');
}

const OP_TO_AG: Record<NumberFilterOp, string> = {
  eq: 'equals',
  lt: 'lessThan',
  lte: 'lessThanOrEqual',
  gt: 'greaterThan',
  gte: 'greaterThanOrEqual',
};

/** The API's `nf` list back to AG Grid's number filter model (to restore a shared link). */
export function filterModelFromNumberFilters(nf: string | null): Record<string, AgNumberFilter> {
  const model: Record<string, AgNumberFilter> = {};
  for (const part of (nf ?? '').split(',').filter(Boolean)) {
    const m = /^([A-Za-z]+)\.(eq|lt|lte|gt|gte)\.(.+)$/.exec(part);
    if (!m) continue;
    const [, column, op, value] = m;
    const existing = model[column];
    if (existing && existing.type === 'greaterThanOrEqual' && op === 'lte') model[column] = { filterType: 'number', type: 'inRange', filter: existing.filter, filterTo: Number(value) };
    else model[column] = { filterType: 'number', type: OP_TO_AG[op as NumberFilterOp], filter: Number(value) };
  }
  return model;
}

/**
 * A model cycle as the desk types it ("2026-12-01 00Z", "2026-12-01T06:00") to the ISO form the
 * API takes; anything else is passed on for the server to refuse with its own message.
 */
export function normaliseCycle(text: string): string {
  const m = /^(\d{4}-\d{2}-\d{2})[T ](\d{2})(?::(\d{2}))?(?::(\d{2}))?\s*Z?$/i.exec(text.trim());
  return m ? `${m[1]}T${m[2]}:${m[3] ?? '00'}:${m[4] ?? '00'}Z` : text.trim();
}
