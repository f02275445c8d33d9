/**
 * API tokens: how machines (a scheduled upload on the desk's server, the demo feed) call the API
 * without a browser. An admin issues a token with a name and roles; the plaintext is shown once,
 * only its SHA-256 is kept. Each token acts through a machine user row of its own
 * (external id "api-token:<token id>", name "token:<name>"), so that everything that records who
 * did something (run uploader, audit actor) points at a real row and reads "token:<name>".
 * See README.md, "Machine access".
 */
import { createHash, randomBytes } from 'node:crypto';
import { and, desc, eq, isNull, sql } from 'drizzle-orm';
import { ROLES, type Role } from '@shared/roles.ts';
import type { Database } from '../db/client.ts';
import { apiTokens, users } from '../db/schema.ts';
import { notFound, unprocessable } from '../errors.ts';
import { recordAudit, type AuditEventInput, type DbExecutor } from './audit.ts';
import type { SignedInUser } from './users.ts';

export const TOKEN_PREFIX = 'lw_';
/** lw_ + 32 random bytes in base64url (43 characters) */
const TOKEN_PATTERN = /^lw_[A-Za-z0-9_-]{43}$/;

export interface ApiTokenView {
  id: string;
  name: string;
  roles: Role[];
  createdBy: string | null;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
}

type AuditWho = Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;

export function newTokenSecret(): string {
  return `${TOKEN_PREFIX}${randomBytes(32).toString('base64url')}`;
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}

export function looksLikeToken(value: string): boolean {
  return TOKEN_PATTERN.test(value);
}

const machineExternalId = (tokenId: string) => `api-token:${tokenId}`;
export const tokenActorLabel = (name: string) => `token:${name}`;

function cleanRoles(roles: readonly string[]): Role[] {
  const wanted = new Set(roles);
  const kept = ROLES.filter((r) => wanted.has(r));
  if (kept.length === 0) throw unprocessable(`A token needs at least one role (${ROLES.join(', ')}).`);
  return kept;
}

function toView(row: typeof apiTokens.$inferSelect): ApiTokenView {
  return {
    id: row.id,
    name: row.name,
    roles: row.roles as Role[],
    createdBy: row.createdBy,
    createdAt: row.createdAt.toISOString(),
    lastUsedAt: row.lastUsedAt?.toISOString() ?? null,
    revokedAt: row.revokedAt?.toISOString() ?? null,
  };
}

/**
 * Issues a token: the row (hash only), its machine user and the audit event, in one transaction.
 * The plaintext is returned to the caller once and never stored.
 */
export async function issueApiToken(
  executor: DbExecutor,
  input: { name: string; roles: readonly string[]; createdBy: string | null },
  audit: AuditWho,
  secret: string = newTokenSecret(),
): Promise<{ token: string; apiToken: ApiTokenView }> {
  const name = input.name.trim();
  if (!name) throw unprocessable('Give the token a name that says which machine or job uses it.');
  const roles = cleanRoles(input.roles);
  return executor.transaction(async (tx) => {
    const [row] = await tx.insert(apiTokens).values({ name, tokenHash: hashToken(secret), roles, createdBy: input.createdBy }).returning();
    await tx.insert(users).values({ externalId: machineExternalId(row.id), name: tokenActorLabel(name), email: '', roles, groups: [] });
    // The secret itself never reaches the audit trail; its hash prefix identifies it.
    await recordAudit(tx, {
      ...audit,
      action: 'api_token.issue',
      objectType: 'api_token',
      objectId: row.id,
      detail: { name, roles, hashPrefix: row.tokenHash.slice(0, 12) },
    });
    return { token: secret, apiToken: toView(row) };
  });
}

export async function listApiTokens(db: Database): Promise<ApiTokenView[]> {
  const rows = await db.select().from(apiTokens).orderBy(desc(apiTokens.createdAt));
  return rows.map(toView);
}

/** Revokes a token (kept for the record); revoking twice is refused. */
export async function revokeApiToken(db: Database, id: string, audit: AuditWho): Promise<ApiTokenView> {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(apiTokens)
      .set({ revokedAt: new Date() })
      .where(and(eq(apiTokens.id, id), isNull(apiTokens.revokedAt)))
      .returning();
    if (!row) {
      const [existing] = await tx.select({ id: apiTokens.id }).from(apiTokens).where(eq(apiTokens.id, id));
      if (!existing) throw notFound('No API token with that id.');
      throw unprocessable('That token is already revoked.');
    }
    await recordAudit(tx, { ...audit, action: 'api_token.revoke', objectType: 'api_token', objectId: row.id, detail: { name: row.name } });
    return toView(row);
  });
}

export type TokenCheck =
  | { ok: true; tokenId: string; user: SignedInUser }
  | { ok: false; reason: 'malformed' | 'unknown' | 'revoked'; tokenId?: string; name?: string };

/** The principal a bearer token stands for, or why it is refused. Marks the token as used. */
export async function authenticateApiToken(db: Database, token: string): Promise<TokenCheck> {
  if (!looksLikeToken(token)) return { ok: false, reason: 'malformed' };
  const [row] = await db
    .select({ id: apiTokens.id, name: apiTokens.name, roles: apiTokens.roles, revokedAt: apiTokens.revokedAt, userId: users.id })
    .from(apiTokens)
    .leftJoin(users, eq(users.externalId, sql`'api-token:' || ${apiTokens.id}::text`))
    .where(eq(apiTokens.tokenHash, hashToken(token)));
  if (!row) return { ok: false, reason: 'unknown' };
  if (row.revokedAt || !row.userId) return { ok: false, reason: 'revoked', tokenId: row.id, name: row.name };
  await db.update(apiTokens).set({ lastUsedAt: new Date() }).where(eq(apiTokens.id, row.id));
  return { ok: true, tokenId: row.id, user: { id: row.userId, name: tokenActorLabel(row.name), email: '', roles: row.roles as Role[] } };
}
