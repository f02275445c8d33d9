/**
 * Sealed snapshots end to end: seal (risk only), content gathered from seeded runs, regions,
 * calibration set, signal rows and a published regime call; verify one snapshot and the chain;
 * tampering behind the database's back (triggers disabled as superuser) named by the check that
 * fails; the exported JSON checked offline by the command line, agreeing with the server; xlsx
 * export; append-only triggers; roles; audit events.
 */
import { spawnSync } from 'node:child_process';
import { createHash, generateKeyPairSync, randomUUID } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PROJECT_ROOT } from '../../server/config.ts';
import { scenarioSpread } from '../../server/science/statistics.ts';
import { getSnapshotRow, sealAfterPublish, sealKeyFor, verifyStoredRow } from '../../server/services/snapshots.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';
import { ensureDefaultCalibrationSet, latestCalibrationSet } from '../../server/services/calibration.ts';

const tag = `${process.pid}-${Date.now().toString(36)}`;
const MODEL = `SNAPTEST-${tag}`;
const HYDRO = `snap-hydro-${tag}`;
const SOLAR = `snap-solar-${tag}`;
const OLD_CYCLE = '2026-11-30T00:00:00Z';
const NEW_CYCLE = '2026-12-01T00:00:00Z';
const DAYS = ['2026-12-01', '2026-12-02'];
const MEMBERS = [0, 1, 2, 3];
/** the published call's member weights on the newest run (member 3 unnamed: weight 0) */
const CALL_PCT = [50, 30, 20];

let t: TestApp;
let risk: Client;
let trader: Client;
let admin: Client;
let oldRun: string;
let newRun: string;
let calibrationVersion: number;
let dir: string;

/** precipitation of a seeded row: distinct per run, member, region and day */
const precipOf = (run: number, member: number, region: number, dayIx: number) => 2 + run * 10 + member * 1.5 + region * 0.25 + dayIx * 0.5;

async function seed() {
  const q = (text: string, values: unknown[] = []) => t.db.pool.query(text, values);
  // The real first set (the defaults), shared with the other test files of this database.
  await ensureDefaultCalibrationSet(t.db.db);
  calibrationVersion = (await latestCalibrationSet(t.db.db)).version;
  const geometry = JSON.stringify({ type: 'Polygon', coordinates: [[[10, 60], [11, 60], [11, 61], [10, 60]]] });
  await q(`INSERT INTO regions (id, name, kind, properties, geometry, area_km2) VALUES ($1, 'Test catchment', 'hydro', $4, $3, 1000), ($2, 'Test zone', 'solar', $5, $3, 500)`, [
    HYDRO,
    SOLAR,
    geometry,
    JSON.stringify({ id: HYDRO, name: 'Test catchment', kind: 'hydro', headM: 300, efficiency: 0.9, runoffCoefficient: 0.7, recessionDays: 10 }),
    JSON.stringify({ id: SOLAR, name: 'Test zone', kind: 'solar', capacityMw: 100, tiltDeg: 30, azimuthDeg: 180, lossesPct: 14 }),
  ]);
  const runIds: string[] = [];
  for (const [i, cycle] of [OLD_CYCLE, NEW_CYCLE].entries()) {
    const res = await q(
      `INSERT INTO runs (checksum, size_bytes, file_name, format, model, cycle, members, is_ensemble, state, progress)
       VALUES ($1, 1000, $2, 'grib2', $3, $4, $5, true, 'ready', 1) RETURNING id`,
      [createHash('sha256').update(`${tag}:${i}`).digest('hex'), `run-${i}.grib2`, MODEL, cycle, MEMBERS],
    );
    runIds.push(res.rows[0].id);
  }
  [oldRun, newRun] = runIds;
  for (const [r, runId] of runIds.entries()) {
    for (const member of MEMBERS) {
      for (const [ri, region] of [HYDRO, SOLAR].entries()) {
        for (const [di, day] of DAYS.entries()) {
          await q(
            `INSERT INTO signal_rows (run_id, member, region_id, day, precip_mm, snow_share, cloud_pct, ghi_kwh_m2, solar_gwh, inflow_gwh, calibration_version, code_version, input_checksum)
             VALUES ($1, $2, $3, $4, $5, 0.25, $6, $7, $8, $9, $10, 'test', 'x')`,
            [runId, member, region, day, precipOf(r, member, ri, di), 40 + member * 5, ri === 1 ? 1.5 + member * 0.1 : null, ri === 1 ? 0.8 + member * 0.05 : null, ri === 0 ? 3 + member : null, calibrationVersion],
          );
        }
      }
    }
  }
  const weights = { basis: 'member', weights: CALL_PCT.map((pct, m) => ({ key: `${newRun}:${m}`, pct })) };
  await q(
    `INSERT INTO regime_calls (series_id, version, state, valid_from, valid_to, regimes, confidence, weights, narrative, published_at)
     VALUES ($1, 2, 'published', '2026-12-01', '2026-12-03', '[]', 'medium', $2, 'snapshot test call', now())`,
    [randomUUID(), JSON.stringify(weights)],
  );
}

