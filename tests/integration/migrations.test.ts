import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDb, type DbHandle } from '../../server/db/client.ts';
import { applyMigrations, committedMigrations, migrationState } from '../../server/db/migrate.ts';
import { testDatabaseUrl } from './support.ts';

describe('migrations', () => {
  const scratch = `liftwise_migrate_${process.pid}`;
  let admin: pg.Client;
  let db: DbHandle;

  beforeAll(async () => {
    const base = new URL(testDatabaseUrl());
    admin = new pg.Client({ connectionString: Object.assign(new URL(base), { pathname: '/postgres' }).toString() });
    await admin.connect();
    await admin.query(`DROP DATABASE IF EXISTS "${scratch}" WITH (FORCE)`);
    await admin.query(`CREATE DATABASE "${scratch}"`);
    db = createDb(Object.assign(new URL(base), { pathname: `/${scratch}` }).toString(), 2);
  });

  afterAll(async () => {
    await db.close();
    await admin.query(`DROP DATABASE IF EXISTS "${scratch}" WITH (FORCE)`);
    await admin.end();
  });

  it('an empty database reports nothing applied', async () => {
    const state = await migrationState(db.pool);
    expect(state).toMatchObject({ applied: 0, latest: null, upToDate: false });
    expect(state.committed).toBe(committedMigrations().length);
  });

  it('applies every committed migration, and applying again changes nothing', async () => {
    await applyMigrations(db.db, db.pool);
    const first = await migrationState(db.pool);
    expect(first.upToDate).toBe(true);
    await applyMigrations(db.db, db.pool);
    expect(await migrationState(db.pool)).toEqual(first);
    const tables = await db.pool.query<{ tablename: string }>("SELECT tablename FROM pg_tables WHERE schemaname = 'public'");
    expect(tables.rows.map((r) => r.tablename)).toEqual(expect.arrayContaining(['users', 'audit_events']));
  });
});
