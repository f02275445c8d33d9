/**
 * Starts the real app on an ephemeral loopback port against the test database
 * (DATABASE_URL, set by scripts/test.mjs), migrated, with PUBLIC_URL set to that port so the
 * sign-in round trip through the local identity provider works; and a signed-in client.
 */
import fs from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { createApp } from '../../server/app.ts';
import { loadConfig, type Config } from '../../server/config.ts';
import { createDb, type DbHandle } from '../../server/db/client.ts';
import { applyMigrations } from '../../server/db/migrate.ts';
import { startAllWorkers } from '../../server/jobs/handlers.ts';
import { createQueue, type JobQueue } from '../../server/jobs/queue.ts';
import { createLogger } from '../../server/logger.ts';
import { startMail, type MailService } from '../../server/mail/index.ts';
import { CookieJar, send, signInAs } from './auth/harness.ts';

export interface TestApp {
  baseUrl: string;
  config: Config;
  db: DbHandle;
  queue: JobQueue;
  /** the outbox sender (and, without SMTP_URL, the local catcher) when started with `mail` */
  mail?: MailService;
  close(): Promise<void>;
}

export function testDatabaseUrl(): string {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run integration tests through `npm test`');
  return url;
}

/** A queue that accepts nothing, for apps whose test never reaches a job. */
export const inertQueue: JobQueue = {
  send: async () => null,
  boss: null as never,
  stop: async () => {},
};

/**
 * The app with a real queue and, unless `workers: false`, in-process workers (one pool thread);
 * DATA_DIR is a fresh temporary folder (uploads, keys, caught mail) removed at close. With `mail`,
 * the outbox sender runs too (against SMTP_URL when the env sets it, else a local catcher), polling
 * every `mail.intervalMs` (default: an hour, so a test delivers only when something kicks it).
 */
let appCount = 0;

export async function startTestApp(
  env: Record<string, string> = {},
  options: { workers?: boolean; mail?: { intervalMs?: number } } = {},
): Promise<TestApp> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-test-'));
  const server = http.createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const config = loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: testDatabaseUrl(),
    LOG_LEVEL: 'silent',
    SERVE_CLIENT: 'false',
    DATA_DIR: dataDir,
    PUBLIC_URL: baseUrl,
    AUTH_RATE_LIMIT_PER_MINUTE: '10000',
    // A queue of its own: apps of other test files (other projects run at the same time) must not take its jobs.
    QUEUE_SCHEMA: `pgboss_t${process.pid}_${++appCount}`,
    ...env,
  });
  const logger = createLogger('silent');
  const db = createDb(config.databaseUrl, 5);
  await applyMigrations(db.db, db.pool);
  const queue = await createQueue(config.databaseUrl, logger, config.queue);
  const workers = options.workers !== false ? await startAllWorkers({ db, config, queue, logger }, { threads: 1 }) : null;
  const mail = options.mail ? await startMail(config, db, logger, { intervalMs: options.mail.intervalMs ?? 3_600_000 }) : undefined;
  server.on('request', createApp({ config, db, logger, queue, mail }));
  return {
    baseUrl,
    config,
    db,
    queue,
    mail,
    close: async () => {
      server.closeAllConnections();
      await mail?.stop();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await queue.stop();
      await workers?.stop();
      await db.close();
      fs.rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

export interface Client {
  /** fetch relative to the app with the session cookie and, on writes, the CSRF token */
  fetch(pathAndQuery: string, init?: RequestInit): Promise<Response>;
  csrfToken: string;
}

/** Signs a demo person in through the local identity provider (server/dev/idp/people.ts keys). */
export async function signIn(t: TestApp, personKey: 'meteorologist' | 'trader' | 'risk' | 'admin' | 'meteorologist-trader'): Promise<Client> {
  const jar = new CookieJar();
  const acs = await signInAs({ ...t, app: null as never }, jar, personKey);
  if (acs.status >= 400) throw new Error(`sign-in as ${personKey} failed: ${acs.status}`);
  const me = await send(jar, `${t.baseUrl}/api/me`);
  const { csrfToken } = (await me.json()) as { csrfToken: string };
  return {
    csrfToken,
    fetch: (pathAndQuery, init = {}) => {
      const headers = new Headers(init.headers);
      if (init.method && init.method !== 'GET') headers.set('X-CSRF-Token', csrfToken);
      return send(jar, `${t.baseUrl}${pathAndQuery}`, { ...init, headers });
    },
  };
}
