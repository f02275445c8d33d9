/**
 * GET /api/scenarios and /api/scenarios/summary against a hand-made set (scenarios-fixture.ts):
 * scope, filters, sorting and paging, anomalies, weights (equal per run, then the latest published
 * regime call), weighted percentiles worked by hand and the change against the previous cycle;
 * roles; audited exports; saved views.
 */
import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ScenarioPage, ScenarioSummary } from '@shared/api/scenarios.ts';
import { regimeCalls, runClusterings } from '../../server/db/schema.ts';
import { C0, DAY1, DAY2, seedScenarioFixture, type Fixture } from './scenarios-fixture.ts';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

let t: TestApp;
let f: Fixture;
let trader: Client;
let risk: Client;
let met: Client;
let clusteringId: string;

async function page(client: Client, query: string): Promise<ScenarioPage> {
  const res = await client.fetch(`/api/scenarios?${query}`);
  expect(res.status, await res.clone().text()).toBe(200);
  return (await res.json()) as ScenarioPage;
}

async function summary(client: Client, query: string): Promise<ScenarioSummary> {
  const res = await client.fetch(`/api/scenarios/summary?${query}`);
  expect(res.status, await res.clone().text()).toBe(200);
  return (await res.json()) as ScenarioSummary;
}

const close = (a: number | null, b: number) => expect(a).toBeCloseTo(b, 5);

beforeAll(async () => {
  t = await startTestApp({}, { workers: false });
  f = await seedScenarioFixture(t.db.db);
  [trader, risk, met] = await Promise.all([signIn(t, 'trader'), signIn(t, 'risk'), signIn(t, 'meteorologist')]);
});
afterAll(async () => {
  await t?.close();
});

