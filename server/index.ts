/**
 * Starts Liftwise: reads the configuration, migrates the database, serves HTTP.
 * Exits with one clear line when a setting is wrong or the port is taken.
 */
import type { Server } from 'node:http';
import { createApp } from './app.ts';
import { ConfigError, loadConfig } from './config.ts';
import { createDb } from './db/client.ts';
import { applyMigrations } from './db/migrate.ts';
import { startAllWorkers } from './jobs/handlers.ts';
import { createQueue } from './jobs/queue.ts';
import { createLogger } from './logger.ts';
import { startMail } from './mail/index.ts';

async function main(): Promise<void> {
  const config = loadConfig();
  const logger = createLogger(config.logLevel);
  const db = createDb(config.databaseUrl);
  try {
    await applyMigrations(db.db, db.pool);
  } catch (err) {
    throw new Error(`cannot migrate the database at ${redact(config.databaseUrl)}: ${(err as Error).message}`);
  }
  const queue = await createQueue(config.databaseUrl, logger, config.queue);
  const workers = config.inProcessWorker ? await startAllWorkers({ db, config, queue, logger }) : null;
  const mail = await startMail(config, db, logger);
  const app = createApp({ config, db, logger, queue, mail });
  const server: Server = app.listen(config.port, config.host);
  await new Promise<void>((resolve, reject) => {
    server.once('listening', resolve);
    server.once('error', (err: NodeJS.ErrnoException) =>
      reject(
        err.code === 'EADDRINUSE'
          ? new Error(`port ${config.port} on ${config.host} is already in use; stop the other program or start with PORT=<another port>`)
          : err,
      ),
    );
  });
  logger.info({ url: config.publicUrl, version: config.codeVersion }, 'listening');
  console.log(`Liftwise is serving on ${config.publicUrl}`);

  const shutdown = () => {
    server.close();
    void Promise.all([queue.stop(), mail.stop(), workers?.stop()])
      .catch(() => {})
      .finally(() => db.close().finally(() => process.exit(0)));
    setTimeout(() => process.exit(0), 5_000).unref();
  };
  process.once('SIGINT', shutdown);
  process.once('SIGTERM', shutdown);
}

function redact(url: string): string {
  return url.replace(/\/\/([^:@/]+):[^@/]+@/, '//$1:***@');
}

main().catch((err: unknown) => {
  if (err instanceof ConfigError) console.error(err.message);
  else console.error(`liftwise: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
