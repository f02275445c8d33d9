/**
 * The role matrix, generated from shared/permissions.ts: every API route, for a signed-out
 * visitor, a person with no role and each role, answers 401 / 403 / success as the table says.
 * Every /api route Express registers must be in the table.
 */
import express from 'express';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decide, PERMISSIONS, type Permission } from '@shared/permissions.ts';
import { ROLES, type Role } from '@shared/roles.ts';
import { authorizeApi } from '../../../server/auth/authorize.ts';
import { registeredRoutes, unlistedApiRoutes } from '../../../server/auth/route-list.ts';
import { CookieJar, me, send, signInAs, startAuthTestApp, type AuthTestApp } from './harness.ts';

interface Caller {
  label: string;
  roles: Role[] | null;
  jar: CookieJar;
  csrf?: string;
}

/** A request body that succeeds for the routes that need one. */
async function sampleBody(t: AuthTestApp, entry: Permission): Promise<string | undefined> {
  if (entry.method === 'PUT' && entry.path === '/api/admin/role-mappings') {
    const res = await t.db.pool.query<{ group: string; role: string }>('SELECT "group", role FROM role_mappings');
    return JSON.stringify({ mappings: res.rows });
  }
  return entry.method === 'GET' ? undefined : '{}';
}

describe('the permission table is the one authorization gate', () => {
  let t: AuthTestApp;
  const callers: Caller[] = [];

  beforeAll(async () => {
    t = await startAuthTestApp();
    callers.push({ label: 'signed out', roles: null, jar: new CookieJar() });
    const personas: Array<[string, Role[], () => Promise<Response>]> = [];
    for (const role of ROLES) {
      const jar = new CookieJar();
      personas.push([role, [role], () => signInAs(t, jar, role)]);
      callers.push({ label: role, roles: [role], jar });
    }
    const noRole = new CookieJar();
    callers.push({ label: 'no role', roles: [], jar: noRole });
    await signInAs(t, noRole, 'custom', { name: 'Nobody Special', email: 'nobody@nordvale.example', otherGroups: 'lw-visitors' });
    for (const [, , signIn] of personas) expect((await signIn()).status).toBe(303);
    for (const caller of callers.slice(1)) {
      const res = await me(t, caller.jar);
      const body = await res.json();
      expect(body.roles).toEqual(caller.roles);
      caller.csrf = body.csrfToken;
    }
  });
  afterAll(async () => {
    await t.close();
  });

  it('every /api route Express registers is in the table, and every table entry is registered', () => {
    expect(unlistedApiRoutes(t.app)).toEqual([]);
    const registered = registeredRoutes(t.app);
    const missing = PERMISSIONS.filter((p) => !registered.some((r) => r.method === p.method && r.path === p.path));
    expect(missing).toEqual([]);
  });

  it('the route check notices a route added without a table entry', () => {
    const app = express();
    const router = express.Router();
    router.get('/health', (_req, res) => void res.end());
    router.post('/runs/:runId/publish', (_req, res) => void res.end());
    app.use('/api', router);
    expect(unlistedApiRoutes(app)).toEqual([{ method: 'POST', path: '/api/runs/:runId/publish' }]);
  });

  it('a route missing from the table is refused even though a handler would answer', async () => {
    const app = express();
    let reached = false;
    app.use('/api', authorizeApi(PERMISSIONS));
    app.get('/api/unlisted', (_req, res) => {
      reached = true;
      res.json({ ok: true });
    });
    app.use(((err, _req, res, _next) => void res.status(err.status).json({ code: err.code })) as express.ErrorRequestHandler);
    const server = app.listen(0, '127.0.0.1');
    await new Promise((r) => server.once('listening', r));
    try {
      const { port } = server.address() as { port: number };
      const res = await fetch(`http://127.0.0.1:${port}/api/unlisted`);
      expect(res.status).toBe(404);
      expect(reached).toBe(false);
    } finally {
      server.close();
    }
  });

  const matrix = PERMISSIONS.flatMap((entry) => ['signed out', 'no role', ...ROLES].map((label) => ({ entry, label })));
  it.each(matrix)('$entry.method $entry.path as $label', async ({ entry, label }) => {
    const caller = callers.find((c) => c.label === label)!;
    const headers: Record<string, string> = { Accept: 'application/json', 'Content-Type': 'application/json' };
    if (caller.csrf) headers['X-CSRF-Token'] = caller.csrf;
    const path = entry.path.replace(/:\w+/g, 'sample');
    const res = await send(caller.jar, `${t.baseUrl}${path}`, { method: entry.method, headers, body: await sampleBody(t, entry) });
    const expected = decide(entry.access, caller.roles);
    if (expected === 'unauthenticated') expect(res.status).toBe(401);
    else if (expected === 'forbidden') expect(res.status).toBe(403);
    else {
      // Allowed: the gate let the request through to its route. The route may still refuse the
      // sample input (400/404/409/422), but never as unauthenticated, forbidden or unrouted.
      const text = await res.text();
      expect([401, 403], text).not.toContain(res.status);
      expect(text).not.toContain('No such API route');
      expect(res.status, text).toBeLessThan(500);
    }
  });

  it('a state-changing request without the CSRF token is refused with 403', async () => {
    const admin = callers.find((c) => c.label === 'admin')!;
    const body = JSON.stringify({ mappings: [{ group: 'lw-admins', role: 'admin' }] });
    const withoutToken = await send(admin.jar, `${t.baseUrl}/api/admin/role-mappings`, { method: 'PUT', headers: { 'Content-Type': 'application/json' }, body });
    expect(withoutToken.status).toBe(403);
    expect((await withoutToken.json()).error.code).toBe('csrf');
    const wrongToken = await send(admin.jar, `${t.baseUrl}/api/admin/role-mappings`, {
      method: 'PUT',
      headers: { 'Content-Type': 'application/json', 'X-CSRF-Token': callers.find((c) => c.label === 'risk')!.csrf! },
      body,
    });
    expect(wrongToken.status).toBe(403);
    const mappings = await t.db.pool.query('SELECT count(*)::int AS n FROM role_mappings');
    expect(mappings.rows[0].n).toBeGreaterThan(1);
  });
});
