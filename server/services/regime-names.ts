/** The desk's regime names (admin-edited); the starting list is seeded by migration 0005. */
import { asc, eq } from 'drizzle-orm';
import type { RegimeName, RegimeNameInput } from '@shared/api/regime-calls.ts';
import { regimeNameInputSchema } from '@shared/api/regime-calls.ts';
import type { DbHandle } from '../db/client.ts';
import { regimeNames } from '../db/schema.ts';
import { conflict, notFound } from '../errors.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';

type AuditMeta = Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;

export async function listRegimeNames(db: DbHandle): Promise<RegimeName[]> {
  return db.db.select().from(regimeNames).orderBy(asc(regimeNames.id));
}

function isUniqueViolation(err: unknown): boolean {
  const e = err as { code?: string; cause?: { code?: string } };
  return e?.code === '23505' || e?.cause?.code === '23505';
}

export async function createRegimeName(db: DbHandle, input: RegimeNameInput, audit: AuditMeta): Promise<RegimeName> {
  const values = regimeNameInputSchema.parse(input);
  try {
    return await db.db.transaction(async (tx) => {
      const [row] = await tx.insert(regimeNames).values(values).returning();
      await recordAudit(tx, { ...audit, action: 'regime_name.create', objectType: 'regime_name', objectId: String(row.id), detail: values });
      return row;
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw conflict(`A regime named "${values.name}" already exists.`);
    throw err;
  }
}

export async function updateRegimeName(db: DbHandle, id: number, input: RegimeNameInput, audit: AuditMeta): Promise<RegimeName> {
  const values = regimeNameInputSchema.parse(input);
  try {
    return await db.db.transaction(async (tx) => {
      const [before] = await tx.select().from(regimeNames).where(eq(regimeNames.id, id));
      if (!before) throw notFound('No regime name with that id.');
      const [row] = await tx.update(regimeNames).set(values).where(eq(regimeNames.id, id)).returning();
      await recordAudit(tx, { ...audit, action: 'regime_name.update', objectType: 'regime_name', objectId: String(id), detail: { before, after: values } });
      return row;
    });
  } catch (err) {
    if (isUniqueViolation(err)) throw conflict(`A regime named "${values.name}" already exists.`);
    throw err;
  }
}
