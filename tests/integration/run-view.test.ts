import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { diagnosticsSchema, omegaMapSchema, sectionSchema } from '@shared/api/run-view.ts';
import { generateDemo, DEFAULT_CONFIG, type Manifest } from '../../scripts/demo/generate.ts';
import { runs } from '../../server/db/schema.ts';
import { readOmegaPart } from '../../server/services/derived-store.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

/** A small synthetic market (coarse grid, few steps, two members) so the chain runs in seconds. */
const SMALL = {
  ...DEFAULT_CONFIG,
  deterministicDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  ensembleDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  steps: [0, 6, 12],
  members: 2,
  seed: `run-view-test-${process.pid}`,
};

let t: TestApp;
let met: Client;
let trader: Client;
let manifest: Manifest;
let detId: string;
let ensId: string;
const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-runview-'));

async function upload(file: string): Promise<string> {
  const form = new FormData();
  form.append('file', new Blob([fs.readFileSync(file)]), path.basename(file));
  const res = await met.fetch('/api/runs', { method: 'POST', body: form });
  expect(res.status).toBe(201);
  return (await res.json()).run.id;
}

async function waitReady(id: string) {
  const until = Date.now() + 90_000;
  for (;;) {
    const { run } = await (await met.fetch(`/api/runs/${id}`)).json();
    if (run.state === 'ready' || run.state === 'rejected') return run;
    if (Date.now() > until) throw new Error(`run stuck in ${run.state} at ${run.progress}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- the answers are parsed with the shared schemas where it matters
async function getJson(client: Client, url: string): Promise<{ status: number; body: Record<string, any> }> {
  const res = await client.fetch(url);
  return { status: res.status, body: await res.json() };
}

beforeAll(async () => {
  ({ manifest } = await generateDemo({ outDir: out, config: SMALL, log: () => {} }));
  t = await startTestApp();
  await t.db.db.delete(runs).where(inArray(runs.checksum, manifest.files.filter((f) => f.sha256).map((f) => f.sha256)));
  met = await signIn(t, 'meteorologist');
  trader = await signIn(t, 'trader');
  const grib = manifest.files.find((f) => f.format === 'grib2')!;
  const nc = manifest.files.find((f) => f.format === 'netcdf4')!;
  detId = await upload(path.join(out, grib.path));
  ensId = await upload(path.join(out, nc.path));
  expect((await waitReady(detId)).state).toBe('ready');
  expect((await waitReady(ensId)).state).toBe('ready');
}, 180_000);

afterAll(async () => {
  await t?.close();
  fs.rmSync(out, { recursive: true, force: true });
});

describe('GET /api/runs/:id/diagnostics', () => {
  it('lists every step with sigma, omega statistics and residual per level, for any signed-in role', async () => {
    const { status, body } = await getJson(trader, `/api/runs/${detId}/diagnostics?member=0`);
    expect(status).toBe(200);
    const d = diagnosticsSchema.parse(body);
    expect(d.levelsHpa).toEqual(SMALL.levelsHpa);
    expect(d.steps.map((s) => s.step)).toEqual(SMALL.steps);
    // f0 = 2 Omega sin(60°) at the domain centre (SCIENCE.md section 2 constants).
    expect(d.f0).toBeCloseTo(2 * 7.292e-5 * Math.sin((60 * Math.PI) / 180), 7);
    for (const s of d.steps) {
      expect(s.sigma).toHaveLength(SMALL.levelsHpa.length);
      expect(s.omegaMin.every((v, k) => v <= s.omegaMean[k] && s.omegaMean[k] <= s.omegaMax[k])).toBe(true);
      expect(s.residual).toBeLessThan(1e-8);
    }
    expect(d.steps[1].validTime).toBe(new Date(Date.parse(manifest.files.find((f) => f.format === 'grib2')!.cycle!) + 6 * 3600_000).toISOString());
    // The demo files carry the model's omega, so correlations are reported (within -1..1).
    expect(d.steps[1].correlation!.some((c) => c !== null)).toBe(true);
    expect(d.steps[1].correlation!.every((c) => c === null || (c >= -1 && c <= 1))).toBe(true);
  });

  it('member=mean averages the members of an ensemble and is member 0 on a deterministic run', async () => {
    const m0 = diagnosticsSchema.parse((await getJson(met, `/api/runs/${ensId}/diagnostics?member=0`)).body);
    const m1 = diagnosticsSchema.parse((await getJson(met, `/api/runs/${ensId}/diagnostics?member=1`)).body);
    const mean = diagnosticsSchema.parse((await getJson(met, `/api/runs/${ensId}/diagnostics?member=mean`)).body);
    expect(mean.averagedMembers).toEqual([0, 1]);
    expect(mean.steps[2].omegaMax[4]).toBeCloseTo((m0.steps[2].omegaMax[4] + m1.steps[2].omegaMax[4]) / 2, 5);
    expect(mean.steps[2].sigma[3]).toBeCloseTo((m0.steps[2].sigma[3] + m1.steps[2].sigma[3]) / 2, 12);
    const det = await getJson(met, `/api/runs/${detId}/diagnostics`);
    const det0 = await getJson(met, `/api/runs/${detId}/diagnostics?member=0`);
    expect(det.body.steps).toEqual(det0.body.steps);
  });
});

describe('GET /api/runs/:id/omega', () => {
  it('answers the stored Float32 field of the chosen member, step, level and part, lat ascending', async () => {
    const level = 500;
    const { status, body } = await getJson(trader, `/api/runs/${ensId}/omega?member=1&step=6&level=${level}&part=vorticity`);
    expect(status).toBe(200);
    const map = omegaMapSchema.parse(body);
    const k = SMALL.levelsHpa.indexOf(level);
    const stored = await readOmegaPart(t.config.storageDir, ensId, 1, 6, 'vorticity');
    const n = map.lat.length * map.lon.length;
    expect(map.lat.length).toBe(11);
    expect(map.lon.length).toBe(19);
    expect(map.lat[0]).toBe(50);
    expect(map.lon[0]).toBe(-6);
    for (let i = 0; i < n; i += 7) expect(map.values[i]).toBeCloseTo(stored[k * n + i], 6);
    const finite = map.values.filter((v): v is number => v !== null);
    expect(map.min).toBe(Math.min(...finite));
    expect(map.max).toBe(Math.max(...finite));
    expect(map.units).toBe('Pa s-1');
  });

  it('the mean map is the stored ensemble mean', async () => {
    const map = omegaMapSchema.parse((await getJson(met, `/api/runs/${ensId}/omega?member=mean&step=12&level=700`)).body);
    const stored = await readOmegaPart(t.config.storageDir, ensId, 'mean', 12, 'total');
    const k = SMALL.levelsHpa.indexOf(700);
    const n = map.values.length;
    const mid = Math.floor(n / 2) + 3;
    expect(map.values[mid]).toBeCloseTo(stored[k * n + mid], 6);
  });

  it('refuses with plain words: unknown step lists the steps, unknown level lists the levels', async () => {
    const step = await getJson(met, `/api/runs/${detId}/omega?step=7&level=500`);
    expect(step.status).toBe(400);
    expect(step.body.error.message).toBe('step 7 h is not in this run; its steps are 0, 6, 12 h.');
    const level = await getJson(met, `/api/runs/${detId}/omega?step=6&level=550`);
    expect(level.status).toBe(400);
    expect(level.body.error.message).toContain('level 550 hPa is not in this run; its levels are 1000, 925, 850');
    const part = await getJson(met, `/api/runs/${detId}/omega?step=6&level=500&part=magic`);
    expect(part.status).toBe(400);
    expect(part.body.error.message).toContain('part must be one of total, vorticity, thickness, qvector');
    const member = await getJson(met, `/api/runs/${detId}/omega?step=6&level=500&member=3`);
    expect(member.status).toBe(400);
    expect(member.body.error.message).toContain('member 3 is not in this run; its members are 0');
    const missing = await getJson(met, `/api/runs/${detId}/omega?level=500`);
    expect(missing.status).toBe(400);
    expect(missing.body.error.message).toMatch(/^step: /);
    const extra = await getJson(met, `/api/runs/${detId}/omega?step=6&level=500&lvl=3`);
    expect(extra.body.error.message).toContain('unknown query parameter(s): lvl');
    const notUuid = await getJson(met, `/api/runs/nope/omega?step=6&level=500`);
    expect(notUuid.status).toBe(400);
    const absent = await getJson(met, `/api/runs/00000000-0000-4000-8000-000000000000/omega?step=6&level=500`);
    expect(absent.status).toBe(404);
  });

  it('a run that is not ready answers 409 and says so', async () => {
    const [row] = await t.db.db
      .insert(runs)
      .values({ checksum: `pending-${process.pid}-${Date.now()}`, sizeBytes: 1, fileName: 'x.grib2', state: 'diagnosing', progress: 0.4 })
      .returning();
    const res = await getJson(met, `/api/runs/${row.id}/omega?step=6&level=500`);
    expect(res.status).toBe(409);
    expect(res.body.error.message).toContain('not ready yet (state: diagnosing, 40 % done)');
    const diag = await getJson(met, `/api/runs/${row.id}/diagnostics`);
    expect(diag.status).toBe(409);
  });

  it('signed out: 401', async () => {
    const res = await fetch(`${t.baseUrl}/api/runs/${detId}/omega?step=6&level=500`);
    expect(res.status).toBe(401);
    const res2 = await fetch(`${t.baseUrl}/api/runs/${detId}/diagnostics`);
    expect(res2.status).toBe(401);
    const res3 = await fetch(`${t.baseUrl}/api/runs/${detId}/section?step=6&from=55,0&to=65,20`);
    expect(res3.status).toBe(401);
  });
});

describe('GET /api/runs/:id/section', () => {
  it('at its endpoints equals the map at grid points, on every level', async () => {
    const url = `/api/runs/${detId}/section?member=0&step=12&part=thickness&from=54,2&to=66,24&points=25`;
    const { status, body } = await getJson(trader, url);
    expect(status).toBe(200);
    const s = sectionSchema.parse(body);
    expect(s.path[0]).toEqual({ lat: 54, lon: 2 });
    expect(s.path[24].lat).toBeCloseTo(66, 6);
    expect(s.path[24].lon).toBeCloseTo(24, 6);
    expect(s.values).toHaveLength(SMALL.levelsHpa.length);
    for (const [k, level] of SMALL.levelsHpa.entries()) {
      const map = omegaMapSchema.parse((await getJson(met, `/api/runs/${detId}/omega?member=0&step=12&level=${level}&part=thickness`)).body);
      const at = (lat: number, lon: number) => map.values[map.lat.indexOf(lat) * map.lon.length + map.lon.indexOf(lon)];
      expect(s.values[k][0]).toBeCloseTo(at(54, 2)!, 6);
      expect(s.values[k][24]).toBeCloseTo(at(66, 24)!, 5);
    }
    // Haversine distance 54N 2E -> 66N 24E on a 6371 km sphere (common practice): about 1700 km.
    const total = s.distanceKm[24];
    expect(total).toBeGreaterThan(1600);
    expect(total).toBeLessThan(1800);
    // Great-circle: the path bows poleward of the straight lat/lon line at its middle.
    const straight = sectionSchema.parse((await getJson(met, `${url}&line=straight`)).body);
    expect(s.path[12].lat).toBeGreaterThan(straight.path[12].lat);
  });

  it('a straight section between two grid points, halfway, is the mean of its neighbours (bilinear)', async () => {
    const s = sectionSchema.parse((await getJson(met, `/api/runs/${detId}/section?member=0&step=6&from=60,10&to=60,14&points=3&line=straight`)).body);
    const map = omegaMapSchema.parse((await getJson(met, `/api/runs/${detId}/omega?member=0&step=6&level=500`)).body);
    const k = SMALL.levelsHpa.indexOf(500);
    const row = map.lat.indexOf(60) * map.lon.length;
    expect(s.values[k][1]).toBeCloseTo((map.values[row + map.lon.indexOf(12)]!), 6);
    const half = sectionSchema.parse((await getJson(met, `/api/runs/${detId}/section?member=0&step=6&from=60,10&to=60,12&points=3&line=straight`)).body);
    expect(half.values[k][1]).toBeCloseTo((map.values[row + map.lon.indexOf(10)]! + map.values[row + map.lon.indexOf(12)]!) / 2, 6);
  });

  it('refuses endpoints outside the domain and malformed coordinates', async () => {
    const outside = await getJson(met, `/api/runs/${detId}/section?step=6&from=40,0&to=60,10`);
    expect(outside.status).toBe(400);
    expect(outside.body.error.message).toContain("from (40, 0) lies outside the run's domain: latitude 50 to 70°N, longitude -6 to 30°E");
    const bad = await getJson(met, `/api/runs/${detId}/section?step=6&from=north&to=60,10`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toContain('from: must be "LAT,LON"');
    const points = await getJson(met, `/api/runs/${detId}/section?step=6&from=55,0&to=60,10&points=1`);
    expect(points.body.error.message).toContain('points must be at least 2');
  });
});
