import { useQuery } from '@tanstack/react-query';
import type { GridApi, GridReadyEvent, IDatasource, IGetRowsParams } from 'ag-grid-community';
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import { canCall } from '@shared/permissions.ts';
import type { Role } from '@shared/roles.ts';
import { QUANTITY_LABELS, SCENARIO_QUANTITIES, type SavedView, type ScenarioQuantity, type ScenarioRow, type ScenarioSummary } from '@shared/api/scenarios.ts';
import { CAUTIONS } from '@shared/cautions.ts';
import { DataGrid } from '@/components/grid/DataGrid.tsx';
import { Card, CautionNote, EmptyState, PageHeader } from '@/components/Page.tsx';
import { formatCycle } from '@/lib/format.ts';
import { exportUrl, fetchScenarioPage, myRolesQuery, scenarioSummaryQuery } from './api.ts';
import { scenarioColumns, summaryColumns } from './columns.tsx';
import { FanChart } from './FanChart.tsx';
import { FilterBar, filterBarKey } from './FilterBar.tsx';
import { apiQuery, filterModelFromNumberFilters, numberFiltersFromModel } from './filters.ts';
import { SavedViews } from './SavedViews.tsx';

const PAGE_SIZE = 100;

/** Follows the app's light/dark switch (the html element's "dark" class). */
function useDarkMode(): boolean {
  const [dark, setDark] = useState(() => document.documentElement.classList.contains('dark'));
  useEffect(() => {
    const observer = new MutationObserver(() => setDark(document.documentElement.classList.contains('dark')));
    observer.observe(document.documentElement, { attributes: true, attributeFilter: ['class'] });
    return () => observer.disconnect();
  }, []);
  return dark;
}

/** The server's list of what is wrong with a filter, in one line. */
function problemDetails(error: unknown): string {
  const details = (error as { details?: unknown }).details;
  if (!Array.isArray(details)) return '';
  return ` (${(details as Array<{ path: string; message: string }>).map((d) => `${d.path}: ${d.message}`).join('; ')})`;
}

/** The weighted P10/P50/P90 of the whole filter, as three rows pinned above the grid. */
function pinnedRows(summary: ScenarioSummary | undefined): Partial<ScenarioRow>[] {
  if (!summary) return [];
  return (['p10', 'p50', 'p90'] as const).map((p) => ({
    region: `Weighted ${p.toUpperCase()}`,
    ...Object.fromEntries(SCENARIO_QUANTITIES.map((q) => [q, summary.overall[q][p]])),
  }));
}

