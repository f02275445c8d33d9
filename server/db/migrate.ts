import fs from 'node:fs';
import path from 'node:path';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import type pg from 'pg';
import { PROJECT_ROOT } from '../config.ts';
import type { Database } from './client.ts';

export const MIGRATIONS_FOLDER = path.join(PROJECT_ROOT, 'drizzle');

interface JournalEntry {
  idx: number;
  tag: string;
  when: number;
}

/** The migrations committed in drizzle/, oldest first. */
export function committedMigrations(): JournalEntry[] {
  const journal = JSON.parse(fs.readFileSync(path.join(MIGRATIONS_FOLDER, 'meta', '_journal.json'), 'utf8')) as {
    entries: JournalEntry[];
  };
  return journal.entries;
}

/** Applies every committed migration not yet applied. Serialised by an advisory lock so that two starting processes do not race. */
export async function applyMigrations(db: Database, pool: pg.Pool): Promise<void> {
  const client = await pool.connect();
  try {
    await client.query('SELECT pg_advisory_lock(727274)');
    await migrate(db, { migrationsFolder: MIGRATIONS_FOLDER });
  } finally {
    await client.query('SELECT pg_advisory_unlock(727274)').catch(() => {});
    client.release();
  }
}

export interface MigrationState {
  applied: number;
  committed: number;
  latest: string | null;
  upToDate: boolean;
}

/** How the database's applied migrations compare with those committed in drizzle/. */
export async function migrationState(pool: pg.Pool): Promise<MigrationState> {
  const committed = committedMigrations();
  const res = await pool
    .query<{ created_at: string }>('SELECT created_at FROM drizzle.__drizzle_migrations ORDER BY created_at')
    .catch(() => ({ rows: [] as { created_at: string }[] }));
  const appliedWhens = new Set(res.rows.map((r) => Number(r.created_at)));
  const appliedEntries = committed.filter((e) => appliedWhens.has(e.when));
  const latest = appliedEntries.length ? appliedEntries[appliedEntries.length - 1].tag : null;
  return {
    applied: res.rows.length,
    committed: committed.length,
    latest,
    upToDate: appliedEntries.length === committed.length && res.rows.length === committed.length,
  };
}
