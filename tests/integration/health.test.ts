import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app.ts';
import { loadConfig } from '../../server/config.ts';
import { createDb } from '../../server/db/client.ts';
import { committedMigrations } from '../../server/db/migrate.ts';
import { createLogger } from '../../server/logger.ts';
import { inertQueue, startTestApp, type TestApp } from './support.ts';

describe('GET /api/health against the real database', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('reports the database ok and every committed migration applied', async () => {
    const res = await fetch(`${t.baseUrl}/api/health`);
    expect(res.status).toBe(200);
    const body = await res.json();
    const committed = committedMigrations();
    expect(body).toMatchObject({ status: 'ok', db: 'ok', version: t.config.codeVersion });
    expect(body.migration).toEqual({
      applied: committed.length,
      committed: committed.length,
      latest: committed[committed.length - 1].tag,
      upToDate: true,
    });
  });

  it('answers unknown API routes with a JSON 404 and a request id', async () => {
    const res = await fetch(`${t.baseUrl}/api/no-such-route`);
    expect(res.status).toBe(404);
    expect(res.headers.get('x-request-id')).toMatch(/^[\w-]{8,}$/);
    expect(await res.json()).toEqual({ error: { code: 'not_found', message: 'No such API route.' } });
  });

  it('sends security headers with a content security policy', async () => {
    const res = await fetch(`${t.baseUrl}/api/health`);
    expect(res.headers.get('content-security-policy')).toContain("default-src 'self'");
    expect(res.headers.get('x-content-type-options')).toBe('nosniff');
  });
});

describe('GET /api/health with the database down', () => {
  it('answers 503 with db "down" instead of hanging', async () => {
    // Port 9 (discard) on loopback has no PostgreSQL behind it.
    const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: 'postgres://liftwise@127.0.0.1:9/none', SERVE_CLIENT: 'false' });
    const db = createDb(config.databaseUrl, 1);
    const app = createApp({ config, db, logger: createLogger('silent'), queue: inertQueue });
    const server = await new Promise<Server>((resolve) => {
      const s = app.listen(0, '127.0.0.1', () => resolve(s));
    });
    try {
      const { port } = server.address() as AddressInfo;
      const res = await fetch(`http://127.0.0.1:${port}/api/health`);
      expect(res.status).toBe(503);
      expect(await res.json()).toMatchObject({ status: 'degraded', db: 'down', migration: null });
    } finally {
      server.close();
      await db.close();
    }
  });
});
