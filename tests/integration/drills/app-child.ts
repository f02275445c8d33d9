/**
 * The app with its in-process workers as a separate process, for the fault drills: the same
 * wiring as server/index.ts (config from the environment, migrations, queue, workers, HTTP),
 * without the mail service. Prints "ready <port>" on stdout once listening, so the drill can
 * kill it with SIGKILL mid-job and start another one on the same database and data folder.
 */
import type { AddressInfo } from 'node:net';
import { createApp } from '../../../server/app.ts';
import { loadConfig } from '../../../server/config.ts';
import { createDb } from '../../../server/db/client.ts';
import { applyMigrations } from '../../../server/db/migrate.ts';
import { startAllWorkers } from '../../../server/jobs/handlers.ts';
import { createQueue } from '../../../server/jobs/queue.ts';
import { createLogger } from '../../../server/logger.ts';

async function main(): Promise<void> {
  const config = loadConfig();
  const logger = createLogger(config.logLevel);
  const db = createDb(config.databaseUrl, 5);
  await applyMigrations(db.db, db.pool);
  const queue = await createQueue(config.databaseUrl, logger, config.queue);
  await startAllWorkers({ db, config, queue, logger }, { threads: 1 });
  const server = createApp({ config, db, logger, queue }).listen(config.port, config.host);
  await new Promise<void>((resolve, reject) => {
    server.once('listening', resolve);
    server.once('error', reject);
  });
  console.log(`ready ${(server.address() as AddressInfo).port}`);
}

main().catch((err: unknown) => {
  console.error(`app-child: ${err instanceof Error ? err.stack : String(err)}`);
  process.exit(1);
});
