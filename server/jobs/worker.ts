/**
 * `npm run worker`: a stand-alone queue worker for deployments with several machines. Reads the
 * same configuration as the server; start as many as the machines allow (jobs are idempotent).
 */
import { ConfigError, loadConfig } from '../config.ts';
import { createDb } from '../db/client.ts';
import { applyMigrations } from '../db/migrate.ts';
import { createLogger } from '../logger.ts';
import { startAllWorkers } from './handlers.ts';
import { createQueue } from './queue.ts';

async function main(): Promise<void> {
  const config = loadConfig();
  const logger = createLogger(config.logLevel);
  const db = createDb(config.databaseUrl, 5);
  await applyMigrations(db.db, db.pool);
  const queue = await createQueue(config.databaseUrl, logger, config.queue);
  const workers = await startAllWorkers({ db, config, queue, logger });
  console.log('Liftwise worker is waiting for jobs');
  const stop = () => {
    void Promise.all([queue.stop(), workers.stop()]).finally(() => db.close().finally(() => process.exit(0)));
  };
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
}

main().catch((err: unknown) => {
  console.error(err instanceof ConfigError ? err.message : `liftwise worker: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
