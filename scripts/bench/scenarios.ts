/**
 * `npm run bench:scenarios`: paging and export of the scenario table at desk volume.
 *
 * Seeds, into its own database (DATABASE_URL if set, else a database "liftwise_bench" on the test
 * cluster of scripts/db.mjs, dropped and re-created), 20 regions x 50 members x 50 days = 50,000
 * signal rows for the latest cycle of one ensemble model, and as many for its previous cycle (so
 * the summary has a change to compute). Starts the app on loopback in a child process (so the
 * load generator does not share the server's event loop), signs a trader in through the local
 * identity provider, then:
 *  - paging: CLIENTS concurrent clients each ask for REQUESTS pages of 100 rows (random offsets,
 *    sorted by day, by precipitation descending, by region or by weight), and the script prints
 *    p50/p95/p99 of the response times (whole response read);
 *  - the weighted summary of the whole scope, once;
 *  - exports of all 50,000 rows, .xlsx and CSV, timed to the last byte.
 * Targets (issue 7): paging p95 <= 250 ms with 20 clients; export <= 5 s.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import pg from 'pg';
import { createApp } from '../../server/app.ts';
import { loadConfig } from '../../server/config.ts';
import { createDb, type DbHandle } from '../../server/db/client.ts';
import { fileURLToPath } from 'node:url';
import { applyMigrations } from '../../server/db/migrate.ts';
import { regions, runs, signalRows } from '../../server/db/schema.ts';
import type { JobQueue } from '../../server/jobs/queue.ts';
import { createLogger } from '../../server/logger.ts';
import { CookieJar, send, signInAs } from '../../tests/integration/auth/harness.ts';
import { ensureDefaultCalibrationSet, latestCalibrationSet } from '../../server/services/calibration.ts';

const REGIONS = 20;
const MEMBERS = 50;
const DAYS = 50;
const CLIENTS = Number(process.env.BENCH_CLIENTS ?? 20);
const REQUESTS = Number(process.env.BENCH_REQUESTS ?? 50);
const PAGE = 100;

async function benchDatabaseUrl(): Promise<string> {
  if (process.env.DATABASE_URL) return process.env.DATABASE_URL;
  const db = (await import('../db.mjs')) as { start(name: string): Promise<string> };
  const base = new URL(await db.start('test'));
  const admin = new pg.Client({ connectionString: Object.assign(new URL(base), { pathname: '/postgres' }).toString() });
  await admin.connect();
  await admin.query('DROP DATABASE IF EXISTS liftwise_bench WITH (FORCE)');
  await admin.query('CREATE DATABASE liftwise_bench');
  await admin.end();
  base.pathname = '/liftwise_bench';
  return base.toString();
}

/** Deterministic pseudo-random numbers so every bench run seeds the same values. */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 2 ** 32);
}

async function seed(db: DbHandle): Promise<void> {
  await ensureDefaultCalibrationSet(db.db);
  const cal = await latestCalibrationSet(db.db);
  const square = { type: 'Polygon', coordinates: [[[10, 60], [11, 60], [11, 61], [10, 61], [10, 60]]] };
  await db.db.insert(regions).values(
    Array.from({ length: REGIONS }, (_, i) => ({
      id: `${i % 2 ? 'solar' : 'hydro'}-${String(i).padStart(2, '0')}`,
      name: `${i % 2 ? 'Solar zone' : 'Catchment'} ${i}`,
      kind: i % 2 ? 'solar' : 'hydro',
      properties: {},
      geometry: square,
      areaKm2: 1000 + i,
    })),
  );
  const members = Array.from({ length: MEMBERS }, (_, m) => m + 1);
  const cycles = ['2026-11-30T12:00:00Z', '2026-12-01T00:00:00Z'];
  const random = lcg(42);
  for (const [c, cycle] of cycles.entries()) {
    const [run] = await db.db
      .insert(runs)
      .values({ checksum: `bench-${c}`.padEnd(64, '0'), sizeBytes: 1, fileName: 'bench.grib2', model: 'BENCH-ENS', cycle: new Date(cycle), members, isEnsemble: true, state: 'ready' })
      .returning();
    let batch: (typeof signalRows.$inferInsert)[] = [];
    for (let r = 0; r < REGIONS; r++)
      for (let d = 0; d < DAYS; d++)
        for (const member of members) {
          const precip = 20 * random() ** 3;
          batch.push({
            runId: run.id,
            member,
            regionId: `${r % 2 ? 'solar' : 'hydro'}-${String(r).padStart(2, '0')}`,
            day: new Date(Date.UTC(2026, 11, 2 + d)).toISOString().slice(0, 10),
            precipMm: Math.round(precip * 10) / 10,
            snowShare: Math.round(random() * 100) / 100,
            cloudPct: Math.round(random() * 100),
            ghiKwhM2: r % 2 ? Math.round(random() * 300) / 100 : null,
            solarGwh: r % 2 ? Math.round(random() * 5000) / 1000 : null,
            inflowGwh: r % 2 ? null : Math.round(precip * 300) / 1000,
            calibrationVersion: cal.version,
            codeVersion: 'bench',
            inputChecksum: `bench-${c}`.padEnd(64, '0'),
          });
          if (batch.length === 5000) {
            await db.db.insert(signalRows).values(batch);
            batch = [];
          }
        }
    if (batch.length) await db.db.insert(signalRows).values(batch);
  }
  await db.pool.query('ANALYZE');
}

const percentile = (sorted: number[], p: number) => sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))];

