/** Session lifetime, cookie attributes in production, the local IdP's absence there, rate limits. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { authnRequestId, b64, newKeyMaterial, responseXml, signResponse, TEST_IDP_ENTITY_ID, TEST_IDP_SSO_URL } from './test-idp.ts';
import { CookieJar, me, send, signInAs, startAuthTestApp, type AuthTestApp } from './harness.ts';

describe('session lifetime (local IdP, 8 h idle / 12 h absolute)', () => {
  let t: AuthTestApp;
  beforeAll(async () => {
    t = await startAuthTestApp({ SESSION_IDLE_MINUTES: '480', SESSION_ABSOLUTE_MINUTES: '720' });
  });
  afterAll(async () => {
    await t.close();
  });

  const sid = (jar: CookieJar) => decodeURIComponent(jar.get('liftwise.sid')!).replace(/^s:/, '').split('.')[0];

  it('an idle session expires server-side', async () => {
    const jar = new CookieJar();
    await signInAs(t, jar, 'trader');
    expect((await me(t, jar)).status).toBe(200);
    await t.db.pool.query("UPDATE session SET expire = now() - interval '1 minute' WHERE sid = $1", [sid(jar)]);
    expect((await me(t, jar)).status).toBe(401);
  });

  it('a busy session still ends at the absolute timeout', async () => {
    const jar = new CookieJar();
    await signInAs(t, jar, 'trader');
    const thirteenHoursAgo = Date.now() - 13 * 3_600_000;
    await t.db.pool.query("UPDATE session SET sess = jsonb_set(sess::jsonb, '{signedInAt}', to_jsonb($2::bigint))::json WHERE sid = $1", [sid(jar), thirteenHoursAgo]);
    expect((await me(t, jar)).status).toBe(401);
    const gone = await t.db.pool.query('SELECT 1 FROM session WHERE sid = $1', [sid(jar)]);
    expect(gone.rowCount).toBe(0);
  });

  it('the cookie lives as long as the idle timeout and rolls forward', async () => {
    const jar = new CookieJar();
    const acs = await signInAs(t, jar, 'risk');
    const cookie = acs.headers.getSetCookie().find((c) => c.startsWith('liftwise.sid='))!;
    const expires = Date.parse(/Expires=([^;]+)/i.exec(cookie)![1]);
    expect(Math.abs(expires - (Date.now() + 480 * 60_000))).toBeLessThan(60_000);
    expect(cookie).not.toMatch(/Secure/i);
  });
});

describe('rate limit on /auth', () => {
  let t: AuthTestApp;
  beforeAll(async () => {
    t = await startAuthTestApp({ AUTH_RATE_LIMIT_PER_MINUTE: '3' });
  });
  afterAll(async () => {
    await t.close();
  });

  it('answers 429 after the limit', async () => {
    const statuses: number[] = [];
    for (let i = 0; i < 4; i++) statuses.push((await fetch(`${t.baseUrl}/auth/saml/metadata`)).status);
    expect(statuses).toEqual([200, 200, 200, 429]);
  });
});

describe('production mode behind an https proxy', () => {
  let t: AuthTestApp;
  const keys = newKeyMaterial('Production test identity provider');
  beforeAll(async () => {
    t = await startAuthTestApp({
      NODE_ENV: 'production',
      PUBLIC_URL: 'https://liftwise.nordvale.example',
      TRUST_PROXY: 'true',
      SESSION_SECRET: 'x'.repeat(40),
      SAML_IDP_SSO_URL: TEST_IDP_SSO_URL,
      SAML_IDP_ENTITY_ID: TEST_IDP_ENTITY_ID,
      SAML_IDP_CERTS: keys.certificatePem,
      SMTP_URL: 'smtp://127.0.0.1:9',
    });
  });
  afterAll(async () => {
    await t.close();
  });

  it('never mounts the local identity provider', async () => {
    expect((await fetch(`${t.baseUrl}/idp/sso`)).status).toBe(404);
    expect((await fetch(`${t.baseUrl}/idp/auto-submit.js`)).status).toBe(404);
  });

  it('sets a Secure, __Host- prefixed, HttpOnly, SameSite=Lax cookie', async () => {
    const jar = new CookieJar();
    const https = { 'X-Forwarded-Proto': 'https' };
    const login = await send(jar, `${t.baseUrl}/auth/saml/login`, { headers: https });
    const id = authnRequestId(new URL(login.headers.get('location')!));
    const sp = { spEntityId: t.config.auth.spEntityId, acsUrl: t.config.auth.acsUrl };
    expect(sp.acsUrl).toBe('https://liftwise.nordvale.example/auth/saml/acs');
    const { id: responseId, xml } = responseXml(sp, { inResponseTo: id });
    const acs = await send(jar, `${t.baseUrl}/auth/saml/acs`, {
      method: 'POST',
      headers: https,
      body: new URLSearchParams({ SAMLResponse: b64(await signResponse(sp, keys, xml, responseId)) }),
    });
    expect(acs.status).toBe(303);
    const cookie = acs.headers.getSetCookie().find((c) => c.startsWith('__Host-liftwise.sid='));
    expect(cookie).toBeDefined();
    expect(cookie).toMatch(/;\s*Secure/i);
    expect(cookie).toMatch(/;\s*HttpOnly/i);
    expect(cookie).toMatch(/;\s*SameSite=Lax/i);
    expect(cookie).toMatch(/;\s*Path=\//i);
    expect(cookie).not.toMatch(/Domain=/i);
    expect((await send(jar, `${t.baseUrl}/api/me`, { headers: https })).status).toBe(200);
  });
});
