/**
 * Starts the real app on an ephemeral loopback port against the test database
 * (DATABASE_URL, set by scripts/test.mjs), migrated.
 */
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { createApp } from '../../server/app.ts';
import { loadConfig, type Config } from '../../server/config.ts';
import { createDb, type DbHandle } from '../../server/db/client.ts';
import { applyMigrations } from '../../server/db/migrate.ts';
import { createLogger } from '../../server/logger.ts';

export interface TestApp {
  baseUrl: string;
  config: Config;
  db: DbHandle;
  close(): Promise<void>;
}

export function testDatabaseUrl(): string {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run integration tests through `npm test`');
  return url;
}

export async function startTestApp(env: Record<string, string> = {}): Promise<TestApp> {
  const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: testDatabaseUrl(), LOG_LEVEL: 'silent', PORT: '8080', SERVE_CLIENT: 'false', ...env });
  const db = createDb(config.databaseUrl, 5);
  await applyMigrations(db.db, db.pool);
  const app = createApp({ config, db, logger: createLogger('silent') });
  const server: Server = await new Promise((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const { port } = server.address() as AddressInfo;
  return {
    baseUrl: `http://127.0.0.1:${port}`,
    config,
    db,
    close: async () => {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await db.close();
    },
  };
}