describe('scenario rows', () => {
  it('default scope: the latest cycle of each model that has signal rows', async () => {
    const p = await page(trader, `regions=${f.regionH},${f.regionS}&limit=100`);
    expect(p.total).toBe(16); // (3 E members + 1 D) x 2 regions x 2 days
    const ids = p.runs.map((r) => r.id);
    expect(ids).toEqual(expect.arrayContaining([f.runE1, f.runD1]));
    expect(ids).not.toContain(f.runE0); // an earlier cycle
    expect(ids).not.toContain(f.runLater); // a later cycle with no signal rows yet
    expect(new Set(p.rows.map((r) => r.runId))).toEqual(new Set([f.runE1, f.runD1]));
  });

  it('sorts by a quantity on the server and pages without repeats', async () => {
    const q = `regions=${f.regionH}&from=${DAY1}&to=${DAY1}&sort=precipMm&dir=desc`;
    const all = await page(trader, `${q}&limit=10`);
    expect(all.rows.map((r) => r.precipMm)).toEqual([10, 7, 4, 1]);
    expect(all.rows.map((r) => r.member)).toEqual([3, 0, 2, 1]);
    const middle = await page(trader, `${q}&offset=1&limit=2`);
    expect(middle.total).toBe(4);
    expect(middle.rows.map((r) => r.precipMm)).toEqual([7, 4]);
    const byMember = await page(trader, `regions=${f.regionH}&from=${DAY1}&to=${DAY1}&model=${f.modelE}&sort=member&dir=asc`);
    expect(byMember.rows.map((r) => r.member)).toEqual([1, 2, 3]);
  });

  it('anomaly = precipitation minus the monthly climatology scaled to the hours covered; none without climatology', async () => {
    const p = await page(trader, `regions=${f.regionH},${f.regionS}&model=${f.modelE}&members=1,2&sort=day&limit=100`);
    const find = (region: string, day: string, member: number) => p.rows.find((r) => r.regionId === region && r.day === day && r.member === member)!;
    close(find(f.regionH, DAY1, 1).anomalyMm, 1 - 2);
    close(find(f.regionH, DAY2, 1).anomalyMm, 0 - 2 * (12 / 24)); // a 12-hour day
    close(find(f.regionH, DAY2, 2).anomalyMm, 2 - 2);
    expect(find(f.regionS, DAY1, 1).anomalyMm).toBeNull();
  });

  it('filters: model, cycle, members, column filters, quick filter, kind', async () => {
    const both = `regions=${f.regionH},${f.regionS}`;
    expect((await page(trader, `${both}&model=${f.modelE}`)).total).toBe(12);
    const previous = await page(trader, `${both}&model=${f.modelE}&cycle=${encodeURIComponent(C0)}`);
    expect(previous.total).toBe(12);
    expect(new Set(previous.rows.map((r) => r.runId))).toEqual(new Set([f.runE0]));
    expect((await page(trader, `${both}&model=${f.modelE}&members=1,2`)).total).toBe(8);
    // H rows with precipitation >= 4 mm: E1 DAY1 4 and 10, D1 DAY1 7 and DAY2 4
    const wet = await page(trader, `regions=${f.regionH}&nf=precipMm.gte.4&sort=precipMm`);
    expect(wet.rows.map((r) => r.precipMm)).toEqual([4, 4, 7, 10]);
    const solar = await page(trader, `${both}&q=bravo`);
    expect(solar.total).toBe(8);
    expect(solar.rows.every((r) => r.regionId === f.regionS)).toBe(true);
    expect((await page(trader, `${both}&kind=hydro`)).total).toBe(8);
  });

  it('refuses a sort column outside the list, a reversed day range and a malformed number filter', async () => {
    for (const q of ['sort=checksum', `from=${DAY2}&to=${DAY1}`, 'nf=precipMm.like.3', 'nf=inputChecksum.eq.1', 'limit=5000']) {
      const res = await trader.fetch(`/api/scenarios?${q}`);
      expect(res.status, q).toBe(400);
    }
  });

  it('the cluster filter keeps the members of the chosen clusters of that clustering run', async () => {
    const [clustering] = await t.db.db
      .insert(runClusterings)
      .values({
        runId: f.runE1,
        step: 24,
        k: 2,
        seed: 1,
        silhouette: 0.5,
        explainedVariance: [0.6, 0.2],
        clusters: [{ id: 0, members: [1, 2], size: 2 }, { id: 1, members: [3], size: 1 }],
        meanFields: [],
      })
      .returning();
    clusteringId = clustering.id;
    const p = await page(trader, `regions=${f.regionH},${f.regionS}&clustering=${clustering.id}&clusters=1`);
    expect(p.total).toBe(4);
    expect(p.rows.every((r) => r.runId === f.runE1 && r.member === 3)).toBe(true);
  });

  it('equal weights per run: each run carries the same total, shared by its members', async () => {
    const p = await page(trader, `runs=${f.runE1},${f.runD1}&regions=${f.regionH}&from=${DAY1}&to=${DAY1}&sort=member`);
    expect(p.weights.kind).toBe('equal');
    const byMember = Object.fromEntries(p.rows.map((r) => [r.member, r.weightPct]));
    close(byMember[0], 50);
    for (const m of [1, 2, 3]) close(byMember[m], 50 / 3);
    const sorted = await page(trader, `runs=${f.runE1},${f.runD1}&regions=${f.regionH}&from=${DAY1}&to=${DAY1}&sort=weightPct&dir=desc`);
    expect(sorted.rows[0].member).toBe(0);
  });
});