/** Edits a snapshot row with the append-only triggers off for that statement only (superuser). */
async function tamper(sqlText: string, values: unknown[]) {
  const client = await t.db.pool.connect();
  try {
    await client.query('BEGIN');
    await client.query('ALTER TABLE snapshots DISABLE TRIGGER USER');
    await client.query(sqlText, values);
    await client.query('ALTER TABLE snapshots ENABLE TRIGGER USER');
    await client.query('COMMIT');
  } catch (err) {
    await client.query('ROLLBACK');
    throw err;
  } finally {
    client.release();
  }
}

async function seal(client: Client, filters: Record<string, unknown> = { models: [MODEL] }) {
  return client.fetch('/api/snapshots', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ filters }) });
}

async function json<T = Record<string, unknown>>(res: Response, status = 200): Promise<T> {
  const text = await res.text();
  expect(res.status, text).toBe(status);
  return JSON.parse(text) as T;
}

interface Check {
  name: string;
  ok: boolean;
  detail: string;
}
const failedNames = (checks: Check[]) => checks.filter((c) => !c.ok).map((c) => c.name);

function cli(...args: string[]) {
  const tsx = path.join(PROJECT_ROOT, 'node_modules', '.bin', 'tsx');
  return spawnSync(tsx, ['server/cli/liftwise.ts', 'verify-snapshot', ...args], { cwd: PROJECT_ROOT, encoding: 'utf8' });
}

