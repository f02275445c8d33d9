import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { and, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateDemo, DEFAULT_CONFIG, type Manifest } from '../../scripts/demo/generate.ts';
import { auditEvents, runClusterings, runs } from '../../server/db/schema.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

/** A small synthetic ensemble: coarse grid, three steps, six members, so the chain runs in seconds. */
const SMALL = {
  ...DEFAULT_CONFIG,
  deterministicDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  ensembleDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
  steps: [0, 12, 24],
  members: 6,
  seed: `clusters-test-${process.pid}`,
};

describe('clustering an ensemble run through the API', () => {
  let t: TestApp;
  let met: Client;
  let trader: Client;
  let manifest: Manifest;
  let runId: string;
  const out = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-demo-'));
  const json = { 'Content-Type': 'application/json' };

  beforeAll(async () => {
    ({ manifest } = await generateDemo({ outDir: out, config: SMALL, log: () => {} }));
    t = await startTestApp();
    await t.db.db.delete(runs).where(inArray(runs.checksum, manifest.files.map((f) => f.sha256)));
    met = await signIn(t, 'meteorologist');
    trader = await signIn(t, 'trader');
    const file = manifest.files.find((f) => f.format === 'netcdf4' && (f.members?.length ?? 0) >= 6)!;
    const form = new FormData();
    form.append('file', new Blob([fs.readFileSync(path.join(out, file.path))]), path.basename(file.path));
    const res = await met.fetch('/api/runs', { method: 'POST', body: form });
    expect(res.status).toBe(201);
    runId = (await res.json()).run.id;
    const until = Date.now() + 90_000;
    for (;;) {
      const { run } = await (await met.fetch(`/api/runs/${runId}`)).json();
      if (run.state === 'ready') break;
      if (run.state === 'rejected' || Date.now() > until) throw new Error(`run ${run.state}: ${run.message}`);
      await new Promise((r) => setTimeout(r, 250));
    }
  }, 150_000);
  afterAll(async () => {
    await t.close();
    fs.rmSync(out, { recursive: true, force: true });
  });

  it('stores a clustering of the six members at the middle step, with mean 500 hPa maps, audited', async () => {
    const res = await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 3 }) });
    expect(res.status).toBe(201);
    const { clustering } = await res.json();
    expect(clustering).toMatchObject({ runId, step: 12, k: 3, seed: 1 });
    const members = clustering.clusters.flatMap((c: { members: number[] }) => c.members).sort((a: number, b: number) => a - b);
    expect(members).toEqual([0, 1, 2, 3, 4, 5]);
    expect(clustering.clusters.map((c: { size: number }) => c.size).reduce((a: number, b: number) => a + b, 0)).toBe(6);
    expect(clustering.silhouette).toBeGreaterThanOrEqual(-1);
    expect(clustering.silhouette).toBeLessThanOrEqual(1);
    expect(clustering.explainedVariance.length).toBeGreaterThan(0);
    const mf = clustering.meanFields;
    expect(mf.units).toBe('gpm');
    expect(mf.fields).toHaveLength(3);
    expect(mf.fields[0]).toHaveLength(mf.lat.length * mf.lon.length);
    // 500 hPa heights lie around 5 km (common practice: 4800 to 6000 gpm at mid-latitudes).
    for (const v of mf.fields.flat()) {
      expect(v).toBeGreaterThan(4600);
      expect(v).toBeLessThan(6100);
    }
    const audit = await t.db.db.select().from(auditEvents).where(and(eq(auditEvents.action, 'clustering.create'), eq(auditEvents.objectId, clustering.id)));
    expect(audit).toHaveLength(1);
  });

  it('the same request returns the same stored clustering (deterministic), and another seed or k is another row', async () => {
    const a = await (await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 3, step: 12 }) })).json();
    const again = await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 3, step: 12, seed: 1 }) });
    expect(again.status).toBe(200);
    const b = await again.json();
    expect(b.clustering.id).toBe(a.clustering.id);
    expect(b.clustering.clusters).toEqual(a.clustering.clusters);
    // Recomputing from scratch (row removed) gives the same partition and score: the method is deterministic.
    await t.db.db.delete(runClusterings).where(eq(runClusterings.id, a.clustering.id));
    const fresh = await (await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 3 }) })).json();
    expect(fresh.clustering.id).not.toBe(a.clustering.id);
    expect(fresh.clustering.clusters).toEqual(a.clustering.clusters);
    expect(fresh.clustering.silhouette).toBeCloseTo(a.clustering.silhouette, 10);
    const k2 = await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 2, step: 24 }) });
    expect(k2.status).toBe(201);
    const list = await (await trader.fetch(`/api/runs/${runId}/clusterings`)).json();
    expect(list.clusterings.map((c: { k: number; step: number }) => `${c.k}@${c.step}`).sort()).toEqual(['2@24', '3@12']);
    const one = await (await trader.fetch(`/api/clusterings/${fresh.clustering.id}`)).json();
    expect(one.clustering.meanFields.fields).toHaveLength(3);
  });

  it('refuses bad requests with clear messages, and traders cannot cluster', async () => {
    const bad = await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 9 }) });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(await bad.json())).toContain('k must be at most 6');
    const noStep = await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 2, step: 7 }) });
    expect(noStep.status).toBe(422);
    expect((await noStep.json()).error.message).toContain('no step 7 h');
    const tooMany = await met.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 6 }) });
    expect(tooMany.status).toBe(422);
    expect((await tooMany.json()).error.message).toMatch(/too few/);
    expect((await trader.fetch(`/api/runs/${runId}/clusterings`, { method: 'POST', headers: json, body: JSON.stringify({ k: 2 }) })).status).toBe(403);
  });
});