describe('summary: weighted percentiles and change against the previous cycle', () => {
  it('hand-worked unequal weights (E members 1/6 each, D 1/2) and the change of P50', async () => {
    // H, DAY1: values 1, 4, 10 (E, weight 1/6 each) and 7 (D, weight 1/2). Sorted 1, 4, 7, 10 with
    // weights 1/6, 1/6, 1/2, 1/6: centres 1/12, 3/12, 7/12, 11/12 -> positions 0, 0.2, 0.6, 1
    // (statistics.ts definition). P10 = 1 + 0.5*3 = 2.5; P50 = 4 + 0.75*3 = 6.25; P90 = 7 + 0.75*3 = 9.25.
    // Previous cycle: only model E has one (C0): 2, 3, 5 with equal weights, P50 = 3; change 3.25.
    const s = await summary(trader, `regions=${f.regionH}`);
    const previousIds = s.previousRuns.map((r) => r.id);
    expect(previousIds).toContain(f.runE0);
    expect(previousIds).not.toContain(f.runE1);
    const day1 = s.rows.find((r) => r.day === DAY1)!;
    expect(day1.scenarios).toBe(4);
    close(day1.stats.precipMm.p10, 2.5);
    close(day1.stats.precipMm.p50, 6.25);
    close(day1.stats.precipMm.p90, 9.25);
    close(day1.stats.precipMm.previousP50, 3);
    close(day1.stats.precipMm.changeP50, 3.25);
    close(day1.stats.inflowGwh.p50, 3 * 6.25); // inflow is 3 x precipitation in the fixture
    close(day1.stats.anomalyMm.p50, 6.25 - 2);
    expect(day1.stats.solarGwh.p50).toBeNull();
    // H, DAY2: 0, 2, 2 (1/6 each) and 4 (1/2): positions 0, 0.25, 0.5, 1 -> P50 = 2; previous 1, 1, 1 -> 1
    const day2 = s.rows.find((r) => r.day === DAY2)!;
    close(day2.stats.precipMm.p50, 2);
    close(day2.stats.precipMm.changeP50, 1);
  });

  it('one model: equal weights are the type-7 median; a model with no previous cycle has no change', async () => {
    const e = await summary(trader, `regions=${f.regionH}&model=${f.modelE}&from=${DAY1}&to=${DAY1}`);
    close(e.rows[0].stats.precipMm.p50, 4);
    close(e.rows[0].stats.precipMm.previousP50, 3);
    close(e.rows[0].stats.precipMm.changeP50, 1);
    close(e.overall.precipMm.p50, 4);
    const d = await summary(trader, `regions=${f.regionH}&model=${f.modelD}&from=${DAY1}&to=${DAY1}`);
    close(d.rows[0].stats.precipMm.p50, 7);
    expect(d.rows[0].stats.precipMm.previousP50).toBeNull();
    expect(d.rows[0].stats.precipMm.changeP50).toBeNull();
  });

  it('default weights follow the latest published regime call', async () => {
    const base = {
      seriesId: randomUUID(),
      validFrom: DAY1,
      validTo: DAY2,
      regimes: [],
      confidence: 'medium',
      state: 'published' as const,
    };
    await t.db.db.insert(regimeCalls).values([
      // an older published call and a newer draft: neither counts
      { ...base, version: 1, weights: { basis: 'member', weights: [{ key: `${f.runE1}:3`, pct: 100 }] }, publishedAt: new Date(Date.now() - 3_600_000) },
      { ...base, version: 2, weights: { basis: 'member', weights: [{ key: `${f.runE1}:1`, pct: 50 }, { key: `${f.runE1}:2`, pct: 50 }] }, publishedAt: new Date() },
      { ...base, version: 3, state: 'draft', weights: { basis: 'member', weights: [{ key: `${f.runE1}:3`, pct: 100 }] }, publishedAt: null },
    ]);
    const p = await page(trader, `runs=${f.runE1},${f.runD1}&regions=${f.regionH}&from=${DAY1}&to=${DAY1}&sort=member`);
    expect(p.weights.kind).toBe('call');
    const w = Object.fromEntries(p.rows.map((r) => [r.member, r.weightPct]));
    close(w[1], 25);
    close(w[2], 25);
    close(w[3], 0); // named run, member left out
    close(w[0], 50); // D is not named: equal per run
    // H, DAY1: 1 (1/4), 4 (1/4), 7 (1/2); 10 has weight 0. Centres 1/8, 3/8, 3/4 -> positions 0, 0.4, 1;
    // P50 = 4 + (0.1/0.6)*3 = 4.5
    const s = await summary(trader, `regions=${f.regionH}&from=${DAY1}&to=${DAY1}`);
    close(s.rows[0].stats.precipMm.p50, 4.5);
  });

  it('a call weighting clusters shares each cluster\'s weight equally among its members', async () => {
    expect(clusteringId).toBeTruthy();
    await t.db.db.insert(regimeCalls).values({
      seriesId: randomUUID(),
      version: 1,
      state: 'published',
      validFrom: DAY1,
      validTo: DAY2,
      regimes: [],
      confidence: 'high',
      // clusters of the E1 clustering: 0 = members 1 and 2, 1 = member 3
      weights: { basis: 'cluster', clusteringId, weights: [{ key: '0', pct: 80 }, { key: '1', pct: 20 }] },
      publishedAt: new Date(Date.now() + 1000),
    });
    const p = await page(trader, `runs=${f.runE1},${f.runD1}&regions=${f.regionH}&from=${DAY1}&to=${DAY1}&sort=member`);
    expect(p.weights.kind).toBe('call');
    const w = Object.fromEntries(p.rows.map((r) => [r.member, r.weightPct]));
    // E1 carries 1 (0.4, 0.4, 0.2), D1 carries 1: of 2 in all
    close(w[1], 20);
    close(w[2], 20);
    close(w[3], 10);
    close(w[0], 50);
  });
});