describe('sealed snapshots', () => {
  const sealed: { id: number; hash: string; previousHash: string | null }[] = [];

  beforeAll(async () => {
    t = await startTestApp({}, { workers: false });
    dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
    // Snapshots other test files sealed were signed with their own apps' keys; this file's chain starts clean.
    await tamper('DELETE FROM snapshots', []);
    await seed();
    [risk, trader, admin] = await Promise.all([signIn(t, 'risk'), signIn(t, 'trader'), signIn(t, 'admin')]);
  });
  afterAll(async () => {
    await t?.close();
    if (dir) fs.rmSync(dir, { recursive: true, force: true });
  });

  it('only risk seals: trader and admin are refused with 403, nothing stored', async () => {
    expect((await seal(trader)).status).toBe(403);
    expect((await seal(admin)).status).toBe(403);
    const count = await t.db.pool.query('SELECT count(*)::int AS n FROM snapshots');
    expect(count.rows[0].n).toBe(0);
  });

  it('risk seals the latest cycle of the model; the document holds rows, weights, summary, call, runs, versions', async () => {
    const { snapshot } = await json<{ snapshot: { id: number; hash: string; previousHash: string | null; shortHash: string } }>(await seal(risk), 201);
    sealed.push(snapshot);
    expect(snapshot.previousHash).toBeNull();
    expect(snapshot.shortHash).toBe(snapshot.hash.slice(0, 12));

    const { snapshot: full } = await json<{ snapshot: { document: { hash: string; keyId: string; sealedBy: string; content: Record<string, unknown> } } }>(
      await admin.fetch(`/api/snapshots/${snapshot.id}`),
    );
    const doc = full.document;
    expect(doc.hash).toBe(snapshot.hash);
    expect(doc.sealedBy).toBe((await json<{ name: string }>(await risk.fetch('/api/me'))).name);
    const content = doc.content as {
      rows: { runId: string; member: number; regionId: string; day: string; precipMm: number; weight: number; calibrationVersion: number }[];
      summary: { runId: string; regionId: string; day: string; quantity: string; p10: number; p50: number; p90: number }[];
      runs: { runId: string; checksum: string }[];
      regimeCall: { version: number; content: { narrative: string } } | null;
      calibrationVersions: number[];
      codeVersion: string;
      takenAt: string;
    };
    // only the newest cycle: 4 members x 2 regions x 2 days
    expect(content.rows).toHaveLength(MEMBERS.length * 2 * DAYS.length);
    expect(new Set(content.rows.map((r) => r.runId))).toEqual(new Set([newRun]));
    const stored = await t.db.pool.query('SELECT checksum FROM runs WHERE id = $1', [newRun]);
    expect(content.runs).toEqual([expect.objectContaining({ runId: newRun, checksum: stored.rows[0].checksum })]);
    expect(content.calibrationVersions).toEqual([calibrationVersion]);
    expect(content.codeVersion).toBe(t.config.codeVersion);
    expect(content.regimeCall?.version).toBe(2);
    expect(content.regimeCall?.content.narrative).toBe('snapshot test call');
    expect(Number.isNaN(Date.parse(content.takenAt))).toBe(false);

    // weights from the published call (member 3 not named: 0)
    for (const m of MEMBERS) {
      const w = content.rows.find((r) => r.member === m)!.weight;
      expect(w).toBeCloseTo(m < CALL_PCT.length ? CALL_PCT[m] / 100 : 0, 12);
    }
    // P10/P50/P90 of one region/day against the statistics module fed with the seeded values
    const values = CALL_PCT.map((_, m) => Math.fround(precipOf(1, m, 0, 1)));
    const expected = scenarioSpread(values, CALL_PCT.map((p) => p / 100));
    const entry = content.summary.find((s) => s.regionId === HYDRO && s.day === DAYS[1] && s.quantity === 'precipMm')!;
    expect(entry.p50).toBeCloseTo(expected.p50, 5);
    expect(entry.p10).toBeCloseTo(expected.p10, 5);
    expect(entry.p90).toBeCloseTo(expected.p90, 5);
    // solar figures are absent for the hydro region: no summary entry for them
    expect(content.summary.some((s) => s.regionId === HYDRO && s.quantity === 'solarGwh')).toBe(false);
  });

  it('filters narrow the content; nothing matching is refused with 422', async () => {
    const { snapshot } = await json<{ snapshot: { id: number; hash: string; previousHash: string; summary: { rowCount: number; runCount: number } } }>(
      await seal(risk, { runIds: [oldRun], kind: 'solar', dayFrom: DAYS[0], dayTo: DAYS[0] }),
      201,
    );
    sealed.push(snapshot);
    expect(snapshot.summary.rowCount).toBe(MEMBERS.length);
    expect(snapshot.previousHash).toBe(sealed[0].hash);
    const nothing = await seal(risk, { models: [`${MODEL}-none`] });
    expect(nothing.status).toBe(422);
    expect((await json(nothing, 422)).error).toMatchObject({ message: expect.stringContaining('Nothing to seal') });
    const bad = await seal(risk, { dayFrom: 'yesterday' });
    expect(bad.status).toBe(400);
  });

  it('two seals at once still form one chain', async () => {
    const results = await Promise.all([seal(risk), seal(risk)]);
    for (const res of results) sealed.push((await json<{ snapshot: (typeof sealed)[number] }>(res, 201)).snapshot);
    sealed.sort((a, b) => a.id - b.id);
    for (let i = 1; i < sealed.length; i++) expect(sealed[i].previousHash).toBe(sealed[i - 1].hash);
    const chain = await json<{ valid: boolean; checked: number }>(await admin.fetch('/api/snapshots/verify-chain'));
    expect(chain).toMatchObject({ valid: true, checked: sealed.length });
  });

  it('admin lists (filters, paging) and verifies; trader may not list but reads the public key', async () => {
    const page = await json<{ snapshots: { id: number; sealedBy: string; shortHash: string }[]; total: number }>(await admin.fetch('/api/snapshots?limit=2'));
    expect(page.total).toBe(sealed.length);
    expect(page.snapshots.map((s) => s.id)).toEqual([sealed.at(-1)!.id, sealed.at(-2)!.id]);
    const byUser = await json<{ total: number }>(await admin.fetch(`/api/snapshots?user=${encodeURIComponent(page.snapshots[0].sealedBy)}`));
    expect(byUser.total).toBe(sealed.length);
    expect((await json<{ total: number }>(await admin.fetch('/api/snapshots?user=nobody-at-all'))).total).toBe(0);
    expect((await json<{ total: number }>(await admin.fetch('/api/snapshots?to=2000-01-01'))).total).toBe(0);

    const verified = await json<{ valid: boolean; checks: Check[]; chain: { valid: boolean; checked: number } }>(await admin.fetch(`/api/snapshots/${sealed[1].id}/verify`));
    expect(verified.valid).toBe(true);
    expect(verified.checks.map((c) => c.name)).toEqual(['format', 'content-hash', 'hash', 'signature', 'chain']);
    expect(verified.chain).toMatchObject({ valid: true, checked: 2 });

    expect((await trader.fetch('/api/snapshots')).status).toBe(403);
    expect((await trader.fetch(`/api/snapshots/${sealed[0].id}/verify`)).status).toBe(403);
    const key = await json<{ keyId: string; algorithm: string; publicKey: string }>(await trader.fetch('/api/snapshots/public-key'));
    expect(key.algorithm).toBe('Ed25519');
    expect(key.keyId).toBe(sealKeyFor(t.config).keyId);
    expect((await admin.fetch('/api/snapshots/999999999/verify')).status).toBe(404);
    expect((await admin.fetch('/api/snapshots/abc')).status).toBe(400);
  });

  it('the exported JSON verifies offline with the pinned key, as on the server; a wrong key fails the signature', async () => {
    const id = sealed[0].id;
    const exported = await risk.fetch(`/api/snapshots/${id}/export.json`);
    expect(exported.headers.get('content-disposition')).toContain(`liftwise-snapshot-${id}-`);
    const file = path.join(dir, 'export.json');
    fs.writeFileSync(file, await json(exported).then((b) => JSON.stringify(b)));
    const keyFile = path.join(dir, 'server.pem');
    fs.writeFileSync(keyFile, (await json<{ publicKey: string }>(await risk.fetch('/api/snapshots/public-key'))).publicKey);

    const offline = cli(file, '--public-key', keyFile);
    expect(offline.stdout).toMatch(/^VALID$/m);
    expect(offline.status).toBe(0);
    const server = await json<{ valid: boolean }>(await risk.fetch(`/api/snapshots/${id}/verify`));
    expect(server.valid).toBe(true);

    // the chain link offline too: the second snapshot's export against the first's
    const secondFile = path.join(dir, 'second.json');
    fs.writeFileSync(secondFile, await (await risk.fetch(`/api/snapshots/${sealed[1].id}/export.json`)).text());
    const linked = cli(secondFile, '--public-key', keyFile, '--previous', file);
    expect(linked.stdout).toMatch(/^ok {3}chain/m);
    expect(linked.status).toBe(0);
    const misLinked = cli(secondFile, '--public-key', keyFile, '--previous', secondFile);
    expect(misLinked.stdout).toMatch(/^FAIL chain/m);

    const other = path.join(dir, 'other.pem');
    fs.writeFileSync(other, generateKeyPairSync('ed25519').publicKey.export({ type: 'spki', format: 'pem' }).toString());
    const wrong = cli(file, '--public-key', other);
    expect(wrong.status).toBe(1);
    expect(wrong.stdout).toMatch(/^FAIL signature/m);
    expect(wrong.stdout).toMatch(/^INVALID: /m);
  });

  it('every changed byte of a stored document is detected', async () => {
    const row = await getSnapshotRow(t.db, sealed[0].id);
    const key = sealKeyFor(t.config);
    expect(verifyStoredRow(row, null, key).valid).toBe(true);
    const text = row.document;
    // every byte outside the content (the seal's own fields) and an even spread across the content
    const contentStart = text.indexOf('"content":') + '"content":'.length;
    const contentEnd = text.lastIndexOf('"contentHash":');
    const positions = new Set<number>();
    for (let i = 0; i < text.length; i++) if (i < contentStart || i >= contentEnd - 1) positions.add(i);
    for (let i = contentStart; i < contentEnd; i += Math.max(1, Math.floor((contentEnd - contentStart) / 300))) positions.add(i);
    let undetected = 0;
    for (const i of positions) {
      const replacement = text[i] === '1' ? '2' : '1';
      const result = verifyStoredRow({ ...row, document: text.slice(0, i) + replacement + text.slice(i + 1) }, null, key);
      if (result.valid) undetected += 1;
    }
    expect(positions.size).toBeGreaterThan(300);
    expect(undetected).toBe(0);
  });

  it('a byte changed in the database fails verify with the check named, offline too; restoring it heals', async () => {
    const id = sealed[0].id;
    const { rows } = await t.db.pool.query<{ document: string }>('SELECT document FROM snapshots WHERE id = $1', [id]);
    const original = rows[0].document;
    const at = original.indexOf('"precipMm":') + '"precipMm":'.length;
    const changed = original.slice(0, at) + (original[at] === '9' ? '8' : '9') + original.slice(at + 1);
    await tamper('UPDATE snapshots SET document = $1 WHERE id = $2', [changed, id]);
    try {
      const server = await json<{ valid: boolean; checks: Check[]; chain: { valid: boolean; firstBroken: { id: number; check: string } } }>(
        await admin.fetch(`/api/snapshots/${id}/verify`),
      );
      expect(server.valid).toBe(false);
      expect(failedNames(server.checks)).toEqual(['content-hash']);
      expect(server.chain.firstBroken).toMatchObject({ id, check: 'content-hash' });
      const chain = await json<{ valid: boolean; firstBroken: { id: number; check: string } }>(await admin.fetch('/api/snapshots/verify-chain'));
      expect(chain.firstBroken).toMatchObject({ id, check: 'content-hash' });

      const file = path.join(dir, 'tampered.json');
      fs.writeFileSync(file, await (await risk.fetch(`/api/snapshots/${id}/export.json`)).text());
      const keyFile = path.join(dir, 'server.pem');
      const offline = cli(file, '--public-key', keyFile);
      expect(offline.status).toBe(1);
      expect(offline.stdout).toMatch(/^FAIL content-hash/m);
      expect(offline.stdout.split('\n').filter((l) => l.startsWith('FAIL')).map((l) => l.split(/\s+/)[1])).toEqual(failedNames(server.checks));
    } finally {
      await tamper('UPDATE snapshots SET document = $1 WHERE id = $2', [original, id]);
    }
    expect((await json<{ valid: boolean }>(await admin.fetch(`/api/snapshots/${id}/verify`))).valid).toBe(true);
  });

  it('a broken chain is detected and the snapshot named: an edited previous hash, a removed snapshot', async () => {
    const second = sealed[1];
    await tamper('UPDATE snapshots SET previous_hash = $1 WHERE id = $2', ['f'.repeat(64), second.id]);
    try {
      const one = await json<{ valid: boolean; checks: Check[] }>(await admin.fetch(`/api/snapshots/${second.id}/verify`));
      expect(failedNames(one.checks)).toEqual(['chain']);
      const chain = await json<{ valid: boolean; firstBroken: { id: number; check: string } }>(await admin.fetch('/api/snapshots/verify-chain'));
      expect(chain.valid).toBe(false);
      expect(chain.firstBroken).toMatchObject({ id: second.id, check: 'chain' });
    } finally {
      await tamper('UPDATE snapshots SET previous_hash = $1 WHERE id = $2', [second.previousHash, second.id]);
    }

    const { rows } = await t.db.pool.query('SELECT * FROM snapshots WHERE id = $1', [second.id]);
    await tamper('DELETE FROM snapshots WHERE id = $1', [second.id]);
    try {
      const chain = await json<{ valid: boolean; firstBroken: { id: number; check: string; detail: string } }>(await admin.fetch('/api/snapshots/verify-chain'));
      expect(chain.firstBroken).toMatchObject({ id: sealed[2].id, check: 'chain' });
    } finally {
      const r = rows[0];
      await tamper(
        'INSERT INTO snapshots (id, sealed_at, sealed_by, sealed_by_label, summary, document, hash, previous_hash, key_id) VALUES ($1,$2,$3,$4,$5,$6,$7,$8,$9)',
        [r.id, r.sealed_at, r.sealed_by, r.sealed_by_label, r.summary, r.document, r.hash, r.previous_hash, r.key_id],
      );
    }
    expect((await json<{ valid: boolean }>(await admin.fetch('/api/snapshots/verify-chain'))).valid).toBe(true);
  });

  it('the database refuses UPDATE, DELETE and TRUNCATE of snapshots', async () => {
    const id = sealed[0].id;
    await expect(t.db.pool.query('UPDATE snapshots SET sealed_by_label = $1 WHERE id = $2', ['someone else', id])).rejects.toThrow(/append-only: UPDATE/);
    await expect(t.db.pool.query('DELETE FROM snapshots WHERE id = $1', [id])).rejects.toThrow(/append-only: DELETE/);
    await expect(t.db.pool.query('TRUNCATE snapshots')).rejects.toThrow(/append-only: TRUNCATE/);
    const { rows } = await t.db.pool.query('SELECT count(*)::int AS n FROM snapshots');
    expect(rows[0].n).toBe(sealed.length);
  });

  it('the xlsx export carries rows, summary and the seal on the About sheet', async () => {
    const id = sealed[0].id;
    const res = await admin.fetch(`/api/snapshots/${id}/export.xlsx`);
    expect(res.status).toBe(200);
    const book = new ExcelJS.Workbook();
    await book.xlsx.load(Buffer.from(await res.arrayBuffer()) as unknown as ArrayBuffer);
    expect(book.getWorksheet('Rows')!.rowCount).toBe(1 + MEMBERS.length * 2 * DAYS.length);
    expect(book.getWorksheet('Summary')!.rowCount).toBeGreaterThan(1);
    const about: string[] = [];
    book.getWorksheet('About')!.eachRow((r) => about.push(r.values!.toString()));
    const text = about.join('\n');
    const checksum = (await t.db.pool.query('SELECT checksum FROM runs WHERE id = $1', [newRun])).rows[0].checksum;
    expect(text).toContain(sealed[0].hash);
    expect(text).toContain(sealKeyFor(t.config).keyId);
    expect(text).toContain('BEGIN PUBLIC KEY');
    expect(text).toContain(checksum);
    expect(text).toContain(t.config.codeVersion);
    expect(text).toContain('not a safety forecast');
  });

  it('every seal and export is in the audit trail, and the trail still verifies', async () => {
    const seals = await json<{ events: { objectId: string; detail: { hash: string } }[] }>(await admin.fetch('/api/audit?action=snapshot.seal&limit=100'));
    for (const s of sealed) expect(seals.events.find((e) => e.objectId === String(s.id))?.detail.hash).toBe(s.hash);
    const exports = await json<{ events: { objectId: string; detail: { format: string } }[] }>(await admin.fetch('/api/audit?action=snapshot.export&limit=100'));
    const formats = exports.events.filter((e) => e.objectId === String(sealed[0].id)).map((e) => e.detail.format);
    expect(formats).toEqual(expect.arrayContaining(['json', 'xlsx']));
    expect((await json<{ ok: boolean }>(await admin.fetch('/api/audit/verify'))).ok).toBe(true);
  });

  it('after a publish, the system seals only when SNAPSHOT_AFTER_PUBLISH is on, into the same chain', async () => {
    const callId = randomUUID();
    expect(await sealAfterPublish({ db: t.db, config: { ...t.config, snapshotAfterPublish: false } }, { callId })).toBeNull();
    const snapshot = await sealAfterPublish({ db: t.db, config: { ...t.config, snapshotAfterPublish: true } }, { callId });
    expect(snapshot).not.toBeNull();
    expect(snapshot!.sealedBy).toBe('system (after publish)');
    expect(snapshot!.summary).toMatchObject({ trigger: 'after-publish', callId });
    expect(snapshot!.previousHash).toBe(sealed.at(-1)!.hash);
    const chain = await json<{ valid: boolean; checked: number }>(await admin.fetch('/api/snapshots/verify-chain'));
    expect(chain).toMatchObject({ valid: true, checked: sealed.length + 1 });
    const audit = await json<{ events: { objectId: string; actorLabel: string; detail: { trigger: string } }[] }>(await admin.fetch('/api/audit?action=snapshot.seal&limit=5'));
    expect(audit.events.find((e) => e.objectId === String(snapshot!.id))).toMatchObject({ actorLabel: 'system', detail: { trigger: 'after-publish' } });
  });
});
