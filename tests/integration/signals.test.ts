/**
 * Regional signals end to end: regions uploaded by an admin, a small synthetic ensemble run
 * processed by the real chain (QG diagnosis in the pool, then the signals deriver), rows read
 * through GET /api/runs/:id/signals; idempotence of the deriver; and the offline `signals`
 * command agreeing with the stored rows on the same files.
 */
import { execFile } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SignalRow } from '@shared/api/signals.ts';
import { generateDemo, DEFAULT_CONFIG, type Manifest } from '../../scripts/demo/generate.ts';
import { runMembers, runs, signalRows } from '../../server/db/schema.ts';
import { openRun } from '../../server/ingest/index.ts';
import type { PipelineDeps } from '../../server/services/pipeline.ts';
import { runFilePath } from '../../server/services/storage.ts';
import { signalsDeriver } from '../../server/services/signals.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

const SMALL = {
  ...DEFAULT_CONFIG,
  deterministicDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  ensembleDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  steps: [0, 6, 12, 18, 24, 30, 36, 42, 48],
  members: 3,
  seed: `signals-test-${process.pid}`,
};

const square = (lon: number, lat: number, d: number) => ({
  type: 'Polygon',
  coordinates: [[[lon, lat], [lon + d, lat], [lon + d, lat + d], [lon, lat + d], [lon, lat]]],
});

/** Two catchments and a solar zone inside the 50-70 N, 6 W-30 E domain, and one region east of it. */
const REGIONS = {
  type: 'FeatureCollection',
  features: [
    { type: 'Feature', properties: { id: 'st-hydro-west', name: 'West test catchment', kind: 'hydro', headM: 400, efficiency: 0.9, runoffCoefficient: 0.7, recessionDays: 20 }, geometry: square(5, 60, 3) },
    { type: 'Feature', properties: { id: 'st-hydro-north', name: 'North test catchment', kind: 'hydro', headM: 250, efficiency: 0.88, runoffCoefficient: 0.6, recessionDays: 30, snowDdfMmPerDayK: 4 }, geometry: square(14, 64, 4) },
    { type: 'Feature', properties: { id: 'st-solar-south', name: 'South test zone', kind: 'solar', capacityMw: 300, tiltDeg: 30, azimuthDeg: 180, lossesPct: 14 }, geometry: square(10, 53, 3) },
    { type: 'Feature', properties: { id: 'st-hydro-east', name: 'Beyond the grid', kind: 'hydro', headM: 100, efficiency: 0.9, runoffCoefficient: 0.5, recessionDays: 10 }, geometry: square(40, 60, 2) },
  ],
};
const INSIDE = ['st-hydro-north', 'st-hydro-west', 'st-solar-south'];

let t: TestApp;
let admin: Client;
let met: Client;
let trader: Client;
let manifest: Manifest;
const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-signals-'));

async function auditCount(action: string): Promise<number> {
  const res = await t.db.pool.query<{ n: number }>('SELECT count(*)::int AS n FROM audit_events WHERE action = $1', [action]);
  return res.rows[0].n;
}

async function putRegions(client: Client, body: unknown): Promise<Response> {
  return client.fetch('/api/regions', { method: 'PUT', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(body) });
}

