import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PEOPLE } from '../../../server/dev/idp/people.ts';
import { CookieJar, me, readForm, send, signInAs, startAuthTestApp, startSignIn, type AuthTestApp } from './harness.ts';

describe('sign-in round trip through the local identity provider', () => {
  let t: AuthTestApp;
  beforeAll(async () => {
    t = await startAuthTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('is signed out at first: /api/me answers 401', async () => {
    const res = await me(t, new CookieJar());
    expect(res.status).toBe(401);
  });

  it('login redirects to the local IdP with a deflated AuthnRequest', async () => {
    const url = await startSignIn(t, new CookieJar(), '/scenarios');
    expect(url.origin + url.pathname).toBe(`${t.baseUrl}/idp/sso`);
    expect(url.searchParams.get('SAMLRequest')).toBeTruthy();
    expect(url.searchParams.get('RelayState')).toBe('/scenarios');
  });

  it('the IdP page lists every demo person and uses no inline script', async () => {
    const jar = new CookieJar();
    const res = await send(jar, (await startSignIn(t, jar)).toString());
    const html = await res.text();
    for (const p of DEMO_PEOPLE) expect(html).toContain(p.name);
    expect(html).not.toMatch(/<script(?![^>]*\ssrc=)/);
    expect(res.headers.get('content-security-policy')).toContain("script-src 'self'");
  });

  it('a demo person signs in: signed response -> ACS -> session cookie -> /api/me with the roles', async () => {
    const jar = new CookieJar();
    const acs = await signInAs(t, jar, 'meteorologist-trader');
    expect(acs.status).toBe(303);
    expect(acs.headers.get('location')).toBe('/');
    const cookie = acs.headers.getSetCookie().find((c) => c.startsWith('liftwise.sid='));
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    const res = await me(t, jar);
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({ name: 'Kari Holm', email: 'kari.holm@nordvale.example', roles: ['meteorologist', 'trader'] });
    expect(body.csrfToken).toMatch(/^[\w-]{40,}$/);
  });

  it('a custom person gets the roles of the groups chosen', async () => {
    const jar = new CookieJar();
    const acs = await signInAs(t, jar, 'custom', { name: 'Test Person', email: 'test.person@nordvale.example', groups: ['lw-risk', 'lw-admins'], otherGroups: 'unmapped-group' });
    expect(acs.status).toBe(303);
    expect(await (await me(t, jar)).json()).toMatchObject({ name: 'Test Person', roles: ['risk', 'admin'] });
  });

  it('returns to the page asked for, and never to another site', async () => {
    const jar = new CookieJar();
    const idpUrl = await startSignIn(t, jar, '/regime-calls');
    const picker = readForm(await (await send(jar, idpUrl.toString())).text());
    const posted = await send(jar, new URL(picker.action, t.baseUrl).toString(), { method: 'POST', body: new URLSearchParams({ ...picker.fields, person: 'trader' }) });
    const auto = readForm(await posted.text());
    const acs = await send(jar, auto.action, { method: 'POST', body: new URLSearchParams(auto.fields) });
    expect(acs.headers.get('location')).toBe('/regime-calls');
    expect((await send(new CookieJar(), `${t.baseUrl}/auth/saml/login?RelayState=${encodeURIComponent('//evil.example/')}`)).status).toBe(400);
  });

  it('regenerates the session id at sign-in', async () => {
    const jar = new CookieJar();
    await signInAs(t, jar, 'trader');
    const first = jar.get('liftwise.sid');
    await signInAs(t, jar, 'risk');
    const second = jar.get('liftwise.sid');
    expect(first).toBeTruthy();
    expect(second).toBeTruthy();
    expect(second).not.toBe(first);
    // The earlier id no longer opens a session.
    const stale = new CookieJar();
    stale.store(new Response(null, { headers: { 'set-cookie': `liftwise.sid=${first}` } }));
    expect((await me(t, stale)).status).toBe(401);
  });

  it('sign-out needs the CSRF token, then destroys the session server-side', async () => {
    const jar = new CookieJar();
    await signInAs(t, jar, 'admin');
    const { csrfToken } = await (await me(t, jar)).json();
    const sid = jar.get('liftwise.sid');
    expect((await send(jar, `${t.baseUrl}/auth/logout`, { method: 'POST' })).status).toBe(403);
    expect((await send(jar, `${t.baseUrl}/auth/logout`, { method: 'POST', headers: { 'X-CSRF-Token': csrfToken } })).status).toBe(204);
    const replayed = new CookieJar();
    replayed.store(new Response(null, { headers: { 'set-cookie': `liftwise.sid=${sid}` } }));
    expect((await me(t, replayed)).status).toBe(401);
    const rows = await t.db.pool.query("SELECT action FROM audit_events WHERE action IN ('auth.sign_in', 'auth.sign_out')");
    expect(rows.rows.map((r) => r.action)).toEqual(expect.arrayContaining(['auth.sign_in', 'auth.sign_out']));
  });

  it('publishes SP metadata with our entity id and ACS URL', async () => {
    const res = await fetch(`${t.baseUrl}/auth/saml/metadata`);
    const xml = await res.text();
    expect(res.status).toBe(200);
    expect(xml).toContain(`entityID="${t.config.auth.spEntityId}"`);
    expect(xml).toContain(`Location="${t.baseUrl}/auth/saml/acs"`);
  });
});
