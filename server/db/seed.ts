/**
 * Migrates the database and seeds what the demo needs, idempotently: run twice, it keeps
 * every row that is already there. Called by `npm start` before the server starts.
 */
import { loadConfig } from '../config.ts';
import { createDb } from './client.ts';
import { applyMigrations, migrationState } from './migrate.ts';

async function main(): Promise<void> {
  const config = loadConfig();
  const db = createDb(config.databaseUrl, 2);
  try {
    await applyMigrations(db.db, db.pool);
    const state = await migrationState(db.pool);
    console.log(`[liftwise] database migrated (${state.applied} of ${state.committed} migrations, latest ${state.latest})`);
  } finally {
    await db.close();
  }
}

main().catch((err: unknown) => {
  console.error(`[liftwise] seeding failed: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(1);
});
