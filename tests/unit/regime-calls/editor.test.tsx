import { fireEvent, render, screen, waitFor } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { Providers, createQueryClient } from '@/app/providers.tsx';
import { routes } from '@/app/routes.tsx';

const RUN_ID = '6f1c2a52-2d1e-4c35-9a53-0d3c1c8b7e10';
const CALL_ID = '0b8f0d7e-5c1a-4f3e-9d2b-1a2b3c4d5e6f';
const RUN = {
  id: RUN_ID,
  checksum: 'a'.repeat(64),
  sizeBytes: 1,
  fileName: 'ens.nc',
  format: 'netcdf4',
  model: 'NVE',
  cycle: '2026-12-01T00:00:00.000Z',
  members: [0, 1],
  isEnsemble: true,
  steps: [0, 12],
  levelsHpa: [500],
  variables: ['z'],
  grid: null,
  state: 'ready',
  progress: 1,
  message: null,
  uploadedBy: null,
  createdAt: '2026-12-01T05:00:00.000Z',
  updatedAt: '2026-12-01T05:01:00.000Z',
};
const CALL = {
  id: CALL_ID,
  seriesId: '1b8f0d7e-5c1a-4f3e-9d2b-1a2b3c4d5e6f',
  version: 1,
  state: 'draft',
  validFrom: '2026-12-03',
  validTo: '2026-12-05',
  regimes: [{ from: '2026-12-03', to: '2026-12-05', regimeId: 1 }],
  confidence: 'medium',
  weights: { basis: 'member', weights: [{ key: `${RUN_ID}:0`, pct: 50 }, { key: `${RUN_ID}:1`, pct: 40 }] },
  keyRisks: '',
  narrative: '',
  linkedRunIds: [RUN_ID],
  correctionOf: null,
  correctionReason: null,
  authorId: null,
  authorName: 'Dana Met',
  createdAt: '2026-12-02T05:00:00.000Z',
  updatedAt: '2026-12-02T05:00:00.000Z',
  publishedAt: null,
};

const puts: unknown[] = [];

beforeEach(() => {
  puts.length = 0;
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
      const url = String(input);
      const ok = (body: unknown) => new Response(JSON.stringify(body), { status: 200 });
      if (url.endsWith('/api/app-info')) return ok({ environment: 'development', version: '0.1.0', devTools: true });
      if (url.endsWith('/api/me')) return ok({ id: 'u1', name: 'Dana Met', email: 'dana@nordvale.example', roles: ['meteorologist'], csrfToken: 'token' });
      if (url.endsWith('/api/runs')) return ok({ runs: [RUN] });
      if (url.endsWith(`/api/runs/${RUN_ID}/clusterings`)) return ok({ clusterings: [] });
      if (url.endsWith('/api/regime-names')) return ok({ names: [{ id: 1, name: 'Westerly flow', description: '', active: true }] });
      if (url.endsWith('/api/regime-calls')) return ok({ calls: [CALL] });
      if (url.endsWith(`/api/regime-calls/${CALL_ID}`) && init?.method === 'PUT') {
        puts.push(JSON.parse(String(init.body)));
        return ok({ call: { ...CALL, ...JSON.parse(String(init.body)) } });
      }
      if (url.endsWith(`/api/regime-calls/${CALL_ID}`)) return ok({ call: CALL, narrativeHtml: '', versions: [CALL] });
      return new Response(JSON.stringify({ error: { code: 'not_found', message: 'x' } }), { status: 404 });
    }),
  );
});
afterEach(() => vi.unstubAllGlobals());

describe('the call editor', () => {
  it('shows the live weight total, blocks Publish until it is 100 %, and saves the draft after a pause in typing', async () => {
    const router = createMemoryRouter(routes, { initialEntries: [`/regime-calls?call=${CALL_ID}`] });
    render(
      <Providers client={createQueryClient()}>
        <RouterProvider router={router} />
      </Providers>,
    );
    expect(await screen.findByText('90.0 % (must be 100 %)')).toBeInTheDocument();
    expect(screen.getByRole('button', { name: 'Publish' })).toBeDisabled();
    const second = await screen.findByLabelText(/weight of NVE .* member 1 in %/);
    fireEvent.change(second, { target: { value: '50' } });
    expect(await screen.findByText('100.0 %')).toBeInTheDocument();
    expect(screen.getByRole('button', { name: 'Publish' })).toBeEnabled();
    expect(puts).toHaveLength(0);
    await waitFor(() => expect(puts).toHaveLength(1), { timeout: 4000 });
    expect(puts[0]).toMatchObject({ weights: { basis: 'member', weights: [{ key: `${RUN_ID}:0`, pct: 50 }, { key: `${RUN_ID}:1`, pct: 50 }] } });
  });
});