async function timed(jar: CookieJar, url: string): Promise<{ ms: number; bytes: number; status: number }> {
  const started = performance.now();
  const res = await send(jar, url);
  const body = await res.arrayBuffer();
  return { ms: performance.now() - started, bytes: body.byteLength, status: res.status };
}

/** The child: the app alone on a loopback port, no queue workers, no mail. */
async function serve(url: string): Promise<void> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-bench-'));
  const server = http.createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: url, LOG_LEVEL: 'silent', SERVE_CLIENT: 'false', DATA_DIR: dataDir, PUBLIC_URL: baseUrl, AUTH_RATE_LIMIT_PER_MINUTE: '100000' });
  const db = createDb(url, 20);
  const queue: JobQueue = { send: async () => null, boss: null as never, stop: async () => {} };
  server.on('request', createApp({ config, db, logger: createLogger('silent'), queue }));
  process.once('SIGTERM', () => {
    server.closeAllConnections();
    server.close();
    void db.close().finally(() => {
      fs.rmSync(dataDir, { recursive: true, force: true });
      process.exit(0);
    });
  });
  console.log(`listening ${baseUrl}`);
}

function startServer(url: string): Promise<{ child: ChildProcess; baseUrl: string }> {
  const child = spawn(process.execPath, [...process.execArgv, fileURLToPath(import.meta.url), '--serve'], {
    env: { ...process.env, DATABASE_URL: url },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  return new Promise((resolve, reject) => {
    let out = '';
    child.stdout!.on('data', (chunk: Buffer) => {
      out += chunk.toString();
      const m = /listening (http:\/\/\S+)/.exec(out);
      if (m) resolve({ child, baseUrl: m[1] });
    });
    child.once('exit', (code) => reject(new Error(`the app process exited (${code}) before listening`)));
  });
}

async function main(): Promise<void> {
  const url = await benchDatabaseUrl();
  const db = createDb(url, 4);
  let child: ChildProcess | null = null;
  try {
    await applyMigrations(db.db, db.pool);
    const seedStart = performance.now();
    await seed(db);
    console.log(`seeded ${2 * REGIONS * MEMBERS * DAYS} signal rows (2 cycles x ${REGIONS} regions x ${MEMBERS} members x ${DAYS} days) in ${((performance.now() - seedStart) / 1000).toFixed(1)} s`);
    const started = await startServer(url);
    child = started.child;
    await drive(started.baseUrl);
  } finally {
    child?.kill('SIGTERM');
    await db.close();
  }
}

async function drive(baseUrl: string): Promise<void> {
  const jar = new CookieJar();
  {
    // one signed-in trader; the 20 clients share the session as 20 tabs of a desk would
    const signedIn = await signInAs({ baseUrl } as never, jar, 'trader');
    if (signedIn.status >= 400) throw new Error(`sign-in failed: ${signedIn.status}`);

    const first = await timed(jar, `${baseUrl}/api/scenarios?limit=1`);
    const total = (JSON.parse(await (await send(jar, `${baseUrl}/api/scenarios?limit=1`)).text()) as { total: number }).total;
    console.log(`scope: ${total} rows in the latest cycle (first request ${first.ms.toFixed(0)} ms)`);

    const sorts = ['sort=day', 'sort=precipMm&dir=desc', 'sort=region', 'sort=weightPct&dir=desc', 'sort=cloudPct&regions=hydro-00,hydro-02'];
    const random = lcg(1);
    const times: number[] = [];
    let failures = 0;
    const started = performance.now();
    await Promise.all(
      Array.from({ length: CLIENTS }, async () => {
        for (let i = 0; i < REQUESTS; i++) {
          const offset = Math.floor(random() * (total / PAGE)) * PAGE;
          const sort = sorts[Math.floor(random() * sorts.length)];
          const r = await timed(jar, `${baseUrl}/api/scenarios?${sort}&offset=${offset}&limit=${PAGE}`);
          if (r.status !== 200) failures += 1;
          times.push(r.ms);
        }
      }),
    );
    const wall = (performance.now() - started) / 1000;
    times.sort((a, b) => a - b);
    console.log(
      `paging: ${times.length} requests of ${PAGE} rows by ${CLIENTS} concurrent clients in ${wall.toFixed(1)} s (${(times.length / wall).toFixed(0)} req/s), ` +
        `p50 ${percentile(times, 50).toFixed(0)} ms, p95 ${percentile(times, 95).toFixed(0)} ms, p99 ${percentile(times, 99).toFixed(0)} ms, failures ${failures}` +
        `  [target p95 <= 250 ms: ${percentile(times, 95) <= 250 ? 'met' : 'NOT met'}]`,
    );

    const summary = await timed(jar, `${baseUrl}/api/scenarios/summary`);
    console.log(`summary of all ${total} rows (1000 region-days, 7 quantities, change against the previous cycle): ${summary.ms.toFixed(0)} ms, status ${summary.status}`);
    for (const ext of ['xlsx', 'csv']) {
      const r = await timed(jar, `${baseUrl}/api/scenarios/export.${ext}`);
      console.log(`export.${ext} of ${total} rows: ${(r.ms / 1000).toFixed(2)} s, ${(r.bytes / 1e6).toFixed(1)} MB, status ${r.status}  [target <= 5 s: ${r.ms <= 5000 ? 'met' : 'NOT met'}]`);
    }
  }
}

if (process.argv.includes('--serve')) {
  serve(process.env.DATABASE_URL ?? '').catch((err) => {
    console.error(err);
    process.exit(1);
  });
} else {
  main().catch((err) => {
    console.error(err);
    process.exit(1);
  });
}
