/**
 * Column definitions of the two grids: scenario rows (grouped precipitation, cloud, solar, hydro)
 * and the per-region-and-day summary with its change columns. Units sit in the headers; cells
 * carry bare figures in the monospace face.
 */
import type { CellClassParams, ColDef, ColGroupDef, ValueFormatterParams } from 'ag-grid-community';
import { QUANTITY_LABELS, WETTER_SIGN, type ScenarioQuantity, type ScenarioRow, type SummaryRow } from '@shared/api/scenarios.ts';
import { numberColumn } from '@/components/grid/DataGrid.tsx';
import { formatCycle } from '@/lib/format.ts';

const numberFormat = (digits: number) => (p: ValueFormatterParams) =>
  p.value === null || p.value === undefined
    ? '–'
    : new Intl.NumberFormat('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits }).format(p.value as number);

const signedFormat = (digits: number) => (p: ValueFormatterParams) => {
  if (p.value === null || p.value === undefined) return '–';
  const v = p.value as number;
  const text = new Intl.NumberFormat('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits }).format(Math.abs(v));
  return `${v > 0 ? '+' : v < 0 ? '−' : '±'}${text}`;
};

const numberFilter = {
  filter: 'agNumberColumnFilter',
  filterParams: {
    filterOptions: ['greaterThanOrEqual', 'greaterThan', 'lessThanOrEqual', 'lessThan', 'equals', 'inRange'],
    maxNumConditions: 1,
    buttons: ['apply', 'reset'],
  },
};

function quantityColumn(q: ScenarioQuantity, extra: Partial<ColDef<ScenarioRow>> = {}): ColDef<ScenarioRow> {
  const { label, unit, digits } = QUANTITY_LABELS[q];
  return {
    ...numberColumn,
    field: q,
    colId: q,
    headerName: `${label} (${unit})`,
    headerTooltip: `${label} per day, ${unit}`,
    valueFormatter: (q === 'anomalyMm' ? signedFormat : numberFormat)(digits),
    width: 118,
    sortable: true,
    ...numberFilter,
    ...extra,
  };
}

/** Teal when the change points wetter or cloudier, amber when drier or sunnier (more solar = sunnier). */
export function changeClassRules(q: ScenarioQuantity) {
  const wetter = (p: CellClassParams) => typeof p.value === 'number' && p.value * WETTER_SIGN[q] > 0;
  const drier = (p: CellClassParams) => typeof p.value === 'number' && p.value * WETTER_SIGN[q] < 0;
  return { 'text-ascent-strong dark:text-ascent-mid font-medium': wetter, 'text-descent-strong dark:text-descent-mid font-medium': drier };
}

/** Anomalies carry the same meaning as changes: above climatology is wetter (teal). */
const anomalyClasses = changeClassRules('anomalyMm');

export const scenarioColumns: (ColDef<ScenarioRow> | ColGroupDef<ScenarioRow>)[] = [
  {
    headerName: 'Where and when',
    children: [
      { field: 'region', colId: 'region', headerName: 'Region', pinned: 'left', width: 150, sortable: true },
      { field: 'day', colId: 'day', headerName: 'Day (UTC)', pinned: 'left', width: 104, cellClass: 'num', sortable: true },
    ],
  },
  {
    headerName: 'Scenario',
    children: [
      { field: 'kind', colId: 'kind', headerName: 'Kind', width: 70, sortable: true },
      { field: 'model', colId: 'model', headerName: 'Model', width: 90, sortable: true },
      { field: 'cycle', colId: 'cycle', headerName: 'Cycle (UTC)', width: 120, cellClass: 'num', sortable: true, valueFormatter: (p) => (p.value ? formatCycle(p.value as string) : '') },
      { ...numberColumn, field: 'member', colId: 'member', headerName: 'Member', width: 84, sortable: true },
      { ...quantityColumn('precipMm'), field: 'weightPct', colId: 'weightPct', headerName: 'Weight (%)', headerTooltip: 'Share of all scenarios in scope, %', valueFormatter: numberFormat(2), width: 100 },
    ],
  },
  {
    headerName: 'Precipitation',
    children: [quantityColumn('precipMm'), quantityColumn('anomalyMm', { cellClassRules: anomalyClasses }), quantityColumn('snowShare', { width: 110 })],
  },
  { headerName: 'Cloud', children: [quantityColumn('cloudPct', { width: 96 })] },
  { headerName: 'Solar', children: [quantityColumn('ghiKwhM2'), quantityColumn('solarGwh')] },
  { headerName: 'Hydro', children: [quantityColumn('inflowGwh')] },
];

const SUMMARY_QUANTITIES: ScenarioQuantity[] = ['precipMm', 'cloudPct', 'solarGwh', 'inflowGwh'];

export const summaryColumns: (ColDef<SummaryRow> | ColGroupDef<SummaryRow>)[] = [
  {
    headerName: 'Where and when',
    children: [
      { field: 'region', headerName: 'Region', pinned: 'left', width: 150, sortable: true, filter: 'agTextColumnFilter' },
      { field: 'day', headerName: 'Day (UTC)', pinned: 'left', width: 104, cellClass: 'num', sortable: true },
    ],
  },
  { headerName: 'Spread', children: [{ ...numberColumn, field: 'scenarios', headerName: 'Scenarios', width: 90 }] },
  ...SUMMARY_QUANTITIES.map((q): ColGroupDef<SummaryRow> => {
    const { label, unit, digits } = QUANTITY_LABELS[q];
    const part = (key: 'p10' | 'p50' | 'p90' | 'changeP50', name: string): ColDef<SummaryRow> => ({
      ...numberColumn,
      colId: `${q}.${key}`,
      headerName: `${name} (${unit})`,
      valueGetter: (p) => p.data?.stats[q][key] ?? null,
      valueFormatter: (key === 'changeP50' ? signedFormat : numberFormat)(digits),
      width: key === 'changeP50' ? 118 : 96,
      sortable: true,
      filter: 'agNumberColumnFilter',
      ...(key === 'changeP50' ? { cellClassRules: changeClassRules(q), headerTooltip: 'P50 minus the previous cycle’s P50 for the same valid day' } : {}),
    });
    return { headerName: label, children: [part('p10', 'P10'), part('p50', 'P50'), part('p90', 'P90'), part('changeP50', 'Δ P50')] };
  }),
];
