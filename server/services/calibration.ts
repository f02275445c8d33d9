/**
 * Calibration sets in the database (SCIENCE.md section 7). Versions are only ever added: a used
 * version is never edited, a change makes a new version based on an earlier one. Version 1 is
 * the defaults of shared/calibration.ts, seeded idempotently at first use.
 */
import { desc, eq, sql } from 'drizzle-orm';
import { calibrationParametersSchema, type CalibrationParameters } from '@shared/calibration.ts';
import type { Database } from '../db/client.ts';
import { calibrationSets, users } from '../db/schema.ts';
import { unprocessable, notFound } from '../errors.ts';
import { defaultCalibrationSet } from '../science/calibration.ts';
import { recordAudit, type AuditEventInput, type DbExecutor } from './audit.ts';

export interface CalibrationSetView {
  version: number;
  name: string;
  note: string | null;
  basedOn: number | null;
  parameters: CalibrationParameters;
  createdBy: string | null;
  createdAt: string;
}

/** Serialises version numbering: two creators never pick the same next version. */
const CALIBRATION_LOCK_KEY = 727301;

/**
 * Inserts version 1 (the defaults) when the table is empty. Versions are numbered explicitly
 * (max + 1 under a transaction lock), so the serial column's sequence is never relied on.
 */
export async function ensureDefaultCalibrationSet(db: Database): Promise<void> {
  const [any] = await db.select({ version: calibrationSets.version }).from(calibrationSets).limit(1);
  if (any) return;
  const defaults = defaultCalibrationSet();
  await db
    .insert(calibrationSets)
    .values({ version: 1, name: defaults.name, note: defaults.note ?? null, params: defaults.parameters, basedOn: null })
    .onConflictDoNothing();
}

function view(row: typeof calibrationSets.$inferSelect, createdBy: string | null): CalibrationSetView {
  return {
    version: row.version,
    name: row.name,
    note: row.note,
    basedOn: row.basedOn,
    parameters: row.params as CalibrationParameters,
    createdBy,
    createdAt: row.createdAt.toISOString(),
  };
}

export async function listCalibrationSets(db: Database): Promise<CalibrationSetView[]> {
  await ensureDefaultCalibrationSet(db);
  const rows = await db
    .select({ set: calibrationSets, createdBy: users.name })
    .from(calibrationSets)
    .leftJoin(users, eq(users.id, calibrationSets.createdBy))
    .orderBy(desc(calibrationSets.version));
  return rows.map((r) => view(r.set, r.createdBy));
}

/** The latest version: the one new signals are computed with. */
export async function latestCalibrationSet(db: Database): Promise<CalibrationSetView> {
  await ensureDefaultCalibrationSet(db);
  const [row] = await db.select().from(calibrationSets).orderBy(desc(calibrationSets.version)).limit(1);
  return view(row, null);
}

export interface NewCalibrationSet {
  basedOn: number;
  name?: string;
  note?: string;
  /** a full or partial parameter set: the parameters left out keep the base version's values */
  parameters: Partial<CalibrationParameters>;
}

/** Creates the next version from a base version and changes, validated as a whole; audited. */
export async function createCalibrationSet(
  db: Database, input: NewCalibrationSet, userId: string | null, audit: Omit<AuditEventInput, 'action' | 'detail'>,
): Promise<CalibrationSetView> {
  await ensureDefaultCalibrationSet(db);
  return db.transaction(async (tx) => {
    await tx.execute(sql`SELECT pg_advisory_xact_lock(${CALIBRATION_LOCK_KEY})`);
    const [base] = await tx.select().from(calibrationSets).where(eq(calibrationSets.version, input.basedOn));
    if (!base) throw notFound(`Calibration set version ${input.basedOn} does not exist.`);
    const merged = calibrationParametersSchema.safeParse({ ...(base.params as CalibrationParameters), ...input.parameters });
    if (!merged.success) {
      const problems = merged.error.issues.map((i) => `${i.path.join('.') || 'parameters'}: ${i.message}`);
      throw unprocessable(`The calibration set is not valid: ${problems.join('; ')}`, { problems });
    }
    const [{ max }] = await tx.select({ max: sql<number>`coalesce(max(${calibrationSets.version}), 0)::int` }).from(calibrationSets);
    const [row] = await tx
      .insert(calibrationSets)
      .values({
        version: max + 1,
        name: input.name?.trim() || base.name,
        note: input.note?.trim() || null,
        params: merged.data,
        basedOn: base.version,
        createdBy: userId,
      })
      .returning();
    await recordAudit(tx as DbExecutor, {
      ...audit,
      action: 'calibration_set.create',
      objectType: 'calibration_set',
      objectId: String(row.version),
      detail: { basedOn: base.version, name: row.name, changes: changedParameters(base.params as CalibrationParameters, merged.data) },
    });
    return view(row, audit.actorLabel);
  });
}

function changedParameters(a: CalibrationParameters, b: CalibrationParameters): Record<string, { from: unknown; to: unknown }> {
  const out: Record<string, { from: unknown; to: unknown }> = {};
  for (const key of Object.keys(b) as (keyof CalibrationParameters)[]) if (a[key] !== b[key]) out[key] = { from: a[key], to: b[key] };
  return out;
}
