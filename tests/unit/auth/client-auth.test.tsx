import { fireEvent, render, screen, waitFor, within } from '@testing-library/react';
import { createMemoryRouter, RouterProvider } from 'react-router-dom';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { Providers, createQueryClient } from '@/app/providers.tsx';
import { routes } from '@/app/routes.tsx';
import { setCsrfToken } from '@/lib/api.ts';

type Me = { id: string; name: string; email: string; roles: string[]; csrfToken: string } | null;

let me: Me = null;
let mappings = [
  { group: 'lw-admins', role: 'admin' },
  { group: 'lw-traders', role: 'trader' },
];
const calls: Array<{ url: string; method: string; headers: Headers; body?: string }> = [];

const json = (body: unknown, status = 200) => new Response(JSON.stringify(body), { status });

beforeEach(() => {
  calls.length = 0;
  setCsrfToken(null);
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL, init: RequestInit = {}) => {
      const url = String(input);
      const method = (init.method ?? 'GET').toUpperCase();
      calls.push({ url, method, headers: new Headers(init.headers), body: init.body as string | undefined });
      if (url.endsWith('/api/app-info')) return json({ environment: 'development', version: '0.1.0', devTools: true });
      if (url.endsWith('/api/me')) return me ? json(me) : json({ error: { code: 'unauthorized', message: 'Sign in first.' } }, 401);
      if (url.endsWith('/auth/logout')) return new Response(null, { status: 204 });
      if (url.endsWith('/api/admin/role-mappings') && method === 'PUT') {
        mappings = JSON.parse(init.body as string).mappings;
        return json({ mappings });
      }
      if (url.endsWith('/api/admin/role-mappings')) return json({ mappings });
      return json({ error: { code: 'not_found', message: 'x' } }, 404);
    }),
  );
});

afterEach(() => {
  vi.unstubAllGlobals();
});

function renderAt(path: string) {
  const router = createMemoryRouter(routes, { initialEntries: [path] });
  render(
    <Providers client={createQueryClient()}>
      <RouterProvider router={router} />
    </Providers>,
  );
  return router;
}

describe('signed out', () => {
  it('a screen sends you to sign-in, which returns you there afterwards', async () => {
    me = null;
    const router = renderAt('/scenarios');
    const link = await screen.findByRole('link', { name: 'Sign in' });
    expect(router.state.location.pathname).toBe('/sign-in');
    expect(link).toHaveAttribute('href', '/auth/saml/login?RelayState=%2Fscenarios');
    expect(await screen.findByText(/local identity provider/)).toBeInTheDocument();
  });
});

describe('signed in', () => {
  it('a trader sees their name and role, no Admin in the navigation, and a not-allowed page at /admin', async () => {
    me = { id: 'u2', name: 'Tomas Brekke', email: 'tomas.brekke@nordvale.example', roles: ['trader'], csrfToken: 'tok-trader' };
    renderAt('/admin');
    expect(await screen.findByText('Not available with your roles')).toBeInTheDocument();
    expect(screen.getByText('Tomas Brekke')).toBeInTheDocument();
    const nav = screen.getByRole('navigation', { name: 'Screens' });
    expect(within(nav).queryByRole('link', { name: 'Admin' })).toBeNull();
    expect(within(nav).getByRole('link', { name: 'Scenarios' })).toBeInTheDocument();
    expect(calls.some((c) => c.url.endsWith('/api/admin/role-mappings'))).toBe(false);
  });

  it('signs out with a POST carrying the CSRF token, then shows the sign-in screen', async () => {
    me = { id: 'u2', name: 'Tomas Brekke', email: 'tomas.brekke@nordvale.example', roles: ['trader'], csrfToken: 'tok-trader' };
    const router = renderAt('/runs');
    fireEvent.click(await screen.findByRole('button', { name: /Tomas Brekke/ }));
    me = null;
    fireEvent.click(screen.getByRole('menuitem', { name: 'Sign out' }));
    await waitFor(() => expect(router.state.location.pathname).toBe('/sign-in'));
    const logout = calls.find((c) => c.url.endsWith('/auth/logout'))!;
    expect(logout.method).toBe('POST');
    expect(logout.headers.get('X-CSRF-Token')).toBe('tok-trader');
  });

  it('an admin edits the role mapping and saves it with the CSRF token', async () => {
    me = { id: 'u1', name: 'Anders Lund', email: 'anders.lund@nordvale.example', roles: ['admin'], csrfToken: 'tok-admin' };
    renderAt('/admin');
    expect(await screen.findByText('lw-traders')).toBeInTheDocument();
    fireEvent.click(screen.getByRole('button', { name: 'Remove lw-traders as Trader' }));
    fireEvent.change(screen.getByLabelText('Group'), { target: { value: 'lw-desk-leads' } });
    fireEvent.change(screen.getByLabelText('Role'), { target: { value: 'risk' } });
    fireEvent.click(screen.getByRole('button', { name: 'Add' }));
    fireEvent.click(screen.getByRole('button', { name: 'Save mapping' }));
    await waitFor(() => expect(calls.some((c) => c.method === 'PUT')).toBe(true));
    const put = calls.find((c) => c.method === 'PUT')!;
    expect(put.headers.get('X-CSRF-Token')).toBe('tok-admin');
    expect(JSON.parse(put.body!).mappings).toEqual([
      { group: 'lw-admins', role: 'admin' },
      { group: 'lw-desk-leads', role: 'risk' },
    ]);
    expect(await screen.findByText('lw-desk-leads')).toBeInTheDocument();
  });
});
