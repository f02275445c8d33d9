/**
 * Regime calls: drafts saved as the meteorologist types, publishing (an immutable version, with
 * the e-mail queued in the same transaction), corrections (version + 1 in the same series, with a
 * reason). The database refuses any change to a published row (migration 0005).
 *
 * Who gets the e-mail: every active subscriber with no region filter, and every active subscriber
 * one of whose regions has signal rows for one of the call's linked runs (the linked runs'
 * regions). One mail per subscriber, so subscribers never see each other's addresses.
 */
import { and, asc, desc, eq, gte, inArray, lte, sql } from 'drizzle-orm';
import type { CallDraft, CallPreview, RegimeCall, RegimeCallDetail } from '@shared/api/regime-calls.ts';
import { callDraftSchema, publishableCallSchema } from '@shared/api/regime-calls.ts';
import type { Config } from '../config.ts';
import type { DbHandle } from '../db/client.ts';
import { regimeCalls, regimeNames, regions, runClusterings, runs, signalRows, subscriptions, users } from '../db/schema.ts';
import { badRequest, conflict, notFound } from '../errors.ts';
import { queueMail } from '../mail/outbox.ts';
import { renderCallMail, renderMarkdown, type CallMailContent, type RenderedMail } from '../mail/templates.ts';
import { weightedPercentile } from '../science/statistics.ts';
import { recordAudit, type AuditEventInput, type DbExecutor } from './audit.ts';

const MEMBER_KEY = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}:\d{1,4}$/i;

type AuditMeta = Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'>;
type CallRow = typeof regimeCalls.$inferSelect;
type Weights = RegimeCall['weights'];

export interface CallsDeps {
  db: DbHandle;
  config: Config;
}

function toDto(row: CallRow, authorName: string | null): RegimeCall {
  return {
    ...row,
    regimes: row.regimes as RegimeCall['regimes'],
    confidence: row.confidence as RegimeCall['confidence'],
    weights: row.weights as Weights,
    authorName,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
    publishedAt: row.publishedAt ? row.publishedAt.toISOString() : null,
  };
}

const withAuthor = { call: regimeCalls, authorName: users.name };

export async function listCalls(db: DbHandle, limit = 200): Promise<RegimeCall[]> {
  const rows = await db.db
    .select(withAuthor)
    .from(regimeCalls)
    .leftJoin(users, eq(users.id, regimeCalls.authorId))
    .orderBy(desc(regimeCalls.createdAt), desc(regimeCalls.version))
    .limit(limit);
  return rows.map((r) => toDto(r.call, r.authorName));
}

async function loadCall(db: DbExecutor, id: string, lock = false): Promise<CallRow> {
  const q = db.select().from(regimeCalls).where(eq(regimeCalls.id, id));
  const [row] = lock ? await q.for('update') : await q;
  if (!row) throw notFound('No regime call with that id.');
  return row;
}

export async function getCall(db: DbHandle, id: string): Promise<RegimeCallDetail> {
  const call = await loadCall(db.db, id);
  const versions = await db.db
    .select(withAuthor)
    .from(regimeCalls)
    .leftJoin(users, eq(users.id, regimeCalls.authorId))
    .where(eq(regimeCalls.seriesId, call.seriesId))
    .orderBy(asc(regimeCalls.version));
  const dtos = versions.map((r) => toDto(r.call, r.authorName));
  return { call: dtos.find((d) => d.id === id)!, narrativeHtml: renderMarkdown(call.narrative), versions: dtos };
}

export async function createDraft(db: DbHandle, input: CallDraft, authorId: string, audit: AuditMeta): Promise<RegimeCall> {
  const values = callDraftSchema.parse(input);
  const row = await db.db.transaction(async (tx) => {
    const [inserted] = await tx
      .insert(regimeCalls)
      .values({ ...values, seriesId: crypto.randomUUID(), version: 1, state: 'draft', authorId })
      .returning();
    await recordAudit(tx, { ...audit, action: 'regime_call.create_draft', objectType: 'regime_call', objectId: inserted.id, detail: { seriesId: inserted.seriesId } });
    return inserted;
  });
  return toDto(row, audit.actorLabel);
}

/** One audit event per saved draft (the editor saves debounced, at most every couple of seconds while typing). */
export async function updateDraft(db: DbHandle, id: string, input: CallDraft, audit: AuditMeta): Promise<RegimeCall> {
  const values = callDraftSchema.parse(input);
  const row = await db.db.transaction(async (tx) => {
    const before = await loadCall(tx, id, true);
    if (before.state !== 'draft') throw conflict('This version is published and cannot be changed: start a correction instead.');
    const [updated] = await tx.update(regimeCalls).set({ ...values, updatedAt: new Date() }).where(eq(regimeCalls.id, id)).returning();
    const changed = (Object.keys(values) as (keyof typeof values)[]).filter((k) => JSON.stringify(values[k]) !== JSON.stringify(before[k]));
    await recordAudit(tx, { ...audit, action: 'regime_call.save_draft', objectType: 'regime_call', objectId: id, detail: { changed } });
    return updated;
  });
  return toDto(row, null);
}