describe('roles and audit', () => {
  it('a trader reads scenarios but cannot upload a run; a meteorologist reads but cannot export', async () => {
    expect((await trader.fetch('/api/scenarios?limit=1')).status).toBe(200);
    const form = new FormData();
    form.append('file', new Blob(['GRIB']), 'x.grib2');
    expect((await trader.fetch('/api/runs', { method: 'POST', body: form })).status).toBe(403);
    expect((await met.fetch(`/api/scenarios/summary?regions=${f.regionH}`)).status).toBe(200);
    expect((await met.fetch(`/api/scenarios/export.csv?regions=${f.regionH}`)).status).toBe(403);
  });

  it('risk exports CSV with a header line, and every export leaves an audit event', async () => {
    const before = await t.db.pool.query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE action = 'scenarios.export'`);
    const res = await risk.fetch(`/api/scenarios/export.csv?regions=${f.regionH}&model=${f.modelE}&sort=precipMm&dir=desc`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/text\/csv/);
    const lines = (await res.text()).trim().split('\r\n');
    expect(lines[0]).toMatch(/^Region id,Region,Kind,Day \(UTC\),Model,Cycle \(UTC\),Run id,Member,Precipitation \(mm\)/);
    const data = lines.slice(1).filter((l) => !l.startsWith('#'));
    expect(data).toHaveLength(6);
    expect(data.map((l) => Number(l.split(',')[8]))).toEqual([10, 4, 2, 2, 1, 0]);
    expect(lines.filter((l) => l.startsWith('#')).length).toBeGreaterThanOrEqual(4);
    const xlsx = await trader.fetch(`/api/scenarios/export.xlsx?regions=${f.regionH}`);
    expect(xlsx.status).toBe(200);
    await xlsx.arrayBuffer();
    const after = await t.db.pool.query<{ actor_label: string; object_id: string; detail: { rows: number; runIds: string[] } }>(
      `SELECT actor_label, object_id, detail FROM audit_events WHERE action = 'scenarios.export' ORDER BY id DESC LIMIT 2`,
    );
    const count = await t.db.pool.query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE action = 'scenarios.export'`);
    expect(count.rows[0].n - before.rows[0].n).toBe(2);
    expect(after.rows[1]).toMatchObject({ actor_label: 'Maren Solvik', object_id: 'csv' });
    expect(after.rows[1].detail.rows).toBe(6);
    expect(after.rows[1].detail.runIds).toEqual([f.runE1]);
    expect(after.rows[0]).toMatchObject({ actor_label: 'Tomas Brekke', object_id: 'xlsx' });
  });

  it('saved views are personal, audited and deleted only by their owner', async () => {
    const state = { query: `regions=${f.regionH}&sort=precipMm&dir=desc`, columnState: [{ colId: 'precipMm', sort: 'desc' }], filterModel: {} };
    const created = await trader.fetch('/api/scenario-views', { method: 'POST', body: JSON.stringify({ name: 'Wet hydro', state }), headers: { 'Content-Type': 'application/json' } });
    expect(created.status).toBe(201);
    const { view } = await created.json();
    expect(view.state).toEqual(state);
    const mine = await (await trader.fetch('/api/scenario-views')).json();
    expect(mine.views.map((v: { id: string }) => v.id)).toContain(view.id);
    const theirs = await (await risk.fetch('/api/scenario-views')).json();
    expect(theirs.views.map((v: { id: string }) => v.id)).not.toContain(view.id);
    expect((await risk.fetch(`/api/scenario-views/${view.id}`, { method: 'DELETE' })).status).toBe(404);
    expect((await trader.fetch(`/api/scenario-views/${view.id}`, { method: 'DELETE' })).status).toBe(204);
    const audit = await t.db.pool.query(`SELECT action FROM audit_events WHERE object_id = $1 ORDER BY id`, [view.id]);
    expect(audit.rows.map((r) => r.action)).toEqual(['scenario_view.create', 'scenario_view.delete']);
    const bad = await trader.fetch('/api/scenario-views', { method: 'POST', body: JSON.stringify({ name: '', state }), headers: { 'Content-Type': 'application/json' } });
    expect(bad.status).toBe(400);
  });
});


