/**
 * Fault drill: the process running the workers is killed (SIGKILL) while ensemble members are
 * being diagnosed. A new process on the same database and data folder must finish the run:
 * pg-boss re-delivers the job that was active when its worker died (after JOB_EXPIRE_SECONDS,
 * noticed by the maintenance every JOB_MAINTENANCE_SECONDS), the member handler redoes what is
 * missing, and the run reaches ready with exactly one diagnosis row per member and step.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_CONFIG, generateDemo, type ManifestFile } from '../../../scripts/demo/generate.ts';
import { createDb, type DbHandle } from '../../../server/db/client.ts';
import { applyMigrations } from '../../../server/db/migrate.ts';
import { runDiagnostics, runMembers, runs } from '../../../server/db/schema.ts';
import { issueApiToken } from '../../../server/services/api-tokens.ts';
import { testDatabaseUrl } from '../support.ts';
import { freePort, startAppChild, type AppChild } from './child.ts';

const SMALL = {
  ...DEFAULT_CONFIG,
  deterministicDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  ensembleDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  steps: [0, 6, 12, 18, 24, 30, 36, 42, 48, 54, 60, 66],
  members: 4,
  seed: `drill-worker-killed-${process.pid}`,
};

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('fault drill: a worker killed in the middle of a job', () => {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-drill-'));
  const demoDir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-drill-demo-'));
  let db: DbHandle;
  let ensemble: ManifestFile;
  let token = '';
  const children: AppChild[] = [];
  const env = { DATABASE_URL: testDatabaseUrl(), DATA_DIR: dataDir, JOB_EXPIRE_SECONDS: '5', JOB_MAINTENANCE_SECONDS: '1' };

  beforeAll(async () => {
    const { manifest } = await generateDemo({ outDir: demoDir, config: SMALL, log: () => {} });
    ensemble = manifest.files.find((f) => f.format === 'netcdf4')!;
    db = createDb(testDatabaseUrl(), 2);
    await applyMigrations(db.db, db.pool);
    await db.db.delete(runs).where(eq(runs.checksum, ensemble.sha256));
    ({ token } = await issueApiToken(db.db, { name: `drill-${process.pid}`, roles: ['meteorologist'], createdBy: null }, { actorLabel: 'test' }));
  }, 120_000);
  afterAll(async () => {
    for (const c of children) c.process.kill('SIGKILL');
    await Promise.all(children.map((c) => c.exited));
    // Its left-over jobs (if the drill failed) then find no run and end at once.
    if (ensemble) await db?.db.delete(runs).where(eq(runs.checksum, ensemble.sha256));
    await db?.close();
    fs.rmSync(dataDir, { recursive: true, force: true });
    fs.rmSync(demoDir, { recursive: true, force: true });
  });

  it('the run still completes, with no duplicate rows, after SIGKILL of the worker process', async () => {
    const first = await startAppChild(env, await freePort());
    children.push(first);
    const form = new FormData();
    form.append('file', new Blob([fs.readFileSync(path.join(demoDir, ensemble.path))]), ensemble.path);
    const res = await fetch(`${first.baseUrl}/api/runs`, { method: 'POST', body: form, headers: { Authorization: `Bearer ${token}` } });
    expect(res.status, await res.clone().text()).toBe(201);
    const runId = ((await res.json()) as { run: { id: string } }).run.id;
    const total = SMALL.members * SMALL.steps.length;

    // Kill once some member is part-way: some of its steps are stored, the run is not finished.
    const until = Date.now() + 150_000;
    let atKill = 0;
    for (;;) {
      const [{ n }] = await db.db.select({ n: sql<number>`count(*)::int` }).from(runDiagnostics).where(eq(runDiagnostics.runId, runId));
      if (n >= 2 && n <= total - SMALL.steps.length) {
        atKill = n;
        break;
      }
      if (n > total - SMALL.steps.length || Date.now() > until) throw new Error(`missed the moment to kill (rows: ${n} of ${total}); child stderr: ${first.stderr()}`);
      await sleep(20);
    }
    first.process.kill('SIGKILL');
    await first.exited;
    const [mid] = await db.db.select().from(runs).where(eq(runs.id, runId));
    expect(mid.state).toBe('diagnosing');
    const interrupted = await db.db
      .select({ member: runMembers.member })
      .from(runMembers)
      .where(and(eq(runMembers.runId, runId), eq(runMembers.state, 'diagnosing')));
    expect(interrupted.length).toBeGreaterThan(0);

    const second = await startAppChild(env, await freePort());
    children.push(second);
    const deadline = Date.now() + 150_000;
    for (;;) {
      const [row] = await db.db.select().from(runs).where(eq(runs.id, runId));
      if (row.state === 'ready') break;
      if (row.state === 'rejected' || Date.now() > deadline) throw new Error(`run ended ${row.state} (${row.message}); child stderr: ${second.stderr()}`);
      await sleep(250);
    }

    const rows = await db.db
      .select({ member: runDiagnostics.member, step: runDiagnostics.step })
      .from(runDiagnostics)
      .where(eq(runDiagnostics.runId, runId));
    expect(rows.length).toBe(total);
    const keys = new Set(rows.map((r) => `${r.member}/${r.step}`));
    expect(keys.size).toBe(total);
    expect(atKill).toBeLessThan(total);
    const members = await db.db.select().from(runMembers).where(eq(runMembers.runId, runId));
    expect(members.every((m) => m.state === 'done')).toBe(true);
    // The interrupted member really was delivered again (a second attempt), not left behind.
    const again = members.filter((m) => interrupted.some((i) => i.member === m.member));
    expect(again.every((m) => m.attempts >= 2), JSON.stringify({ interrupted, members: members.map((m) => [m.member, m.attempts]) })).toBe(true);
    const retried = await db.pool.query(
      `SELECT max(retry_count)::int AS n FROM (SELECT retry_count FROM pgboss.job WHERE data->>'runId' = $1
         UNION ALL SELECT retry_count FROM pgboss.archive WHERE data->>'runId' = $1) j`,
      [runId],
    );
    expect(retried.rows[0].n).toBeGreaterThanOrEqual(1);
  }, 360_000);
});
