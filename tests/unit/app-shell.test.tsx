import { render, screen } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { Providers, createQueryClient } from '@/app/providers.tsx';
import { routes } from '@/app/routes.tsx';

function renderAt(path: string) {
  const router = createMemoryRouter(routes, { initialEntries: [path] });
  render(
    <Providers client={createQueryClient()}>
      <RouterProvider router={router} />
    </Providers>,
  );
  return router;
}

const RUN = {
  id: '6f1c2a52-2d1e-4c35-9a53-0d3c1c8b7e10',
  checksum: 'a'.repeat(64),
  sizeBytes: 1_200_000,
  fileName: 'nvm.grib2',
  format: 'grib2',
  model: 'NVM',
  cycle: '2026-12-01T00:00:00.000Z',
  members: [0],
  isEnsemble: false,
  steps: [0, 6, 12],
  levelsHpa: [1000, 850, 500],
  variables: ['z', 't'],
  grid: { nlat: 45, nlon: 81, latFirst: 72, latLast: 50, lonFirst: -6, lonLast: 34, dlat: 0.5, dlon: 0.5 },
  state: 'ready',
  progress: 1,
  message: null,
  uploadedBy: null,
  createdAt: '2026-12-01T05:00:00.000Z',
  updatedAt: '2026-12-01T05:01:00.000Z',
};

let currentRoles: string[] = [];

beforeEach(() => {
  currentRoles = ['meteorologist', 'trader', 'risk', 'admin'];
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL) => {
      const url = String(input);
      if (url.endsWith('/api/app-info')) {
        return new Response(JSON.stringify({ environment: 'development', version: '0.1.0', devTools: true }), { status: 200 });
      }
      if (url.endsWith('/api/runs')) return new Response(JSON.stringify({ runs: [] }), { status: 200 });
      if (url.endsWith(`/api/runs/${RUN.id}`)) return new Response(JSON.stringify({ run: RUN }), { status: 200 });
      if (url.endsWith('/api/me')) {
        const me = { id: 'u1', name: 'Anders Lund', email: 'anders.lund@nordvale.example', roles: currentRoles, csrfToken: 'token' };
        return new Response(JSON.stringify(me), { status: 200 });
      }
      if (url.includes('/api/snapshots?')) return new Response(JSON.stringify({ snapshots: [], total: 0 }), { status: 200 });
      if (url.includes('/api/scenarios/summary')) {
        const band = { p10: null, p50: null, p90: null };
        const overall = Object.fromEntries(['precipMm', 'snowShare', 'cloudPct', 'ghiKwhM2', 'solarGwh', 'inflowGwh', 'anomalyMm'].map((q) => [q, band]));
        return new Response(JSON.stringify({ rows: [], overall, runs: [], previousRuns: [], weights: { kind: 'equal', callId: null, publishedAt: null } }), { status: 200 });
      }
      if (url.endsWith('/api/scenario-views')) return new Response(JSON.stringify({ views: [] }), { status: 200 });
      if (url.endsWith('/api/regime-calls')) return new Response(JSON.stringify({ calls: [] }), { status: 200 });
      if (url.endsWith('/api/regions')) return new Response(JSON.stringify({ regions: [] }), { status: 200 });
      if (url.endsWith('/api/calibration-sets')) return new Response(JSON.stringify({ sets: [] }), { status: 200 });
      if (url.endsWith('/api/admin/role-mappings')) return new Response(JSON.stringify({ mappings: [] }), { status: 200 });
      return new Response(JSON.stringify({ error: { code: 'not_found', message: 'x' } }), { status: 404 });
    }),
  );
});

afterEach(() => {
  vi.unstubAllGlobals();
});

describe('every screen of the route table renders', () => {
  it.each([
    ['/runs', 'Runs', 'No model runs yet'],
    [`/runs/${RUN.id}`, 'Run view', 'No diagnosis for this run'],
    ['/scenarios', 'Scenarios', 'No scenarios yet'],
    ['/regime-calls', 'Regime calls', 'No regime calls published'],
    ['/snapshots', 'Snapshots', 'No snapshots sealed'],
    ['/admin', 'Admin', 'No regions loaded'],
    ['/outbox', 'Outbox', 'No mail caught'],
  ])('%s shows its heading and an honest empty state', async (path, heading, empty) => {
    renderAt(path);
    expect(await screen.findByRole('heading', { level: 1, name: heading })).toBeInTheDocument();
    expect(await screen.findByText(empty)).toBeInTheDocument();
    expect(screen.getByRole('navigation', { name: 'Screens' })).toBeInTheDocument();
  });

  it('the root redirects to Runs', async () => {
    const router = renderAt('/');
    expect(await screen.findByRole('heading', { level: 1, name: 'Runs' })).toBeInTheDocument();
    expect(router.state.location.pathname).toBe('/runs');
  });

  it('the sign-in screen has one button to the identity provider', async () => {
    vi.mocked(fetch).mockImplementation(async () => new Response(JSON.stringify({ error: { code: 'unauthorized', message: 'Sign in first.' } }), { status: 401 }));
    renderAt('/sign-in');
    const link = await screen.findByRole('link', { name: 'Sign in' });
    expect(link).toHaveAttribute('href', '/auth/saml/login');
  });

  it('an unknown address shows the not-found page inside the frame', async () => {
    renderAt('/nowhere');
    expect(await screen.findByText('No such screen')).toBeInTheDocument();
  });

  it('shows the development-only Outbox in the navigation when the server says so', async () => {
    renderAt('/runs');
    expect(await screen.findByRole('link', { name: 'Outbox' })).toBeInTheDocument();
  });
});

describe('the Runs screen', () => {
  it('hides the upload panel from a trader, who cannot upload', async () => {
    currentRoles = ['trader'];
    renderAt('/runs');
    expect(await screen.findByText(/uploaded by the desk meteorologists/)).toBeInTheDocument();
    expect(screen.queryByRole('button', { name: 'Choose file…' })).toBeNull();
  });

  it('shows the upload panel with a keyboard-reachable file button', async () => {
    renderAt('/runs');
    expect(await screen.findByRole('button', { name: 'Choose file…' })).toBeInTheDocument();
    expect(screen.getByLabelText('Model run file')).toHaveAttribute('type', 'file');
  });

  it('the run view shows the run header with model, grid and checksum', async () => {
    renderAt(`/runs/${RUN.id}`);
    expect(await screen.findByText('NVM')).toBeInTheDocument();
    expect(screen.getByText('81×45, 0.5°×0.5°')).toBeInTheDocument();
    expect(screen.getByText(`${'a'.repeat(16)}…`)).toBeInTheDocument();
  });
});
