/**
 * node-saml's CacheProvider backed by PostgreSQL: the ids of sign-in requests we sent, so that
 * any server instance can check a response's InResponseTo. A row is removed when its response
 * is used; rows older than the expiry count as absent and are swept on the next save.
 */
import { AsyncLocalStorage } from 'node:async_hooks';
import type { CacheItem, CacheProvider } from '@node-saml/passport-saml';
import { and, eq, gt, lt } from 'drizzle-orm';
import type { Database } from '../db/client.ts';
import { samlRequests } from '../db/schema.ts';

export class UnknownSamlRequestError extends Error {
  constructor(id: string) {
    super(`InResponseTo is not valid: no pending sign-in request "${id.slice(0, 80)}" (never sent, expired or already used)`);
    this.name = 'UnknownSamlRequestError';
  }
}

/** The request ids one response validation has claimed (node-saml may ask to remove an id twice). */
const claims = new AsyncLocalStorage<Set<string>>();

/** Runs one response validation; its removals of the same id after the first do not count as replays. */
export function withClaimScope<T>(fn: () => T): T {
  return claims.run(new Set(), fn);
}

export class PgSamlRequestCache implements CacheProvider {
  constructor(
    private readonly db: Database,
    readonly expiryMs: number,
  ) {}

  private cutoff(): Date {
    return new Date(Date.now() - this.expiryMs);
  }

  async saveAsync(key: string, value: string): Promise<CacheItem | null> {
    const createdAt = new Date(value);
    await this.db.delete(samlRequests).where(lt(samlRequests.createdAt, this.cutoff()));
    const rows = await this.db.insert(samlRequests).values({ id: key, createdAt }).onConflictDoNothing().returning({ id: samlRequests.id });
    return rows.length ? { value, createdAt: createdAt.getTime() } : null;
  }

  async getAsync(key: string): Promise<string | null> {
    const [row] = await this.db
      .select({ createdAt: samlRequests.createdAt })
      .from(samlRequests)
      .where(and(eq(samlRequests.id, key), gt(samlRequests.createdAt, this.cutoff())));
    return row ? row.createdAt.toISOString() : null;
  }

  /**
   * Removes the id when its response is used. Refusing when the row is already gone makes the
   * removal the atomic claim: of two copies of one response validated at the same moment on two
   * instances, only the one whose DELETE took the row gets through (node-saml awaits this call
   * and fails the sign-in when it throws). node-saml removes the id once more when a later check
   * of the same response fails; within one validation (withClaimScope) that is not a replay.
   */
  async removeAsync(key: string | null): Promise<string | null> {
    if (key === null) return null;
    const claimed = claims.getStore();
    if (claimed?.has(key)) return null;
    const rows = await this.db.delete(samlRequests).where(eq(samlRequests.id, key)).returning({ createdAt: samlRequests.createdAt });
    if (rows.length === 0) throw new UnknownSamlRequestError(key);
    claimed?.add(key);
    return rows[0].createdAt.toISOString();
  }
}
