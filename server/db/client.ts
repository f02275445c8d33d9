import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import pg from 'pg';
import * as schema from './schema.ts';

export type Database = NodePgDatabase<typeof schema>;

export interface DbHandle {
  pool: pg.Pool;
  db: Database;
  close(): Promise<void>;
}

/**
 * One pool per process. A dropped connection (database restarted) is removed from the pool by
 * pg and the next query opens a fresh one, so the server recovers without a restart.
 */
export function createDb(databaseUrl: string, max = 20): DbHandle {
  const pool = new pg.Pool({ connectionString: databaseUrl, max, connectionTimeoutMillis: 5_000, idleTimeoutMillis: 30_000 });
  // An idle client losing its connection emits 'error' on the pool; without a listener it would crash the process.
  pool.on('error', () => {});
  const db = drizzle(pool, { schema });
  return { pool, db, close: () => pool.end() };
}
