import { act, fireEvent, render, screen, waitFor, within } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { Providers, createQueryClient } from '@/app/providers.tsx';
import { routes } from '@/app/routes.tsx';
import { setCsrfToken } from '@/lib/api.ts';

// Canvas charts do not render in happy-dom: stand in a div that shows what it was given.
// onReady gets a stand-in chart whose pixel <-> lat/lon conversion is the identity (x = lon, y = lat).
const clickHandlers: ((e: { offsetX: number; offsetY: number }) => void)[] = [];
vi.mock('@/components/charts/EChart.tsx', async () => {
  const { useEffect } = await import('react');
  return {
    EChart: ({ label, option, onReady }: { label: string; option: { series?: { id?: string }[] }; onReady?: (chart: unknown) => void }) => {
      useEffect(() => {
        onReady?.({
          getZr: () => ({ on: (_name: string, handler: (e: { offsetX: number; offsetY: number }) => void) => clickHandlers.push(handler) }),
          containPixel: () => true,
          convertFromPixel: (_finder: unknown, [x, y]: number[]) => [x, y],
        });
      }, []);
      return <div role="img" aria-label={label} data-testid="echart" data-series={(option.series ?? []).map((s) => s.id ?? '').join(',')} />;
    },
  };
});

const RUN_ID = '11111111-1111-4111-8111-111111111111';
const run = {
  id: RUN_ID,
  checksum: 'a'.repeat(64),
  sizeBytes: 1000,
  fileName: 'nvm.grib2',
  format: 'grib2',
  model: 'NVM',
  cycle: '2026-12-01T00:00:00.000Z',
  members: [0, 1],
  isEnsemble: true,
  steps: [0, 6, 12],
  levelsHpa: [1000, 850, 500, 300],
  variables: ['z', 't', 'w'],
  grid: { nlat: 2, nlon: 3, latFirst: 52, latLast: 50, lonFirst: 0, lonLast: 4, dlat: 2, dlon: 2 },
  state: 'ready',
  progress: 1,
  message: null,
  uploadedBy: null,
  createdAt: '2026-12-01T01:00:00.000Z',
  updatedAt: '2026-12-01T01:00:00.000Z',
};

type Me = { id: string; name: string; email: string; roles: string[]; csrfToken: string };
let me: Me;
let regions: unknown[] | null = null;
let signalRows: unknown[] | null = null;
const calls: { url: string; method: string; headers: Headers }[] = [];
const json = (body: unknown, status = 200) => new Response(JSON.stringify(body), { status });

function omega(url: URL) {
  const step = Number(url.searchParams.get('step'));
  return {
    member: 'mean',
    step,
    validTime: new Date(Date.parse(run.cycle) + step * 3600_000).toISOString(),
    levelHpa: Number(url.searchParams.get('level')),
    part: url.searchParams.get('part'),
    lat: [50, 52],
    lon: [0, 2, 4],
    values: [-0.4, 0, 0.2, null, 0.1, -0.1],
    units: 'Pa s-1',
    min: -0.4,
    max: 0.2,
  };
}

const diagnostics = {
  runId: RUN_ID,
  member: 'mean',
  averagedMembers: [0, 1],
  f0: 1.26e-4,
  levelsHpa: run.levelsHpa,
  steps: run.steps.map((step) => ({
    step,
    validTime: new Date(Date.parse(run.cycle) + step * 3600_000).toISOString(),
    residual: 1e-13,
    solveMs: 12,
    sigma: [3e-6, 2e-6, 2e-6, 5e-6],
    omegaMin: [0, -0.3, -0.5, 0],
    omegaMean: [0, 0, 0, 0],
    omegaMax: [0, 0.2, 0.3, 0],
    correlation: [null, 0.7, 0.8, 0.4],
    warnings: [],
  })),
};

beforeEach(() => {
  calls.length = 0;
  clickHandlers.length = 0;
  regions = null;
  signalRows = null;
  setCsrfToken(null);
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL, init: RequestInit = {}) => {
      const url = new URL(String(input), 'http://localhost');
      const method = (init.method ?? 'GET').toUpperCase();
      calls.push({ url: url.pathname + url.search, method, headers: new Headers(init.headers) });
      const p = url.pathname;
      if (p === '/api/app-info') return json({ environment: 'development', version: '0.1.0', devTools: true });
      if (p === '/api/me') return json(me);
      if (p === `/api/runs/${RUN_ID}`) return json({ run });
      if (p === `/api/runs/${RUN_ID}/members`)
        return json({
          members: [
            { member: 0, state: 'done', progress: 1, message: null, attempts: 1, updatedAt: run.updatedAt },
            { member: 1, state: 'failed', progress: 0.3, message: 'solver diverged', attempts: 3, updatedAt: run.updatedAt },
          ],
        });
      if (p === `/api/runs/${RUN_ID}/members/1/retry` && method === 'POST') return json({ retried: { runId: RUN_ID, member: 1 } }, 202);
      if (p === `/api/runs/${RUN_ID}/omega`) return json(omega(url));
      if (p === `/api/runs/${RUN_ID}/diagnostics`) return json(diagnostics);
      if (p === '/api/regions' && regions) return json({ regions });
      if (p === `/api/runs/${RUN_ID}/signals` && signalRows) return json({ rows: signalRows });
      return json({ error: { code: 'not_found', message: 'No such API route.' } }, 404);
    }),
  );
});

