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

beforeEach(() => {
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL) => {
      const url = String(input);
      if (url.endsWith('/api/app-info')) {
        return new Response(JSON.stringify({ environment: 'development', version: '0.1.0', devTools: true }), { status: 200 });
      }
      if (url.endsWith('/api/me')) {
        const me = { id: 'u1', name: 'Anders Lund', email: 'anders.lund@nordvale.example', roles: ['admin'], csrfToken: 'token' };
        return new Response(JSON.stringify(me), { status: 200 });
      }
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
    ['/runs/abc', 'Run view', 'No diagnosis for this run'],
    ['/scenarios', 'Scenarios', 'No scenarios yet'],
    ['/regime-calls', 'Regime calls', 'No regime calls published'],
    ['/snapshots', 'Snapshots', 'No snapshots sealed'],
    ['/admin', 'Admin', 'No regions loaded'],
    ['/outbox', 'Outbox', 'No mail caught'],
  ])('%s shows its heading and an honest empty state', async (path, heading, empty) => {
    renderAt(path);
    expect(await screen.findByRole('heading', { level: 1, name: heading })).toBeInTheDocument();
    expect(screen.getByText(empty)).toBeInTheDocument();
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