export async function deleteDraft(db: DbHandle, id: string, audit: AuditMeta): Promise<void> {
  await db.db.transaction(async (tx) => {
    const row = await loadCall(tx, id, true);
    if (row.state !== 'draft') throw conflict('A published version is never deleted.');
    await tx.delete(regimeCalls).where(eq(regimeCalls.id, id));
    await recordAudit(tx, { ...audit, action: 'regime_call.delete_draft', objectType: 'regime_call', objectId: id, detail: { seriesId: row.seriesId, version: row.version } });
  });
}

/** The content checks of publish: the schema (weights summing to 100 %), then names, clustering and runs against the database. */
async function checkPublishable(tx: DbExecutor, row: CallRow) {
  const parsed = publishableCallSchema.safeParse(row);
  if (!parsed.success) {
    const total = (row.weights as Weights).weights.reduce((s, w) => s + w.pct, 0);
    const issues = parsed.error.issues.map((i) => ({ path: i.path.join('.'), message: i.path[0] === 'weights' && i.path[1] === 'weights' ? `${i.message}; they sum to ${Math.round(total * 100) / 100} %` : i.message }));
    throw badRequest(`The call cannot be published: ${issues.map((i) => i.message).join('; ')}.`, issues);
  }
  const call = parsed.data;
  const ids = [...new Set(call.regimes.map((r) => r.regimeId))];
  const names = await tx.select().from(regimeNames).where(inArray(regimeNames.id, ids));
  const missing = ids.filter((id) => !names.some((n) => n.id === id && n.active));
  if (missing.length) throw badRequest(`The call names regimes that are not in the active list: ${missing.join(', ')}.`);
  if (call.weights.basis === 'cluster') {
    const [clustering] = await tx.select().from(runClusterings).where(eq(runClusterings.id, call.weights.clusteringId!));
    if (!clustering) throw badRequest('The weights name a clustering that does not exist.');
    const known = new Set((clustering.clusters as { id: number }[]).map((c) => String(c.id)));
    const unknown = call.weights.weights.filter((w) => !known.has(w.key)).map((w) => w.key);
    if (unknown.length) throw badRequest(`The weights name clusters the clustering does not have: ${unknown.join(', ')}.`);
  }
  if (call.weights.basis === 'member') {
    const malformed = call.weights.weights.filter((w) => !MEMBER_KEY.test(w.key)).map((w) => w.key);
    if (malformed.length) throw badRequest(`Member weights are keyed "<run id>:<member>"; these are not: ${malformed.join(', ')}.`);
    const runIds = [...new Set(call.weights.weights.map((w) => w.key.split(':')[0]))];
    const found = await tx.select({ id: runs.id, members: runs.members }).from(runs).where(inArray(runs.id, runIds));
    const unknown = call.weights.weights.filter((w) => {
      const [runId, member] = w.key.split(':');
      return !found.some((r) => r.id === runId && (r.members ?? []).includes(Number(member)));
    });
    if (unknown.length) throw badRequest(`The weights name members that no stored run has: ${unknown.map((w) => w.key).join(', ')}.`);
  }
  if (call.linkedRunIds.length) {
    const found = await tx.select({ id: runs.id }).from(runs).where(inArray(runs.id, call.linkedRunIds));
    const absent = call.linkedRunIds.filter((id) => !found.some((f) => f.id === id));
    if (absent.length) throw badRequest(`The call links runs that do not exist: ${absent.join(', ')}.`);
  }
  return call;
}

/** Subject, bodies and recipients of a call as it stands (the editor's preview and the publish path). */
async function buildMail(tx: DbExecutor, row: CallRow, config: Config): Promise<{ mail: RenderedMail; recipients: string[] }> {
  const weights = row.weights as Weights;
  const regs = row.regimes as RegimeCall['regimes'];
  const names = await tx.select().from(regimeNames);
  const nameOf = (id: number) => names.find((n) => n.id === id)?.name ?? `regime ${id}`;
  const [author] = row.authorId ? await tx.select({ name: users.name }).from(users).where(eq(users.id, row.authorId)) : [];
  const scenarioWeights = await resolveScenarioWeights(tx, weights);
  const content: CallMailContent = {
    version: row.version,
    validFrom: row.validFrom,
    validTo: row.validTo,
    confidence: row.confidence,
    regimes: regs.map((r) => ({ from: r.from, to: r.to, name: nameOf(r.regimeId) })),
    weights: await weightLabels(tx, weights),
    weightBasis: weights.basis,
    keyRisks: row.keyRisks,
    narrative: row.narrative,
    correctionReason: row.correctionReason,
    author: author?.name ?? null,
    summary: await regionSummary(tx, row, scenarioWeights),
    publicUrl: config.publicUrl,
  };
  return { mail: renderCallMail(content), recipients: await recipientsFor(tx, row.linkedRunIds) };
}