async function waitReady(id: string) {
  const until = Date.now() + 90_000;
  for (;;) {
    const { run } = await (await met.fetch(`/api/runs/${id}`)).json();
    if (run.state === 'ready' || run.state === 'rejected') return run;
    if (Date.now() > until) throw new Error(`run stuck in ${run.state} at ${run.progress}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

beforeAll(async () => {
  ({ manifest } = await generateDemo({ outDir: out, config: SMALL, log: () => {} }));
  t = await startTestApp();
  await t.db.db.delete(runs).where(inArray(runs.checksum, manifest.files.map((f) => f.sha256)));
  [admin, met, trader] = await Promise.all([signIn(t, 'admin'), signIn(t, 'meteorologist'), signIn(t, 'trader')]);
}, 120_000);

afterAll(async () => {
  await t?.close();
  fs.rmSync(out, { recursive: true, force: true });
});

describe('regions: upload, validation, permissions, audit', () => {
  it('an admin replaces the region set; everyone signed in reads it with areas; the write is audited', async () => {
    const before = await auditCount('regions.replace');
    const res = await putRegions(admin, REGIONS);
    expect(res.status, await res.clone().text()).toBe(200);
    expect(await auditCount('regions.replace')).toBe(before + 1);
    const { regions } = await (await trader.fetch('/api/regions')).json();
    expect(regions.map((r: { id: string }) => r.id).sort()).toEqual([...INSIDE, 'st-hydro-east'].sort());
    const west = regions.find((r: { id: string }) => r.id === 'st-hydro-west');
    // 3 x 3 degrees at 60-63 N: R^2 dlon (sin 63 - sin 60) = 6371^2 * 0.05236 * 0.02502 ~ 53,170 km2
    // (exact spherical area of a latitude-longitude box, Archimedes' hat-box theorem).
    expect(west.areaKm2).toBeCloseTo(6371 ** 2 * (3 * Math.PI / 180) * (Math.sin(63 * Math.PI / 180) - Math.sin(60 * Math.PI / 180)), -1);
    expect(west).toMatchObject({ kind: 'hydro', name: 'West test catchment', properties: { headM: 400 } });
  });

  it('a file with a bad feature is refused with 422 naming the feature, and changes nothing', async () => {
    const before = await auditCount('regions.replace');
    const bad = structuredClone(REGIONS);
    (bad.features[1].properties as Record<string, unknown>).efficiency = 1.5;
    bad.features[2].geometry.coordinates[0].pop(); // ring no longer closed
    const res = await putRegions(admin, { ...bad, features: bad.features.slice(0, 3) });
    expect(res.status).toBe(422);
    const body = await res.json();
    const issues = body.error.details.issues as { featureIndex: number; id: string; message: string }[];
    expect(issues.find((i) => i.featureIndex === 1)).toMatchObject({ id: 'st-hydro-north' });
    expect(issues.find((i) => i.featureIndex === 1)!.message).toMatch(/efficiency/);
    expect(issues.find((i) => i.featureIndex === 2)!.message).toMatch(/not closed/);
    expect(await auditCount('regions.replace')).toBe(before);
    const { regions } = await (await admin.fetch('/api/regions')).json();
    expect(regions).toHaveLength(4);
  });

  it('a trader can neither replace regions nor create calibration sets', async () => {
    expect((await putRegions(trader, REGIONS)).status).toBe(403);
    const res = await trader.fetch('/api/calibration-sets', {
      method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ basedOn: 1, parameters: {} }),
    });
    expect(res.status).toBe(403);
  });
});

describe('signals of a processed run', () => {
  let runId: string;
  let file: string;

  beforeAll(async () => {
    const entry = manifest.files.find((f) => f.format === 'netcdf4' && f.cycle === '2026-12-01T00:00:00Z')!;
    file = path.join(out, entry.path);
    const form = new FormData();
    form.append('file', new Blob([fs.readFileSync(file)]), path.basename(file));
    const res = await met.fetch('/api/runs', { method: 'POST', body: form });
    expect(res.status).toBe(201);
    runId = (await res.json()).run.id;
    expect((await waitReady(runId)).state).toBe('ready');
  }, 120_000);

  it('produces a row for every region inside the grid, day and member, with sane values', async () => {
    const { rows } = (await (await trader.fetch(`/api/runs/${runId}/signals`)).json()) as { rows: SignalRow[] };
    // 48 h from 00 UTC: two whole UTC days, the 48 h step closes the second.
    const days = ['2026-12-01', '2026-12-02'];
    expect(rows).toHaveLength(3 * INSIDE.length * days.length);
    for (const member of [0, 1, 2]) for (const region of INSIDE) for (const day of days) {
      const row = rows.find((r) => r.member === member && r.regionId === region && r.day === day);
      expect(row, `${member} ${region} ${day}`).toBeDefined();
      expect(row!.hoursCovered).toBe(24);
      expect(row!.precipMm!).toBeGreaterThanOrEqual(0);
      expect(row!.cloudPct!).toBeGreaterThanOrEqual(0);
      expect(row!.cloudPct!).toBeLessThanOrEqual(100);
      expect(row!.snowShare!).toBeGreaterThanOrEqual(0);
      expect(row!.snowShare!).toBeLessThanOrEqual(1);
      expect(row!.modelPrecipMm).not.toBeNull(); // the demo files carry tp and tcc
      expect(row!.modelCloudPct).not.toBeNull();
      if (region.startsWith('st-solar')) {
        // 53-56 N in early December is daylit for about 7 hours (common practice, from memory).
        expect(row!.solarGwh!).toBeGreaterThan(0);
        expect(row!.ghiKwhM2!).toBeGreaterThan(0);
        expect(row!.inflowGwh).toBeNull();
      } else {
        expect(row!.inflowGwh!).toBeGreaterThanOrEqual(0);
        expect(row!.solarGwh).toBeNull();
      }
      expect(row!.inputChecksum).toMatch(/^[0-9a-f]{64}$/);
      expect(row!.codeVersion).toBe(t.config.codeVersion);
    }
    // Somewhere in the wave the QG ascent makes precipitation and the inflow follows.
    expect(Math.max(...rows.map((r) => r.precipMm ?? 0))).toBeGreaterThan(0.1);
    expect(Math.max(...rows.map((r) => r.inflowGwh ?? 0))).toBeGreaterThan(0);
    const member1 = (await (await trader.fetch(`/api/runs/${runId}/signals?member=1`)).json()).rows as SignalRow[];
    expect(member1).toHaveLength(INSIDE.length * days.length);
    expect(new Set(member1.map((r) => r.member))).toEqual(new Set([1]));
  });

  it('names the region outside the grid in each member message, without failing the member', async () => {
    const members = await t.db.db.select().from(runMembers).where(eq(runMembers.runId, runId));
    expect(members).toHaveLength(3);
    for (const m of members) {
      expect(m.state).toBe('done');
      expect(m.message).toMatch(/st-hydro-east.*outside the grid/);
    }
  });

  it('running the deriver again replaces the rows, never duplicates them', async () => {
    const before = await t.db.db.select().from(signalRows).where(and(eq(signalRows.runId, runId), eq(signalRows.member, 2)));
    const [run] = await t.db.db.select().from(runs).where(eq(runs.id, runId));
    const reader = await openRun(runFilePath(t.config.storageDir, run.checksum));
    try {
      const deps = { db: t.db, config: t.config } as unknown as PipelineDeps;
      await signalsDeriver({ deps, run, member: 2, reader });
      await signalsDeriver({ deps, run, member: 2, reader });
    } finally {
      await reader.close();
    }
    const after = await t.db.db.select().from(signalRows).where(and(eq(signalRows.runId, runId), eq(signalRows.member, 2)));
    expect(after).toHaveLength(before.length);
    const key = (r: typeof before[number]) => `${r.regionId} ${r.day}`;
    for (const r of after) {
      const old = before.find((b) => key(b) === key(r))!;
      expect(r.precipMm).toBe(old.precipMm);
      expect(r.inflowGwh).toBe(old.inflowGwh);
    }
  });

  it('the offline signals command gives the stored numbers for the same files', async () => {
    const regionsFile = path.join(out, 'test-regions.geojson');
    fs.writeFileSync(regionsFile, JSON.stringify(REGIONS));
    const stored = (await (await met.fetch(`/api/runs/${runId}/signals?member=1`)).json()).rows as SignalRow[];
    const { sets } = await (await met.fetch('/api/calibration-sets')).json();
    const used = sets.find((s: { version: number }) => s.version === stored[0].calibrationVersion);
    const calFile = path.join(out, 'calibration.json');
    fs.writeFileSync(calFile, JSON.stringify(used));
    // Asynchronously: the app under test runs in this process and must keep serving meanwhile.
    const cli = await promisify(execFile)(
      process.execPath,
      ['--import', 'tsx', 'server/cli/liftwise.ts', 'signals', file, '--regions', regionsFile, '--calibration', calFile, '--member', '1', '--json'],
      { cwd: path.resolve(import.meta.dirname, '../..'), encoding: 'utf8', maxBuffer: 16 * 1024 * 1024 },
    );
    expect(cli.stderr).toMatch(/st-hydro-east/);
    const rows = JSON.parse(cli.stdout) as Record<string, number | string | null>[];
    expect(rows).toHaveLength(stored.length);
    for (const s of stored) {
      const c = rows.find((r) => r.region === s.regionId && r.day === s.day)!;
      expect(c).toBeDefined();
      expect(Object.keys(c)).toEqual(expect.arrayContaining(['region', 'day', 'precipMm', 'snowShare', 'cloudPct', 'ghiKwhM2', 'solarGwh', 'inflowGwh']));
      // The table keeps float4 (real): agreement to its precision.
      for (const k of ['precipMm', 'snowShare', 'cloudPct', 'ghiKwhM2', 'solarGwh', 'inflowGwh', 'modelPrecipMm', 'modelCloudPct'] as const) {
        if (s[k] === null) expect(c[k], k).toBeNull();
        else expect(Math.abs((c[k] as number) - s[k]!), `${s.regionId} ${s.day} ${k}`).toBeLessThanOrEqual(1e-6 * Math.max(1, Math.abs(s[k]!)));
      }
    }
  });
});

describe('calibration sets', () => {
  it('version 1 is seeded; a meteorologist creates a new version from a partial set; audited; bad sets get 422', async () => {
    const { sets } = await (await trader.fetch('/api/calibration-sets')).json();
    const first = sets.find((s: { version: number }) => s.version === 1);
    expect(first.parameters.precipEfficiency).toBe(0.8);
    const latest = Math.max(...sets.map((s: { version: number }) => s.version));
    const before = await auditCount('calibration_set.create');
    const res = await met.fetch('/api/calibration-sets', {
      method: 'POST', headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ basedOn: 1, note: 'lower efficiency for the west', parameters: { precipEfficiency: 0.6 } }),
    });
    expect(res.status, await res.clone().text()).toBe(201);
    const { set } = await res.json();
    expect(set).toMatchObject({ version: latest + 1, basedOn: 1, note: 'lower efficiency for the west' });
    expect(set.parameters).toEqual({ ...first.parameters, precipEfficiency: 0.6 });
    expect(await auditCount('calibration_set.create')).toBe(before + 1);

    const bad = await met.fetch('/api/calibration-sets', {
      method: 'POST', headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ basedOn: 1, parameters: { snowAllBelowC: 3 } }),
    });
    expect(bad.status).toBe(422);
    expect((await bad.json()).error.message).toMatch(/snowAllBelowC must be below rainAllAboveC/);
    expect(await auditCount('calibration_set.create')).toBe(before + 1);
    // Version 1 itself is unchanged (there is no edit).
    const again = (await (await met.fetch('/api/calibration-sets')).json()).sets.find((s: { version: number }) => s.version === 1);
    expect(again.parameters).toEqual(first.parameters);
  });
});
