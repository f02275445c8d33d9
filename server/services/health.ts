import type { DbHandle } from '../db/client.ts';
import { migrationState, type MigrationState } from '../db/migrate.ts';

export interface Health {
  status: 'ok' | 'degraded';
  db: 'ok' | 'down';
  version: string;
  migration: MigrationState | null;
}

/** Whether the database answers and carries every committed migration. */
export async function checkHealth(db: DbHandle, version: string): Promise<Health> {
  try {
    await db.pool.query('SELECT 1');
    const migration = await migrationState(db.pool);
    return { status: migration.upToDate ? 'ok' : 'degraded', db: 'ok', version, migration };
  } catch {
    return { status: 'degraded', db: 'down', version, migration: null };
  }
}