export async function previewCall(deps: CallsDeps, id: string): Promise<CallPreview> {
  const row = await loadCall(deps.db.db, id);
  const { mail, recipients } = await buildMail(deps.db.db, row, deps.config);
  return { subject: mail.subject, html: mail.html, text: mail.text, recipients: recipients.length };
}

/** Publishes a draft: the row becomes immutable and one mail per recipient is queued, all in one transaction. */
export async function publishCall(deps: CallsDeps, id: string, audit: AuditMeta): Promise<{ call: RegimeCall; mails: number }> {
  const result = await deps.db.db.transaction(async (tx) => {
    const row = await loadCall(tx, id, true);
    if (row.state !== 'draft') throw conflict('This version is already published.');
    await checkPublishable(tx, row);
    const [published] = await tx.update(regimeCalls).set({ state: 'published', publishedAt: new Date(), updatedAt: new Date() }).where(eq(regimeCalls.id, id)).returning();
    const { mail, recipients } = await buildMail(tx, published, deps.config);
    for (const to of recipients) {
      await queueMail(tx, { kind: 'regime_call', relatedType: 'regime_call', relatedId: id, recipients: [to], subject: mail.subject, textBody: mail.text, htmlBody: mail.html });
    }
    await recordAudit(tx, {
      ...audit,
      action: 'regime_call.publish',
      objectType: 'regime_call',
      objectId: id,
      detail: { seriesId: published.seriesId, version: published.version, correctionOf: published.correctionOf, recipients: recipients.length, subject: mail.subject },
    });
    return { call: toDto(published, null), mails: recipients.length };
  });
  return result;
}

/** Starts a correction of the latest published version: a new draft, version + 1, carrying the content and the reason. */
export async function startCorrection(db: DbHandle, id: string, reason: string, authorId: string, audit: AuditMeta): Promise<RegimeCall> {
  try {
    return await correction(db, id, reason, authorId, audit);
  } catch (err) {
    const e = err as { code?: string; cause?: { code?: string } };
    // Two people started the same correction at once: the series/version index let one through.
    if (e?.code === '23505' || e?.cause?.code === '23505') throw conflict('A correction of this call is already being drafted.');
    throw err;
  }
}

async function correction(db: DbHandle, id: string, reason: string, authorId: string, audit: AuditMeta): Promise<RegimeCall> {
  const row = await db.db.transaction(async (tx) => {
    const base = await loadCall(tx, id, true);
    if (base.state !== 'published') throw conflict('Only a published version is corrected; a draft is simply edited.');
    const [latest] = await tx.select().from(regimeCalls).where(eq(regimeCalls.seriesId, base.seriesId)).orderBy(desc(regimeCalls.version)).limit(1);
    if (latest.id !== base.id) {
      throw conflict(latest.state === 'draft' ? 'A correction of this call is already being drafted.' : `Version ${latest.version} is newer: correct that one.`, { latestId: latest.id });
    }
    const [inserted] = await tx
      .insert(regimeCalls)
      .values({
        seriesId: base.seriesId,
        version: base.version + 1,
        state: 'draft',
        validFrom: base.validFrom,
        validTo: base.validTo,
        regimes: base.regimes,
        confidence: base.confidence,
        weights: base.weights,
        keyRisks: base.keyRisks,
        narrative: base.narrative,
        linkedRunIds: base.linkedRunIds,
        correctionOf: base.id,
        correctionReason: reason,
        authorId,
      })
      .returning();
    await recordAudit(tx, { ...audit, action: 'regime_call.start_correction', objectType: 'regime_call', objectId: inserted.id, detail: { correctionOf: base.id, version: inserted.version, reason } });
    return inserted;
  });
  return toDto(row, audit.actorLabel);
}

/** A database refusal (the immutability trigger) reaching a route: a conflict, not a crash. */
export function isImmutableRefusal(err: unknown): boolean {
  const e = err as { code?: string; cause?: { code?: string } };
  return e?.code === '42501' || e?.cause?.code === '42501';
}

async function recipientsFor(tx: DbExecutor, linkedRunIds: string[]): Promise<string[]> {
  const active = await tx.select().from(subscriptions).where(eq(subscriptions.active, true)).orderBy(asc(subscriptions.email));
  const callRegions = new Set(
    linkedRunIds.length
      ? (await tx.selectDistinct({ regionId: signalRows.regionId }).from(signalRows).where(inArray(signalRows.runId, linkedRunIds))).map((r) => r.regionId)
      : [],
  );
  return active.filter((s) => s.regionIds.length === 0 || s.regionIds.some((r) => callRegions.has(r))).map((s) => s.email);
}

