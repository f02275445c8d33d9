/**
 * Sealed snapshots: seal what was published (content from snapshot-content.ts, sealed by
 * server/seal with the server's Ed25519 key), list them, verify one or the whole chain, export.
 *
 * Chain: each snapshot's previousHash is the hash of the snapshot stored just before it (by id).
 * Sealing takes a transaction-scoped advisory lock, so two seals at once still form one chain.
 * The database refuses UPDATE, DELETE and TRUNCATE of snapshots (drizzle/0005); verification
 * names what changed when someone able to disable those triggers edits a row anyway.
 */
import ExcelJS from 'exceljs';
import { and, asc, count, desc, eq, getTableColumns, gt, gte, ilike, lte, or, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import {
  sealedSnapshotSchema,
  type SealedSnapshot,
  type SnapshotCheck,
  type SnapshotCheckName,
  type SnapshotPublicKey,
  type SnapshotVerification,
} from '@shared/api/snapshots.ts';
import { CAUTIONS } from '@shared/cautions.ts';
import type { Config } from '../config.ts';
import type { DbHandle } from '../db/client.ts';
import { snapshots } from '../db/schema.ts';
import { AppError, conflict, notFound } from '../errors.ts';
import type { Logger } from '../logger.ts';
import { canonicalJson } from '../seal/canonical-json.ts';
import { snapshotExportText } from '../seal/export.ts';
import { loadOrCreateSealKey, type SealKey } from '../seal/keys.ts';
import { headerHashOf, sealSnapshot, sha256Hex, verifySnapshot } from '../seal/seal.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';
import { buildSnapshotContent, snapshotFiltersSchema, type SnapshotContentSummary, type SnapshotFilters } from './snapshot-content.ts';

export interface SnapshotDeps {
  db: DbHandle;
  config: Config;
  logger?: Logger;
}

type AuditWho = Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;

const SNAPSHOT_LOCK_KEY = 727276;
const SHORT = 12;
const shortHash = (hash: string) => hash.slice(0, SHORT);

export type SnapshotTrigger = 'manual' | 'after-publish';

export interface SnapshotListSummary extends SnapshotContentSummary {
  trigger: SnapshotTrigger;
  callId?: string;
}

export interface SnapshotListItem {
  id: number;
  sealedAt: string;
  sealedBy: string;
  sealedById: string | null;
  summary: SnapshotListSummary;
  hash: string;
  shortHash: string;
  previousHash: string | null;
  keyId: string;
}

const keys = new Map<string, SealKey>();

/** The server's seal key (created in the data folder at first use), read once per data folder. */
export function sealKeyFor(config: Pick<Config, 'dataDir'>): SealKey {
  let key = keys.get(config.dataDir);
  if (!key) {
    key = loadOrCreateSealKey(config.dataDir);
    keys.set(config.dataDir, key);
  }
  return key;
}

export function publicKeyInfo(config: Pick<Config, 'dataDir'>): SnapshotPublicKey {
  const key = sealKeyFor(config);
  return { publicKey: key.publicKeyPem, keyId: key.keyId, algorithm: 'Ed25519' };
}

type SnapshotRow = typeof snapshots.$inferSelect;

function toListItem(row: Omit<SnapshotRow, 'document'>): SnapshotListItem {
  return {
    id: row.id,
    sealedAt: row.sealedAt.toISOString(),
    sealedBy: row.sealedByLabel,
    sealedById: row.sealedBy,
    summary: row.summary as SnapshotListSummary,
    hash: row.hash,
    shortHash: shortHash(row.hash),
    previousHash: row.previousHash,
    keyId: row.keyId,
  };
}

/**
 * Seals the content for `filters` and stores it, chained to the latest snapshot, with its audit
 * event in the same transaction.
 * @throws AppError 422 when nothing matches the filters
 */
export async function sealSnapshotNow(
  deps: SnapshotDeps,
  input: { filters: SnapshotFilters; sealedById: string | null; sealedBy: string; audit: AuditWho; trigger: SnapshotTrigger; callId?: string },
): Promise<SnapshotListItem> {
  const { db, config } = deps;
  const key = sealKeyFor(config);
  const built = await buildSnapshotContent(db.db, input.filters, { codeVersion: config.codeVersion, takenAt: new Date() });
  const summary: SnapshotListSummary = { ...built.summary, trigger: input.trigger, ...(input.callId ? { callId: input.callId } : {}) };
  return db.db.transaction(async (tx) => {
    await tx.execute(sql`SELECT pg_advisory_xact_lock(${SNAPSHOT_LOCK_KEY})`);
    const [last] = await tx.select({ hash: snapshots.hash }).from(snapshots).orderBy(desc(snapshots.id)).limit(1);
    const sealedAt = new Date();
    const sealed = sealSnapshot({ content: built.content, previousHash: last?.hash ?? null, sealedAt, sealedBy: input.sealedBy }, key);
    const [row] = await tx
      .insert(snapshots)
      .values({
        sealedAt,
        sealedBy: input.sealedById,
        sealedByLabel: input.sealedBy,
        summary,
        document: canonicalJson(sealed),
        hash: sealed.hash,
        previousHash: sealed.previousHash,
        keyId: sealed.keyId,
      })
      .returning();
    await recordAudit(tx, {
      ...input.audit,
      action: 'snapshot.seal',
      objectType: 'snapshot',
      objectId: String(row.id),
      detail: {
        hash: sealed.hash,
        previousHash: sealed.previousHash,
        keyId: sealed.keyId,
        trigger: input.trigger,
        rowCount: summary.rowCount,
        runIds: (built.content.runs as { runId: string }[]).map((r) => r.runId),
        regimeCall: summary.regimeCall,
      },
    });
    return toListItem(row);
  });
}

/** Whether the system seals after each published regime call (SNAPSHOT_AFTER_PUBLISH, default false). */
export function snapshotAfterPublishEnabled(config: Config): boolean {
  return config.snapshotAfterPublish;
}

/**
 * For the regime-calls code, after a call's publish transaction has committed: when
 * SNAPSHOT_AFTER_PUBLISH is on, seals the default selection (latest cycle of each model) as the
 * system. Returns the snapshot, or null when switched off or when there is nothing to seal
 * (logged). Other failures are thrown: the caller decides whether publishing reports them.
 */
export async function sealAfterPublish(deps: SnapshotDeps, input: { callId: string; requestId?: string | null }): Promise<SnapshotListItem | null> {
  if (!snapshotAfterPublishEnabled(deps.config)) return null;
  try {
    return await sealSnapshotNow(deps, {
      filters: {},
      sealedById: null,
      sealedBy: 'system (after publish)',
      audit: { actorId: null, actorLabel: 'system', requestId: input.requestId ?? null, clientAddress: null },
      trigger: 'after-publish',
      callId: input.callId,
    });
  } catch (err) {
    if (err instanceof AppError && err.status === 422) {
      deps.logger?.warn({ callId: input.callId, reason: err.message }, 'no snapshot sealed after publish');
      return null;
    }
    throw err;
  }
}

export const snapshotListQuerySchema = z.object({
  from: z.iso.datetime({ offset: true }).or(z.iso.date()).optional(),
  to: z.iso.datetime({ offset: true }).or(z.iso.date()).optional(),
  user: z.string().trim().min(1).max(200).optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
export type SnapshotListQuery = z.infer<typeof snapshotListQuerySchema>;

/** Newest first; `to` as a bare day includes that whole day (UTC). */
export async function listSnapshots(db: DbHandle, q: SnapshotListQuery): Promise<{ snapshots: SnapshotListItem[]; total: number }> {
  const where: SQL[] = [];
  if (q.from) where.push(gte(snapshots.sealedAt, new Date(q.from)));
  if (q.to) where.push(lte(snapshots.sealedAt, new Date(q.to.length === 10 ? `${q.to}T23:59:59.999Z` : q.to)));
  if (q.user) {
    const pattern = `%${q.user.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    where.push(or(ilike(snapshots.sealedByLabel, pattern), sql`${snapshots.sealedBy}::text = ${q.user}`)!);
  }
  const { document: _document, ...columns } = getTableColumns(snapshots);
  const filter = where.length ? and(...where) : undefined;
  const rows = await db.db.select(columns).from(snapshots).where(filter).orderBy(desc(snapshots.id)).limit(q.limit).offset(q.offset);
  const [{ total }] = await db.db.select({ total: count() }).from(snapshots).where(filter);
  return { snapshots: rows.map(toListItem), total };
}

async function getRow(db: DbHandle, id: number): Promise<SnapshotRow> {
  const [row] = await db.db.select().from(snapshots).where(eq(snapshots.id, id));
  if (!row) throw notFound(`No snapshot ${id}.`);
  return row;
}

/** The sealed document as stored, parsed; a damaged one is refused with 409 (verify says why). */
function storedDocument(row: SnapshotRow): SealedSnapshot {
  try {
    return sealedSnapshotSchema.parse(JSON.parse(row.document));
  } catch {
    throw conflict(`Snapshot ${row.id}'s stored document is damaged; verify it to see what is wrong.`);
  }
}

export async function getSnapshot(db: DbHandle, id: number): Promise<SnapshotListItem & { document: SealedSnapshot }> {
  const row = await getRow(db, id);
  return { ...toListItem(row), document: storedDocument(row) };
}

function fail(checks: SnapshotCheck[], name: SnapshotCheckName, problem: string): void {
  const at = checks.findIndex((c) => c.name === name);
  if (at < 0) checks.push({ name, ok: false, detail: problem });
  else checks[at] = { name, ok: false, detail: checks[at].ok ? problem : `${checks[at].detail}; ${problem}` };
}

/**
 * Verifies one stored row: the document (form, content hash, header hash, signature with the
 * server's key, link to `expectedPreviousHash`), that the stored text is exactly the document's
 * canonical JSON (so any changed byte is caught), and that the row's own columns agree with it.
 */
export function verifyStoredRow(row: SnapshotRow, expectedPreviousHash: string | null, key: SealKey): SnapshotVerification & { recomputedHash: string } {
  let parsed: unknown;
  try {
    parsed = JSON.parse(row.document);
  } catch (err) {
    const detail = `the stored document is not JSON: ${err instanceof Error ? err.message : String(err)}`;
    return { valid: false, checks: [{ name: 'format', ok: false, detail }], recomputedHash: row.hash };
  }
  const result = verifySnapshot(parsed, key.publicKey, { expectedPreviousHash });
  const checks = [...result.checks];
  const doc = sealedSnapshotSchema.safeParse(parsed);
  if (!doc.success) return { valid: false, checks, recomputedHash: row.hash };
  let recomputedHash = row.hash;
  try {
    recomputedHash = headerHashOf(doc.data);
    if (canonicalJson(parsed) !== row.document) fail(checks, 'format', 'the stored text is not the canonical JSON of the document (bytes were changed)');
  } catch (err) {
    fail(checks, 'format', err instanceof Error ? err.message : String(err));
  }
  if (row.hash !== doc.data.hash) fail(checks, 'hash', `the stored hash column ${shortHash(row.hash)}… differs from the document's ${shortHash(doc.data.hash)}…`);
  if (row.previousHash !== doc.data.previousHash) {
    fail(checks, 'chain', `the stored previous-hash column ${row.previousHash ? shortHash(row.previousHash) + '…' : 'null'} differs from the document's ${doc.data.previousHash ? shortHash(doc.data.previousHash) + '…' : 'null'}`);
  }
  if (row.keyId !== doc.data.keyId) fail(checks, 'signature', `the stored key id ${row.keyId} differs from the document's ${doc.data.keyId}`);
  if (row.sealedAt.toISOString() !== doc.data.sealedAt) fail(checks, 'format', `the stored sealed-at ${row.sealedAt.toISOString()} differs from the document's ${doc.data.sealedAt}`);
  return { valid: checks.every((c) => c.ok), checks, recomputedHash };
}

/**
 * Walking the chain re-verifies every document, which for multi-megabyte documents is the slow
 * part (parse, canonicalise, hash). A row that verified before is trusted again only when
 * everything the verification read is unchanged: the SHA-256 of the stored text, every column
 * it compares, the expected previous hash and the key. Any edit misses the cache.
 */
const verifiedRows = new Map<string, SnapshotVerification & { recomputedHash: string }>();
const MAX_CACHED = 10_000;

function verifyStoredRowCached(row: SnapshotRow, expectedPreviousHash: string | null, key: SealKey): SnapshotVerification & { recomputedHash: string } {
  const cacheKey = [row.id, sha256Hex(row.document), row.hash, row.previousHash, row.keyId, row.sealedAt.toISOString(), expectedPreviousHash, key.keyId].join('|');
  const hit = verifiedRows.get(cacheKey);
  if (hit) return hit;
  const result = verifyStoredRow(row, expectedPreviousHash, key);
  if (result.valid) {
    if (verifiedRows.size >= MAX_CACHED) verifiedRows.clear();
    verifiedRows.set(cacheKey, result);
  }
  return result;
}

export interface ChainStatus {
  valid: boolean;
  checked: number;
  firstBroken: { id: number; shortHash: string; check: string; detail: string } | null;
}

/** Walks the snapshots in id order (up to `uptoId` when given) and names the first that fails. */
export async function verifySnapshotChain(deps: SnapshotDeps, uptoId?: number, batch = 25): Promise<ChainStatus> {
  const key = sealKeyFor(deps.config);
  let previous: string | null = null;
  let afterId = 0;
  let checked = 0;
  for (;;) {
    const where = uptoId === undefined ? gt(snapshots.id, afterId) : and(gt(snapshots.id, afterId), lte(snapshots.id, uptoId));
    const rows = await deps.db.db.select().from(snapshots).where(where).orderBy(asc(snapshots.id)).limit(batch);
    for (const row of rows) {
      const result = verifyStoredRowCached(row, previous, key);
      const failed = result.checks.find((c) => !c.ok);
      if (failed) return { valid: false, checked, firstBroken: { id: row.id, shortHash: shortHash(row.hash), check: failed.name, detail: failed.detail } };
      previous = result.recomputedHash;
      afterId = row.id;
      checked += 1;
    }
    if (rows.length < batch) return { valid: true, checked, firstBroken: null };
  }
}

/** The header hash a row's document gives (its stored `hash` when the document cannot be read). */
function recomputedHashOf(row: SnapshotRow): string {
  try {
    const parsed = sealedSnapshotSchema.safeParse(JSON.parse(row.document));
    return parsed.success ? headerHashOf(parsed.data) : row.hash;
  } catch {
    return row.hash;
  }
}

/** One snapshot's checks (linked to the snapshot stored before it) and the chain up to it. */
export async function verifyOneSnapshot(deps: SnapshotDeps, id: number): Promise<SnapshotVerification & { id: number; chain: ChainStatus }> {
  const key = sealKeyFor(deps.config);
  const row = await getRow(deps.db, id);
  const [before] = await deps.db.db.select().from(snapshots).where(sql`${snapshots.id} < ${id}`).orderBy(desc(snapshots.id)).limit(1);
  const { valid, checks } = verifyStoredRow(row, before ? recomputedHashOf(before) : null, key);
  const chain = await verifySnapshotChain(deps, id);
  return { id, valid, checks, chain };
}

/** The export file (canonical JSON with the public key), audited. */
export async function exportSnapshotJson(deps: SnapshotDeps, id: number, audit: AuditWho): Promise<{ fileName: string; text: string }> {
  const row = await getRow(deps.db, id);
  const text = snapshotExportText(storedDocument(row), sealKeyFor(deps.config).publicKeyPem);
  await recordAudit(deps.db.db, { ...audit, action: 'snapshot.export', objectType: 'snapshot', objectId: String(id), detail: { format: 'json', hash: row.hash } });
  return { fileName: `liftwise-snapshot-${id}-${shortHash(row.hash)}.json`, text };
}


type Cell = string | number | null;
interface ContentView {
  rows?: Record<string, Cell>[];
  summary?: Record<string, Cell>[];
  runs?: { runId: string; model: string | null; cycle: string | null; checksum: string }[];
  calibrationSets?: { version: number; name: string }[];
  calibrationVersions?: number[];
  codeVersion?: string;
  takenAt?: string;
  regimeCall?: { id: string; seriesId: string; version: number; publishedAt: string | null } | null;
  weighting?: { note?: string };
}

const ROW_COLUMNS: [string, string][] = [
  ['runId', 'Run'], ['model', 'Model'], ['cycle', 'Cycle (UTC)'], ['member', 'Member'], ['regionId', 'Region'], ['day', 'Day (UTC)'],
  ['precipMm', 'Precipitation (mm/day)'], ['snowShare', 'Snow share (0..1)'], ['cloudPct', 'Cloud (%)'], ['ghiKwhM2', 'GHI (kWh/m²/day)'],
  ['solarGwh', 'Solar (GWh/day)'], ['inflowGwh', 'Inflow (GWh/day)'], ['weight', 'Weight (0..1)'], ['calibrationVersion', 'Calibration set'],
];
const SUMMARY_COLUMNS: [string, string][] = [
  ['runId', 'Run'], ['model', 'Model'], ['cycle', 'Cycle (UTC)'], ['regionId', 'Region'], ['day', 'Day (UTC)'], ['quantity', 'Quantity'],
  ['unit', 'Unit'], ['p10', 'P10'], ['p50', 'P50'], ['p90', 'P90'], ['mean', 'Weighted mean'], ['scenarios', 'Scenarios'],
];

function tableSheet(book: ExcelJS.Workbook, name: string, columns: [string, string][], rows: Record<string, Cell>[]): void {
  const sheet = book.addWorksheet(name, { views: [{ state: 'frozen', ySplit: 1 }] });
  sheet.columns = columns.map(([key, header]) => ({ key, header, width: Math.max(12, header.length + 2) }));
  sheet.getRow(1).font = { bold: true };
  for (const r of rows) sheet.addRow(Object.fromEntries(columns.map(([key]) => [key, r[key] ?? null])));
}

/** The spreadsheet: Rows, Summary, and About with the seal, the inputs and versions, and the cautions. */
export async function snapshotWorkbook(row: SnapshotRow, doc: SealedSnapshot, publicKeyPem: string): Promise<Buffer> {
  const content = doc.content as unknown as ContentView;
  const book = new ExcelJS.Workbook();
  book.creator = 'Liftwise';
  book.created = new Date(doc.sealedAt);
  tableSheet(book, 'Rows', ROW_COLUMNS, content.rows ?? []);
  tableSheet(book, 'Summary', SUMMARY_COLUMNS, content.summary ?? []);
  const about = book.addWorksheet('About');
  about.columns = [{ width: 28 }, { width: 100 }];
  const line = (label: string, value: Cell) => about.addRow([label, value]);
  const heading = (text: string) => {
    about.addRow([]);
    about.addRow([text]).font = { bold: true };
  };
  about.addRow([`Liftwise sealed snapshot ${row.id}`]).font = { bold: true, size: 13 };
  heading('Seal');
  line('Hash (SHA-256 of the header)', doc.hash);
  line('Previous hash', doc.previousHash ?? '(first snapshot of the chain)');
  line('Content hash (SHA-256)', doc.contentHash);
  line('Signature (Ed25519, base64)', doc.signature);
  line('Key id', doc.keyId);
  line('Algorithm', doc.algorithm);
  line('Public key (PEM)', publicKeyPem);
  line('Sealed at (UTC)', doc.sealedAt);
  line('Sealed by', doc.sealedBy);
  line('Check offline', 'npm run liftwise -- verify-snapshot FILE.json --public-key KEY.pem (with the JSON export of this snapshot)');
  heading('Inputs and versions');
  line('Content taken at (UTC)', content.takenAt ?? null);
  line('Code version', content.codeVersion ?? null);
  line('Calibration set versions', (content.calibrationSets ?? []).map((c) => `${c.version} (${c.name})`).join(', ') || (content.calibrationVersions ?? []).join(', '));
  const call = content.regimeCall;
  line('Regime call', call ? `${call.id} version ${call.version}, series ${call.seriesId}, published ${call.publishedAt ?? '?'}` : 'none published');
  line('Scenario weights', content.weighting?.note ?? null);
  for (const r of content.runs ?? []) line(`Run ${r.model ?? '?'} ${r.cycle ?? ''}`.trim(), `${r.runId}  input SHA-256 ${r.checksum}`);
  heading('Cautions');
  for (const c of CAUTIONS) about.addRow([c]);
  about.getColumn(2).alignment = { wrapText: true, vertical: 'top' };
  return Buffer.from(await book.xlsx.writeBuffer());
}

/** The .xlsx export, audited. */
export async function exportSnapshotXlsx(deps: SnapshotDeps, id: number, audit: AuditWho): Promise<{ fileName: string; data: Buffer }> {
  const row = await getRow(deps.db, id);
  const data = await snapshotWorkbook(row, storedDocument(row), sealKeyFor(deps.config).publicKeyPem);
  await recordAudit(deps.db.db, { ...audit, action: 'snapshot.export', objectType: 'snapshot', objectId: String(id), detail: { format: 'xlsx', hash: row.hash } });
  return { fileName: `liftwise-snapshot-${id}-${shortHash(row.hash)}.xlsx`, data };
}

export { snapshotFiltersSchema, getRow as getSnapshotRow };