afterEach(() => {
  vi.unstubAllGlobals();
});

function renderRunView(search = '') {
  const router = createMemoryRouter(routes, { initialEntries: [`/runs/${RUN_ID}${search}`] });
  render(
    <Providers client={createQueryClient()}>
      <RouterProvider router={router} />
    </Providers>,
  );
  return router;
}

const omegaCalls = () => calls.filter((c) => c.url.startsWith(`/api/runs/${RUN_ID}/omega`)).map((c) => new URL(c.url, 'http://localhost').searchParams);

describe('Run view', () => {
  it('draws the ascent map and the valid-time scrubber in the top bar; the scrubber changes the step asked for', async () => {
    me = { id: 'u1', name: 'Ingrid Solheim', email: 'i@nordvale.example', roles: ['trader'], csrfToken: 't1' };
    const router = renderRunView();
    expect(await screen.findByTestId('field-map')).toBeInTheDocument();
    expect(screen.getByRole('img', { name: /Omega at 500 hPa, \+6 h/ })).toBeInTheDocument();
    const topBar = document.getElementById('top-bar-context')!;
    expect(within(topBar).getByTestId('valid-time')).toHaveTextContent('2026-12-01 06Z (+6 h)');
    expect(omegaCalls()[0].get('step')).toBe('6');
    expect(omegaCalls()[0].get('member')).toBe('mean');

    fireEvent.click(within(topBar).getByRole('button', { name: 'Next valid time' }));
    await waitFor(() => expect(omegaCalls().some((q) => q.get('step') === '12')).toBe(true));
    expect(within(topBar).getByTestId('valid-time')).toHaveTextContent('2026-12-01 12Z (+12 h)');
    expect(router.state.location.search).toContain('step=12');
    expect(within(topBar).getByRole('button', { name: 'Next valid time' })).toBeDisabled();

    fireEvent.change(within(topBar).getByRole('slider', { name: 'Valid time' }), { target: { value: '0' } });
    await waitFor(() => expect(omegaCalls().some((q) => q.get('step') === '0')).toBe(true));

    fireEvent.change(within(topBar).getByRole('combobox', { name: 'Level' }), { target: { value: '300' } });
    await waitFor(() => expect(omegaCalls().some((q) => q.get('level') === '300')).toBe(true));

    fireEvent.click(screen.getByRole('radio', { name: 'Q-vector form' }));
    await waitFor(() => expect(omegaCalls().some((q) => q.get('part') === 'qvector')).toBe(true));
    expect(screen.getByText(/divergence of Q/)).toBeInTheDocument();
  });

  it('shows the QG-versus-model correlation, the cautions, and an honest empty state when there are no signals', async () => {
    me = { id: 'u1', name: 'Ingrid Solheim', email: 'i@nordvale.example', roles: ['trader'], csrfToken: 't1' };
    renderRunView();
    expect(await screen.findByRole('img', { name: /Pattern correlation between QG omega/ })).toBeInTheDocument();
    expect(screen.getByRole('img', { name: /Static stability sigma/ })).toBeInTheDocument();
    expect(await screen.findByText(/No regional signals for this run/)).toBeInTheDocument();
    expect(screen.getByText(/it is not a safety forecast/)).toBeInTheDocument();
  });

  it('a typed section line asks the server for that section', async () => {
    me = { id: 'u1', name: 'Ingrid Solheim', email: 'i@nordvale.example', roles: ['trader'], csrfToken: 't1' };
    renderRunView();
    await screen.findByTestId('field-map');
    fireEvent.change(screen.getByLabelText('From (lat, lon)'), { target: { value: '50.5, 1' } });
    fireEvent.change(screen.getByLabelText('To (lat, lon)'), { target: { value: '51.5, 3' } });
    fireEvent.click(screen.getByRole('button', { name: 'Draw section' }));
    await waitFor(() => expect(calls.some((c) => c.url.includes('/section?') && c.url.includes('from=50.5%2C1') && c.url.includes('to=51.5%2C3'))).toBe(true));
  });

  it('two clicks on the map draw the line and ask for that section; clicks outside the domain are ignored', async () => {
    me = { id: 'u1', name: 'Ingrid Solheim', email: 'i@nordvale.example', roles: ['trader'], csrfToken: 't1' };
    renderRunView();
    await screen.findByTestId('field-map');
    await waitFor(() => expect(clickHandlers.length).toBeGreaterThan(0));
    const click = (lon: number, lat: number) => act(() => clickHandlers.forEach((h) => h({ offsetX: lon, offsetY: lat })));
    click(40, 80); // far outside the 50-52N, 0-4E grid
    click(0.5, 50.25);
    click(3.5, 51.75);
    await waitFor(() => expect(calls.some((c) => c.url.includes('/section?') && c.url.includes('from=50.25%2C0.5') && c.url.includes('to=51.75%2C3.5'))).toBe(true));
    expect(screen.getByLabelText('From (lat, lon)')).toHaveValue('50.25, 0.5');
    expect(screen.getAllByTestId('echart')[0].dataset.series).toContain('picked-line');
  });

  it('offers Retry on a failed member to a meteorologist, and sends it with the CSRF token', async () => {
    me = { id: 'u2', name: 'Met Person', email: 'm@nordvale.example', roles: ['meteorologist'], csrfToken: 'tok-met' };
    renderRunView();
    const button = await screen.findByRole('button', { name: 'Retry member 1' });
    expect(screen.queryByRole('button', { name: 'Retry member 0' })).toBeNull();
    expect(screen.getByText('solver diverged')).toBeInTheDocument();
    fireEvent.click(button);
    await waitFor(() => expect(calls.some((c) => c.method === 'POST' && c.url.endsWith('/members/1/retry'))).toBe(true));
    const post = calls.find((c) => c.method === 'POST')!;
    expect(post.headers.get('X-CSRF-Token')).toBe('tok-met');
  });

  it('does not offer Retry to a trader', async () => {
    me = { id: 'u1', name: 'Ingrid Solheim', email: 'i@nordvale.example', roles: ['trader'], csrfToken: 't1' };
    renderRunView();
    expect(await screen.findByText('solver diverged')).toBeInTheDocument();
    expect(screen.queryByRole('button', { name: /Retry member/ })).toBeNull();
  });

  it('draws region outlines when the regions endpoint answers, and small multiples of the regional signals', async () => {
    me = { id: 'u1', name: 'Ingrid Solheim', email: 'i@nordvale.example', roles: ['trader'], csrfToken: 't1' };
    regions = [
      { id: 'fjell', name: 'Fjell catchment', kind: 'hydro', geometry: { type: 'Polygon', coordinates: [[[0, 50], [2, 50], [2, 52], [0, 50]]] } },
      { id: 'sor', name: 'Sor solar zone', kind: 'solar', geometry: { type: 'MultiPolygon', coordinates: [[[[2, 50], [4, 50], [4, 51], [2, 50]]]] } },
    ];
    const row = (regionId: string, member: number, day: string, precipMm: number) => ({
      runId: RUN_ID,
      member,
      regionId,
      day,
      precipMm,
      snowShare: 0.2,
      cloudPct: 70,
      ghiKwhM2: 0.4,
      solarGwh: 0.3,
      inflowGwh: 5,
      modelPrecipMm: 3,
      modelCloudPct: 75,
      hoursCovered: 24,
      calibrationVersion: 1,
      codeVersion: 'test',
      inputChecksum: 'abc',
    });
    signalRows = [row('fjell', 0, '2026-12-01', 4), row('fjell', 1, '2026-12-01', 6), row('sor', 0, '2026-12-01', 1)];
    renderRunView();
    await waitFor(() => expect(screen.getAllByTestId('echart')[0].dataset.series).toContain('region-0-Fjell catchment'));
    expect(screen.getAllByTestId('echart')[0].dataset.series).toContain('region-1-Sor solar zone');
    const chooser = await screen.findByRole('combobox', { name: /Region/ });
    expect(within(chooser).getByRole('option', { name: 'Fjell catchment' })).toBeInTheDocument();
    for (const name of [/Precipitation .* in mm\/day/, /Snow share in %/, /Cloud cover .* in %/, /irradiation in kWh\/m²\/day/, /Solar generation in GWh\/day/, /Inflow energy in GWh\/day/]) {
      expect(screen.getByRole('img', { name })).toBeInTheDocument();
    }
    expect(screen.queryByText(/No regional signals/)).toBeNull();
  });
});
