/** Mail subscriptions to published regime calls (admin). */
import { asc, eq } from 'drizzle-orm';
import type { Subscription, SubscriptionInput } from '@shared/api/regime-calls.ts';
import { subscriptionInputSchema } from '@shared/api/regime-calls.ts';
import type { DbHandle } from '../db/client.ts';
import { subscriptions } from '../db/schema.ts';
import { conflict, notFound } from '../errors.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';

type AuditMeta = Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;
type Row = typeof subscriptions.$inferSelect;

function toDto(row: Row): Subscription {
  return { ...row, createdAt: row.createdAt.toISOString() };
}

function isUniqueViolation(err: unknown): boolean {
  const e = err as { code?: string; cause?: { code?: string } };
  return e?.code === '23505' || e?.cause?.code === '23505';
}

export async function listSubscriptions(db: DbHandle): Promise<Subscription[]> {
  return (await db.db.select().from(subscriptions).orderBy(asc(subscriptions.email))).map(toDto);
}

export async function createSubscription(db: DbHandle, input: SubscriptionInput, audit: AuditMeta): Promise<Subscription> {
  const values = subscriptionInputSchema.parse(input);
  try {
    return await db.db.transaction(async (tx) => {
      const [row] = await tx.insert(subscriptions).values(values).returning();
      await recordAudit(tx, { ...audit, action: 'subscription.create', objectType: 'subscription', objectId: row.id, detail: values });
      return toDto(row);
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw conflict(`${values.email} is already subscribed.`);
    throw err;
  }
}

export async function updateSubscription(db: DbHandle, id: string, input: SubscriptionInput, audit: AuditMeta): Promise<Subscription> {
  const values = subscriptionInputSchema.parse(input);
  try {
    return await db.db.transaction(async (tx) => {
      const [before] = await tx.select().from(subscriptions).where(eq(subscriptions.id, id));
      if (!before) throw notFound('No subscription with that id.');
      const [row] = await tx.update(subscriptions).set(values).where(eq(subscriptions.id, id)).returning();
      await recordAudit(tx, {
        ...audit,
        action: 'subscription.update',
        objectType: 'subscription',
        objectId: id,
        detail: { before: { email: before.email, name: before.name, regionIds: before.regionIds, active: before.active }, after: values },
      });
      return toDto(row);
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw conflict(`${values.email} is already subscribed.`);
    throw err;
  }
}

export async function deleteSubscription(db: DbHandle, id: string, audit: AuditMeta): Promise<void> {
  await db.db.transaction(async (tx) => {
    const [row] = await tx.delete(subscriptions).where(eq(subscriptions.id, id)).returning();
    if (!row) throw notFound('No subscription with that id.');
    await recordAudit(tx, { ...audit, action: 'subscription.delete', objectType: 'subscription', objectId: id, detail: { email: row.email } });
  });
}
