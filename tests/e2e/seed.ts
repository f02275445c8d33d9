/**
 * Seeding through the API for the browser tests whose point is a later screen: the regions
 * (the demo's Nordvale set, clipped to the small test domain) and a small synthetic ensemble run
 * uploaded by the meteorologist and processed by the real chain.
 */
import fs from 'node:fs';
import path from 'node:path';
import { inArray } from 'drizzle-orm';
import { DEFAULT_CONFIG, generateDemo, type DemoConfig, type ManifestFile } from '../../scripts/demo/generate.ts';
import { NORDVALE_REGIONS } from '../../scripts/demo/market.ts';
import { runs } from '../../server/db/schema.ts';
import { signIn, type Client, type TestApp } from '../integration/support.ts';

const DOMAIN = { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 };

export function smallConfig(seed: string, members = 4): DemoConfig {
  return { ...DEFAULT_CONFIG, deterministicDomain: DOMAIN, ensembleDomain: DOMAIN, steps: [0, 6, 12, 18, 24, 30], members, seed };
}

/** The Nordvale regions whose every vertex lies inside the small domain. */
export function clippedRegions(): typeof NORDVALE_REGIONS {
  const inside = (lon: number, lat: number) => lon >= DOMAIN.lonWest && lon <= DOMAIN.lonEast && lat >= DOMAIN.latSouth && lat <= DOMAIN.latNorth;
  return { ...NORDVALE_REGIONS, features: NORDVALE_REGIONS.features.filter((f) => f.geometry.coordinates.every((ring) => ring.every(([lon, lat]) => inside(lon!, lat!)))) };
}

export async function putRegions(t: TestApp): Promise<typeof NORDVALE_REGIONS> {
  const admin = await signIn(t, 'admin');
  const regions = clippedRegions();
  const res = await admin.fetch('/api/regions', { method: 'PUT', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify(regions) });
  if (res.status !== 200) throw new Error(`regions refused: ${res.status} ${await res.text()}`);
  return regions;
}

async function waitReady(met: Client, id: string, timeoutMs: number): Promise<{ model: string }> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const { run } = await (await met.fetch(`/api/runs/${id}`)).json();
    if (run.state === 'ready') return run;
    if (run.state === 'rejected' || Date.now() > until) throw new Error(`run ${id} ${run.state}: ${run.message ?? run.progress}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

/** Generates the small demo in `outDir`, uploads its ensemble run and waits for it to be ready. */
export async function processedEnsemble(t: TestApp, outDir: string, seed: string): Promise<{ runId: string; model: string; file: ManifestFile; met: Client }> {
  const { manifest } = await generateDemo({ outDir, config: smallConfig(seed), log: () => {} });
  // A run with the same checksum from an earlier file of this database would be refused as a duplicate.
  await t.db.db.delete(runs).where(inArray(runs.checksum, manifest.files.map((f) => f.sha256)));
  const file = manifest.files.find((f) => f.format === 'netcdf4' && (f.members?.length ?? 0) > 1);
  if (!file) throw new Error('the small demo has no ensemble file');
  const met = await signIn(t, 'meteorologist');
  const form = new FormData();
  form.append('file', new Blob([fs.readFileSync(path.join(outDir, file.path))]), path.basename(file.path));
  const res = await met.fetch('/api/runs', { method: 'POST', body: form });
  if (res.status !== 201) throw new Error(`upload refused: ${res.status} ${await res.text()}`);
  const runId = (await res.json()).run.id as string;
  const { model } = await waitReady(met, runId, 90_000);
  return { runId, model, file, met };
}