/** Weight (fraction) per "<runId>:<member>" as shared/api/weights.ts defines it, for the runs the weights name. */
async function resolveScenarioWeights(tx: DbExecutor, weights: Weights): Promise<Map<string, number>> {
  const out = new Map<string, number>();
  if (weights.basis === 'member') {
    for (const w of weights.weights) out.set(w.key, w.pct / 100);
    return out;
  }
  if (!weights.clusteringId) return out;
  const [clustering] = await tx.select().from(runClusterings).where(eq(runClusterings.id, weights.clusteringId));
  if (!clustering) return out;
  for (const c of clustering.clusters as { id: number; members: number[] }[]) {
    const pct = weights.weights.find((w) => w.key === String(c.id))?.pct ?? 0;
    for (const m of c.members) out.set(`${clustering.runId}:${m}`, pct / 100 / c.members.length);
  }
  return out;
}

async function weightLabels(tx: DbExecutor, weights: Weights): Promise<{ label: string; pct: number }[]> {
  if (weights.basis === 'member') {
    const ids = [...new Set(weights.weights.map((w) => w.key.split(':')[0]))].filter((id) => /^[0-9a-f-]{36}$/i.test(id));
    const known = ids.length ? await tx.select({ id: runs.id, model: runs.model, cycle: runs.cycle }).from(runs).where(inArray(runs.id, ids)) : [];
    return weights.weights.map((w) => {
      const [runId, member] = w.key.split(':');
      const run = known.find((r) => r.id === runId);
      const name = run ? `${run.model ?? 'run'} ${run.cycle ? run.cycle.toISOString().slice(0, 13).replace('T', ' ') + 'Z' : ''}`.trim() : `run ${runId?.slice(0, 8)}`;
      return { label: `${name} member ${member ?? '?'}`, pct: w.pct };
    });
  }
  const [clustering] = weights.clusteringId ? await tx.select().from(runClusterings).where(eq(runClusterings.id, weights.clusteringId)) : [];
  const clusters = (clustering?.clusters ?? []) as { id: number; members: number[] }[];
  return weights.weights.map((w) => {
    const c = clusters.find((x) => String(x.id) === w.key);
    return { label: c ? `Cluster ${c.id + 1} (members ${c.members.join(', ')})` : `Cluster ${w.key}`, pct: w.pct };
  });
}

/**
 * Weighted P50 per region of each scenario's total over the call's valid period, from the linked
 * runs' signal rows. Scenarios the weights name get their weight; when the weights name none of
 * the linked runs' scenarios, all count equally.
 */
async function regionSummary(tx: DbExecutor, row: CallRow, scenarioWeights: Map<string, number>): Promise<CallMailContent['summary']> {
  if (!row.linkedRunIds.length) return [];
  const sums = await tx
    .select({
      runId: signalRows.runId,
      member: signalRows.member,
      regionId: signalRows.regionId,
      region: regions.name,
      days: sql<number>`count(*)::int`,
      precip: sql<number | null>`sum(${signalRows.precipMm})::float8`,
      inflow: sql<number | null>`sum(${signalRows.inflowGwh})::float8`,
      solar: sql<number | null>`sum(${signalRows.solarGwh})::float8`,
    })
    .from(signalRows)
    .innerJoin(regions, eq(regions.id, signalRows.regionId))
    .where(and(inArray(signalRows.runId, row.linkedRunIds), gte(signalRows.day, row.validFrom), lte(signalRows.day, row.validTo)))
    .groupBy(signalRows.runId, signalRows.member, signalRows.regionId, regions.name);
  const byRegion = new Map<string, typeof sums>();
  for (const s of sums) byRegion.set(s.regionId, [...(byRegion.get(s.regionId) ?? []), s]);
  const anyNamed = sums.some((s) => (scenarioWeights.get(`${s.runId}:${s.member}`) ?? 0) > 0);
  return [...byRegion.values()]
    .map((list) => {
      const w = list.map((s) => (anyNamed ? (scenarioWeights.get(`${s.runId}:${s.member}`) ?? 0) : 1));
      const p50 = (pick: (s: (typeof list)[number]) => number | null) => {
        const idx = list.map((s, i) => (pick(s) === null || w[i] <= 0 ? -1 : i)).filter((i) => i >= 0);
        return idx.length ? weightedPercentile(idx.map((i) => pick(list[i])!), idx.map((i) => w[i]), 50) : null;
      };
      return { region: list[0].region, days: Math.max(...list.map((s) => s.days)), precipMm: p50((s) => s.precip), inflowGwh: p50((s) => s.inflow), solarGwh: p50((s) => s.solar) };
    })
    .sort((a, b) => a.region.localeCompare(b.region));
}

