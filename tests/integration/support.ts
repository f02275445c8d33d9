/**
 * Starts the real app on an ephemeral loopback port against the test database
 * (DATABASE_URL, set by scripts/test.mjs), migrated.
 */
import fs from 'node:fs';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import type { Server } from 'node:http';
import { createApp } from '../../server/app.ts';
import { loadConfig, type Config } from '../../server/config.ts';
import { createDb, type DbHandle } from '../../server/db/client.ts';
import { applyMigrations } from '../../server/db/migrate.ts';
import { startAllWorkers } from '../../server/jobs/handlers.ts';
import { createQueue, type JobQueue } from '../../server/jobs/queue.ts';
import { createLogger } from '../../server/logger.ts';

export interface TestApp {
  baseUrl: string;
  config: Config;
  db: DbHandle;
  queue: JobQueue;
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
 * The app with a real queue and, unless `workers: false`, in-process workers; DATA_DIR is a fresh
 * temporary folder (uploads, keys) removed at close.
 */
export async function startTestApp(env: Record<string, string> = {}, options: { workers?: boolean } = {}): Promise<TestApp> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-test-'));
  const config = loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: testDatabaseUrl(),
    LOG_LEVEL: 'silent',
    PORT: '8080',
    SERVE_CLIENT: 'false',
    DATA_DIR: dataDir,
    ...env,
  });
  const logger = createLogger('silent');
  const db = createDb(config.databaseUrl, 5);
  await applyMigrations(db.db, db.pool);
  const queue = await createQueue(config.databaseUrl, logger);
  const workers = options.workers !== false ? await startAllWorkers({ db, config, queue, logger }, { threads: 1 }) : null;
  const app = createApp({ config, db, logger, queue });
  const server: Server = await new Promise((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const { port } = server.address() as AddressInfo;
  return {
    baseUrl: `http://127.0.0.1:${port}`,
    config,
    db,
    queue,
    close: async () => {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await queue.stop();
      await workers?.stop();
      await db.close();
      fs.rmSync(dataDir, { recursive: true, force: true });
    },
  };
}
