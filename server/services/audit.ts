/**
 * The audit trail: append-only rows chained by SHA-256. Each row's hash covers a canonical
 * serialisation (RFC 8785, the `canonicalize` package) of its content plus the previous row's
 * hash, so an edit made behind the application's back breaks the chain at that row.
 * Writers take a transaction-scoped advisory lock so that two writers never chain onto the
 * same previous row. The database refuses UPDATE, DELETE and TRUNCATE (drizzle/0002).
 */
import { createHash } from 'node:crypto';
import net from 'node:net';
import canonicalize from 'canonicalize';
import { and, asc, count, desc, eq, gt, gte, ilike, lte, or, sql, type SQL } from 'drizzle-orm';
import type { AuditEventView, AuditPage, AuditQuery, AuditVerification } from '@shared/api/auth.ts';
import type { Database } from '../db/client.ts';
import { auditEvents } from '../db/schema.ts';

export type Transaction = Parameters<Parameters<Database['transaction']>[0]>[0];
/** The database or an open transaction: a write's audit row commits (or not) with the write. */
export type DbExecutor = Database | Transaction;

/** What a caller records; who/when/where come with it. */
export interface AuditEventInput {
  action: string;
  actorId?: string | null;
  actorLabel: string;
  objectType?: string | null;
  objectId?: string | null;
  detail?: Record<string, unknown>;
  requestId?: string | null;
  clientAddress?: string | null;
}

export const GENESIS_HASH = '0'.repeat(64);
const AUDIT_LOCK_KEY = 727275;

interface HashedContent {
  at: string;
  actorId: string | null;
  actorLabel: string;
  action: string;
  objectType: string | null;
  objectId: string | null;
  detail: Record<string, unknown>;
  requestId: string | null;
  clientAddress: string | null;
  prevHash: string;
}

export function auditHash(content: HashedContent): string {
  const canonical = canonicalize(content);
  if (canonical === undefined) throw new Error('audit event content cannot be serialised');
  return createHash('sha256').update(canonical, 'utf8').digest('hex');
}

/** The form PostgreSQL's host(inet) gives back, so the hash survives the round trip. */
function normaliseAddress(address: string | null | undefined): string | null {
  if (!address) return null;
  const plain = address.startsWith('::ffff:') && net.isIPv4(address.slice(7)) ? address.slice(7) : address;
  return net.isIP(plain) ? plain.toLowerCase() : null;
}

/** Appends one event to the chain. Pass the write's transaction so both commit together. */
export async function recordAudit(executor: DbExecutor, event: AuditEventInput): Promise<{ id: number; hash: string }> {
  return executor.transaction(async (tx) => {
    await tx.execute(sql`SELECT pg_advisory_xact_lock(${AUDIT_LOCK_KEY})`);
    const [last] = await tx.select({ hash: auditEvents.hash }).from(auditEvents).orderBy(desc(auditEvents.id)).limit(1);
    const content: HashedContent = {
      at: new Date().toISOString(),
      actorId: event.actorId ?? null,
      actorLabel: event.actorLabel,
      action: event.action,
      objectType: event.objectType ?? null,
      objectId: event.objectId ?? null,
      // A JSON round trip drops undefined members exactly as jsonb will.
      detail: JSON.parse(JSON.stringify(event.detail ?? {})) as Record<string, unknown>,
      requestId: event.requestId ?? null,
      clientAddress: normaliseAddress(event.clientAddress),
      prevHash: last?.hash ?? GENESIS_HASH,
    };
    const hash = auditHash(content);
    const [row] = await tx
      .insert(auditEvents)
      .values({ ...content, at: new Date(content.at), hash })
      .returning({ id: auditEvents.id });
    return { id: row.id, hash };
  });
}

const viewColumns = {
  id: auditEvents.id,
  at: auditEvents.at,
  actorId: auditEvents.actorId,
  actorLabel: auditEvents.actorLabel,
  action: auditEvents.action,
  objectType: auditEvents.objectType,
  objectId: auditEvents.objectId,
  detail: auditEvents.detail,
  requestId: auditEvents.requestId,
  clientAddress: sql<string | null>`host(${auditEvents.clientAddress})`,
  prevHash: auditEvents.prevHash,
  hash: auditEvents.hash,
};

/** Newest first, filtered by action (exact), actor (name or id, partial) and time range. */
export async function listAudit(db: Database, q: AuditQuery): Promise<AuditPage> {
  const filters: SQL[] = [];
  if (q.action) filters.push(eq(auditEvents.action, q.action));
  if (q.actor) {
    const pattern = `%${q.actor.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    filters.push(or(ilike(auditEvents.actorLabel, pattern), sql`${auditEvents.actorId}::text = ${q.actor}`)!);
  }
  if (q.from) filters.push(gte(auditEvents.at, new Date(q.from)));
  if (q.to) filters.push(lte(auditEvents.at, new Date(q.to)));
  const where = filters.length ? and(...filters) : undefined;
  const rows = await db.select(viewColumns).from(auditEvents).where(where).orderBy(desc(auditEvents.id)).limit(q.limit).offset(q.offset);
  const [{ total }] = await db.select({ total: count() }).from(auditEvents).where(where);
  return { events: rows.map(toView), total };
}

function toView(row: Awaited<ReturnType<typeof selectBatch>>[number]): AuditEventView {
  return {
    id: row.id,
    at: row.at.toISOString(),
    actorId: row.actorId,
    actorLabel: row.actorLabel,
    action: row.action,
    objectType: row.objectType,
    objectId: row.objectId,
    detail: row.detail as Record<string, unknown>,
    requestId: row.requestId,
    clientAddress: row.clientAddress,
    hash: row.hash,
  };
}

function selectBatch(db: Database, afterId: number, size: number) {
  return db.select(viewColumns).from(auditEvents).where(gt(auditEvents.id, afterId)).orderBy(asc(auditEvents.id)).limit(size);
}

/** Walks the whole chain from the first row and names the first row whose link does not hold. */
export async function verifyAuditChain(db: Database, batchSize = 1000): Promise<AuditVerification> {
  let previous = GENESIS_HASH;
  let afterId = 0;
  let checked = 0;
  for (;;) {
    const rows = await selectBatch(db, afterId, batchSize);
    for (const row of rows) {
      const broken = (reason: string): AuditVerification => ({ ok: false, checked, firstBroken: { id: row.id, reason } });
      if (row.prevHash !== previous) return broken('its previous-hash does not match the hash of the row before it');
      const expected = auditHash({
        at: row.at.toISOString(),
        actorId: row.actorId,
        actorLabel: row.actorLabel,
        action: row.action,
        objectType: row.objectType,
        objectId: row.objectId,
        detail: row.detail as Record<string, unknown>,
        requestId: row.requestId,
        clientAddress: row.clientAddress,
        prevHash: row.prevHash,
      });
      if (expected !== row.hash) return broken('its content no longer matches its hash (edited after it was written)');
      previous = row.hash;
      afterId = row.id;
      checked += 1;
    }
    if (rows.length < batchSize) return { ok: true, checked, firstBroken: null };
  }
}
