/** The PostgreSQL store of pending sign-in request ids (node-saml's CacheProvider). */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createDb, type DbHandle } from '../../../server/db/client.ts';
import { applyMigrations } from '../../../server/db/migrate.ts';
import { PgSamlRequestCache, UnknownSamlRequestError, withClaimScope } from '../../../server/auth/request-cache.ts';
import { testDatabaseUrl } from '../support.ts';

describe('pending sign-in requests in PostgreSQL', () => {
  let db: DbHandle;
  beforeAll(async () => {
    db = createDb(testDatabaseUrl(), 4);
    await applyMigrations(db.db, db.pool);
  });
  afterAll(async () => {
    await db.close();
  });

  const id = (label: string) => `_${label}_${Math.random().toString(36).slice(2)}`;

  it('is shared by every instance: one saves, another finds and removes', async () => {
    const a = new PgSamlRequestCache(db.db, 600_000);
    const b = new PgSamlRequestCache(db.db, 600_000);
    const key = id('shared');
    const instant = new Date().toISOString();
    expect(await a.saveAsync(key, instant)).toEqual({ value: instant, createdAt: Date.parse(instant) });
    expect(await b.getAsync(key)).toBe(instant);
    expect(await b.removeAsync(key)).toBe(instant);
    expect(await a.getAsync(key)).toBeNull();
  });

  it('ignores an id older than the expiry and sweeps it on the next save', async () => {
    const cache = new PgSamlRequestCache(db.db, 60_000);
    const old = id('old');
    await cache.saveAsync(old, new Date(Date.now() - 120_000).toISOString());
    expect(await cache.getAsync(old)).toBeNull();
    await cache.saveAsync(id('new'), new Date().toISOString());
    const left = await db.pool.query('SELECT 1 FROM saml_requests WHERE id = $1', [old]);
    expect(left.rowCount).toBe(0);
  });

  it('lets exactly one of two simultaneous removals claim an id', async () => {
    const cache = new PgSamlRequestCache(db.db, 600_000);
    const key = id('race');
    await cache.saveAsync(key, new Date().toISOString());
    const results = await Promise.allSettled([cache.removeAsync(key), cache.removeAsync(key)]);
    expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
    const rejected = results.find((r) => r.status === 'rejected') as PromiseRejectedResult;
    expect(rejected.reason).toBeInstanceOf(UnknownSamlRequestError);
  });

  it('within one validation, removing the claimed id again is not a replay', async () => {
    const cache = new PgSamlRequestCache(db.db, 600_000);
    const key = id('scope');
    await cache.saveAsync(key, new Date().toISOString());
    await withClaimScope(async () => {
      expect(await cache.removeAsync(key)).not.toBeNull();
      expect(await cache.removeAsync(key)).toBeNull();
    });
    await expect(withClaimScope(() => cache.removeAsync(key))).rejects.toThrow(/already used/);
  });
});
