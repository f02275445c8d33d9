/**
 * Auth test harness: the real app on a loopback port whose PUBLIC_URL is that port (so the ACS
 * URL the app derives is the one the test posts to), a tiny cookie jar, and the sign-in round
 * trip through the local identity provider without a browser.
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { createApp } from '../../../server/app.ts';
import { loadConfig, type Config } from '../../../server/config.ts';
import { createDb, type DbHandle } from '../../../server/db/client.ts';
import { applyMigrations } from '../../../server/db/migrate.ts';
import { createLogger } from '../../../server/logger.ts';
import { inertQueue, testDatabaseUrl } from '../support.ts';

export interface AuthTestApp {
  baseUrl: string;
  config: Config;
  db: DbHandle;
  app: ReturnType<typeof createApp>;
  close(): Promise<void>;
}

export async function startAuthTestApp(env: Record<string, string> = {}): Promise<AuthTestApp> {
  const server = http.createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port } = server.address() as AddressInfo;
  const baseUrl = `http://127.0.0.1:${port}`;
  const config = loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: testDatabaseUrl(),
    LOG_LEVEL: 'silent',
    SERVE_CLIENT: 'false',
    PUBLIC_URL: baseUrl,
    AUTH_RATE_LIMIT_PER_MINUTE: '10000',
    ...env,
  });
  const db = createDb(config.databaseUrl, 5);
  await applyMigrations(db.db, db.pool);
  const app = createApp({ config, db, logger: createLogger('silent'), queue: inertQueue });
  server.on('request', app);
  return {
    baseUrl,
    config,
    db,
    app,
    close: async () => {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await db.close();
    },
  };
}

/** Cookies by name, as a browser would keep them for one site. */
export class CookieJar {
  private readonly cookies = new Map<string, string>();

  store(res: Response): void {
    for (const line of res.headers.getSetCookie()) {
      const [pair, ...attrs] = line.split(';');
      const eq = pair.indexOf('=');
      const name = pair.slice(0, eq).trim();
      const value = pair.slice(eq + 1).trim();
      const expired = attrs.some((a) => /^\s*expires=thu, 01 jan 1970/i.test(a)) || attrs.some((a) => /^\s*max-age=0\b/i.test(a));
      if (expired || value === '') this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  header(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  }

  get(name: string): string | undefined {
    return this.cookies.get(name);
  }
}

/** fetch with the jar's cookies, no automatic redirects. */
export async function send(jar: CookieJar, url: string, init: RequestInit = {}): Promise<Response> {
  const headers = new Headers(init.headers);
  const cookie = jar.header();
  if (cookie) headers.set('Cookie', cookie);
  const res = await fetch(url, { ...init, headers, redirect: 'manual' });
  jar.store(res);
  return res;
}

export function form(fields: Record<string, string | string[]>): URLSearchParams {
  const body = new URLSearchParams();
  for (const [k, v] of Object.entries(fields)) for (const item of Array.isArray(v) ? v : [v]) body.append(k, item);
  return body;
}

/** The hidden fields and action of the n-th form on an HTML page. */
export function readForm(html: string, index = 0): { action: string; fields: Record<string, string> } {
  const forms = [...html.matchAll(/<form method="post" action="([^"]*)"[^>]*>([\s\S]*?)<\/form>/g)];
  const match = forms[index];
  if (!match) throw new Error(`no form #${index} on the page`);
  const fields: Record<string, string> = {};
  for (const input of match[2].matchAll(/<input type="hidden" name="([^"]+)" value="([^"]*)">/g)) fields[input[1]] = decodeEntities(input[2]);
  return { action: decodeEntities(match[1]), fields };
}

function decodeEntities(s: string): string {
  return s.replace(/&#(\d+);/g, (_m, code: string) => String.fromCharCode(Number(code)));
}

/** GET /auth/saml/login: the redirect to the identity provider and the AuthnRequest it carries. */
export async function startSignIn(t: AuthTestApp, jar: CookieJar, relayState?: string): Promise<URL> {
  const res = await send(jar, `${t.baseUrl}/auth/saml/login${relayState ? `?RelayState=${encodeURIComponent(relayState)}` : ''}`);
  if (res.status !== 302) throw new Error(`login answered ${res.status}`);
  return new URL(res.headers.get('location')!);
}

/** The whole round trip through the local identity provider; returns the ACS answer. */
export async function signInAs(t: AuthTestApp, jar: CookieJar, personKey: string, extra: Record<string, string | string[]> = {}): Promise<Response> {
  const idpUrl = await startSignIn(t, jar);
  const picker = await send(jar, idpUrl.toString());
  if (picker.status !== 200) throw new Error(`local IdP answered ${picker.status}: ${await picker.text()}`);
  const { action, fields } = readForm(await picker.text());
  const posted = await send(jar, new URL(action, t.baseUrl).toString(), { method: 'POST', body: form({ ...fields, person: personKey, ...extra }) });
  if (posted.status !== 200) throw new Error(`local IdP answered ${posted.status}: ${await posted.text()}`);
  const auto = readForm(await posted.text());
  return send(jar, auto.action, { method: 'POST', body: form(auto.fields), headers: { Accept: 'application/json' } });
}

export async function me(t: AuthTestApp, jar: CookieJar): Promise<Response> {
  return send(jar, `${t.baseUrl}/api/me`);
}
