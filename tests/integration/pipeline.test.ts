import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateDemo, DEFAULT_CONFIG, type Manifest } from '../../scripts/demo/generate.ts';
import { runDiagnostics, runMembers, runs } from '../../server/db/schema.ts';
import { hasOmega, readOmegaPart } from '../../server/services/derived-store.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

/** A small synthetic market (coarse grid, few steps, three members) so the whole chain runs in seconds. */
const SMALL = {
  ...DEFAULT_CONFIG,
  deterministicDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  ensembleDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  steps: [0, 6, 12, 18, 24, 30],
  members: 3,
  // A seed of its own per process: the test database may still hold the runs of an earlier process.
  seed: `pipeline-test-${process.pid}`,
};

let met: Client;

async function upload(file: string): Promise<{ run: { id: string } }> {
  const form = new FormData();
  form.append('file', new Blob([fs.readFileSync(file)]), path.basename(file));
  const res = await met.fetch('/api/runs', { method: 'POST', body: form });
  expect(res.status).toBe(201);
  return res.json();
}

async function waitReady(id: string) {
  const until = Date.now() + 60_000;
  for (;;) {
    const { run } = await (await met.fetch(`/api/runs/${id}`)).json();
    if (run.state === 'ready' || run.state === 'rejected') return run;
    if (Date.now() > until) throw new Error(`run stuck in ${run.state} at ${run.progress}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

describe('processing chain: upload -> read -> QG diagnosis per member and step -> ready', () => {
  let t: TestApp;
  let manifest: Manifest;
  const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-demo-'));

  beforeAll(async () => {
    ({ manifest } = await generateDemo({ outDir: out, config: SMALL, log: () => {} }));
    t = await startTestApp();
    // The test database may still hold these files' runs from an earlier process: start clean.
    await t.db.db.delete(runs).where(inArray(runs.checksum, manifest.files.map((f) => f.sha256)));
    met = await signIn(t, 'meteorologist');
  }, 120_000);
  afterAll(async () => {
    await t.close();
    fs.rmSync(out, { recursive: true, force: true });
  });

  it('a deterministic GRIB2 run is diagnosed at every step, stored, and becomes ready', async () => {
    const file = manifest.files.find((f) => f.format === 'grib2')!;
    const { run } = await upload(path.join(out, file.path));
    const done = await waitReady(run.id);
    expect(done).toMatchObject({ state: 'ready', progress: 1, format: 'grib2', members: [0], steps: SMALL.steps });
    const rows = await t.db.db.select().from(runDiagnostics).where(eq(runDiagnostics.runId, run.id));
    expect(rows.map((r) => r.step).sort((a, b) => a - b)).toEqual(SMALL.steps);
    for (const row of rows) {
      expect(row.residual).toBeLessThan(1e-10);
      expect(row.sigma.every((s) => s > 0)).toBe(true);
      expect(hasOmega(t.config.storageDir, run.id, 0, row.step)).toBe(true);
    }
    // The stored total is the sum of its two forced parts (the equation is linear).
    const total = await readOmegaPart(t.config.storageDir, run.id, 0, 12, 'total');
    const vort = await readOmegaPart(t.config.storageDir, run.id, 0, 12, 'vorticity');
    const thick = await readOmegaPart(t.config.storageDir, run.id, 0, 12, 'thickness');
    let worst = 0;
    for (let i = 0; i < total.length; i++) worst = Math.max(worst, Math.abs(total[i] - vort[i] - thick[i]));
    expect(worst).toBeLessThan(1e-5);
    expect(Math.max(...Array.from(total, Math.abs))).toBeGreaterThan(0.01);
  });

  it('an ensemble NetCDF-4 run is diagnosed member by member, and the ensemble mean is stored', async () => {
    const file = manifest.files.find((f) => f.format === 'netcdf4')!;
    const { run } = await upload(path.join(out, file.path));
    const done = await waitReady(run.id);
    expect(done).toMatchObject({ state: 'ready', isEnsemble: true, members: [0, 1, 2] });
    const members = await t.db.db.select().from(runMembers).where(eq(runMembers.runId, run.id));
    expect(members.map((m) => [m.member, m.state]).sort((a, b) => Number(a[0]) - Number(b[0]))).toEqual([
      [0, 'done'],
      [1, 'done'],
      [2, 'done'],
    ]);
    const step = SMALL.steps[3];
    const parts = await Promise.all([0, 1, 2].map((m) => readOmegaPart(t.config.storageDir, run.id, m, step, 'total')));
    const mean = await readOmegaPart(t.config.storageDir, run.id, 'mean', step, 'total');
    const i = Math.floor(mean.length / 2);
    expect(mean[i]).toBeCloseTo((parts[0][i] + parts[1][i] + parts[2][i]) / 3, 5);
    const member1 = await t.db.db
      .select()
      .from(runDiagnostics)
      .where(and(eq(runDiagnostics.runId, run.id), eq(runDiagnostics.member, 1)));
    expect(member1).toHaveLength(SMALL.steps.length);
    // The demo files carry the model's omega, so the QG-versus-model correlation is reported per level.
    expect(member1[0].correlation).not.toBeNull();
  });
});