export function ScenariosPage() {
  const [search, setSearch] = useSearchParams();
  const gridApi = useRef<GridApi<ScenarioRow> | null>(null);
  const dark = useDarkMode();
  const roles = useQuery(myRolesQuery());
  const mayExport = canCall('GET', '/api/scenarios/export.xlsx', (roles.data ?? []) as Role[]);

  // The grid's datasource depends on the filter bar only; its own sort and column filters come with each block request.
  const filterQuery = useMemo(() => {
    const q = apiQuery(search, ['region', 'quantity', 'sort', 'dir', 'nf']);
    return q.toString();
  }, [search]);
  const fullQuery = apiQuery(search).toString();
  const summary = useQuery(scenarioSummaryQuery(apiQuery(search, ['region', 'quantity', 'sort', 'dir']).toString()));

  const updateSearch = useCallback(
    (next: Record<string, string>) =>
      setSearch(
        (prev) => {
          const out = new URLSearchParams(prev);
          for (const [k, v] of Object.entries(next)) if (v) out.set(k, v); else out.delete(k);
          return out;
        },
        { replace: true },
      ),
    [setSearch],
  );

  const [meta, setMeta] = useState<{ total: number; weights: string } | null>(null);
  const datasource = useMemo<IDatasource>(
    () => ({
      getRows: (params: IGetRowsParams) => {
        const q = new URLSearchParams(filterQuery);
        const sort = params.sortModel[0];
        if (sort) {
          q.set('sort', sort.colId);
          q.set('dir', sort.sort);
        }
        const nf = numberFiltersFromModel(params.filterModel as Record<string, unknown>);
        if (nf) q.set('nf', nf);
        q.set('offset', String(params.startRow));
        q.set('limit', String(params.endRow - params.startRow));
        fetchScenarioPage(q).then(
          (page) => {
            params.successCallback(page.rows, page.total);
            const w = page.weights;
            setMeta({ total: page.total, weights: w.kind === 'call' ? `latest published regime call (published ${formatCycle(w.publishedAt ?? '')})` : 'equal per run' });
          },
          () => params.failCallback(),
        );
      },
    }),
    [filterQuery],
  );

  const onGridReady = useCallback(
    (e: GridReadyEvent<ScenarioRow>) => {
      gridApi.current = e.api;
      const sort = search.get('sort');
      if (sort) e.api.applyColumnState({ state: [{ colId: sort, sort: search.get('dir') === 'desc' ? 'desc' : 'asc' }], defaultState: { sort: null } });
      const nf = search.get('nf');
      if (nf) e.api.setFilterModel(filterModelFromNumberFilters(nf));
    },
    // Only the URL at first render: later changes flow from the grid to the URL.
    // eslint-disable-next-line react-hooks/exhaustive-deps
    [],
  );

  const syncGridToUrl = useCallback(() => {
    const api = gridApi.current;
    if (!api) return;
    const sort = api.getColumnState().find((c) => c.sort);
    updateSearch({ sort: sort?.colId ?? '', dir: sort?.sort ?? '', nf: numberFiltersFromModel(api.getFilterModel() as Record<string, unknown>) });
  }, [updateSearch]);

  const currentView = useCallback(
    (): SavedView['state'] => ({
      query: search.toString(),
      columnState: (gridApi.current?.getColumnState() ?? []) as unknown as Record<string, unknown>[],
      filterModel: (gridApi.current?.getFilterModel() ?? {}) as Record<string, unknown>,
    }),
    [search],
  );
  const applyView = useCallback(
    (view: SavedView) => {
      setSearch(new URLSearchParams(view.state.query), { replace: false });
      const api = gridApi.current;
      if (!api) return;
      if (view.state.columnState) api.applyColumnState({ state: view.state.columnState as never, applyOrder: true });
      api.setFilterModel(view.state.filterModel ?? null);
    },
    [setSearch],
  );

  const regions = useMemo(() => {
    const seen = new Map<string, string>();
    for (const r of summary.data?.rows ?? []) seen.set(r.regionId, r.region);
    return [...seen];
  }, [summary.data]);
  const chartRegion = search.get('region') ?? regions[0]?.[0] ?? '';
  const quantity = (SCENARIO_QUANTITIES as readonly string[]).includes(search.get('quantity') ?? '') ? (search.get('quantity') as ScenarioQuantity) : 'precipMm';
  const chartRows = (summary.data?.rows ?? []).filter((r) => r.regionId === chartRegion);

  return (
    <div className="flex flex-col gap-3">
      <PageHeader
        title="Scenarios"
        subtitle="Precipitation, cloud, solar and hydro per region, day and scenario, with weighted P10/P50/P90 and the change since the previous cycle."
        actions={
          mayExport ? (
            <>
              <a className="rounded bg-action px-3 py-1.5 text-xs font-medium text-white hover:bg-action-hover" href={exportUrl('xlsx', fullQuery)}>
                Export .xlsx
              </a>
              <a className="rounded border border-line px-3 py-1.5 text-xs hover:bg-surface-sunken" href={exportUrl('csv', fullQuery)}>
                Export CSV
              </a>
            </>
          ) : null
        }
      />
      <FilterBar key={filterBarKey(search)} search={search} onChange={updateSearch} />
      {summary.isError ? (
        <p role="alert" className="text-xs text-caution">
          The scenarios could not be loaded: {summary.error.message}
          {problemDetails(summary.error)}
        </p>
      ) : null}
      {summary.data && summary.data.runs.length === 0 ? (
        <EmptyState icon="scenarios" title="No scenarios yet">
          Scenario rows appear once a run has been diagnosed and its regional signals computed; widen the filter if runs exist.
        </EmptyState>
      ) : null}
      <div className="flex flex-wrap items-center justify-between gap-2">
        <SavedViews current={currentView} onApply={applyView} />
        <p className="text-xs text-ink-muted">
          {meta ? (
            <>
              <span className="num">{meta.total.toLocaleString('en-GB')}</span> rows · weights: {meta.weights} ·{' '}
            </>
          ) : null}
          runs: {(summary.data?.runs ?? []).map((r) => `${r.model} ${formatCycle(r.cycle)}`).join(', ') || '–'}
        </p>
      </div>
      <DataGrid<ScenarioRow>
        height={480}
        columnDefs={scenarioColumns}
        rowModelType="infinite"
        datasource={datasource}
        cacheBlockSize={PAGE_SIZE}
        maxBlocksInCache={20}
        pinnedTopRowData={pinnedRows(summary.data) as ScenarioRow[]}
        getRowClass={(p) => (p.node.rowPinned ? 'font-semibold' : undefined)}
        onGridReady={onGridReady}
        onSortChanged={syncGridToUrl}
        onFilterChanged={syncGridToUrl}
        defaultColDef={{ resizable: true, sortable: false }}
      />
      <div className="grid gap-3 xl:grid-cols-[minmax(0,2fr)_minmax(0,3fr)]">
        <Card title="Fan chart">
          <div className="mb-2 flex flex-wrap gap-2 text-xs">
            <select aria-label="Region" className="rounded border border-line bg-surface px-2 py-1" value={chartRegion} onChange={(e) => updateSearch({ region: e.target.value })}>
              {regions.map(([id, name]) => (
                <option key={id} value={id}>
                  {name}
                </option>
              ))}
            </select>
            <select aria-label="Quantity" className="rounded border border-line bg-surface px-2 py-1" value={quantity} onChange={(e) => updateSearch({ quantity: e.target.value })}>
              {SCENARIO_QUANTITIES.map((q) => (
                <option key={q} value={q}>
                  {QUANTITY_LABELS[q].label} ({QUANTITY_LABELS[q].unit})
                </option>
              ))}
            </select>
          </div>
          {chartRows.length ? <FanChart rows={chartRows} quantity={quantity} dark={dark} /> : <p className="text-ink-muted">No rows for this filter.</p>}
        </Card>
        <Card title="Weighted percentiles per region and day">
          <DataGrid height={320} columnDefs={summaryColumns} rowData={summary.data?.rows ?? []} defaultColDef={{ resizable: true }} />
        </Card>
      </div>
      <CautionNote>
        {CAUTIONS.join(' ')} Weights: each run counts equally, shared by its members, unless the latest published regime call weights them. Percentiles are weighted across scenarios.
      </CautionNote>
    </div>
  );
}
