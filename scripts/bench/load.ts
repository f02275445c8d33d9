/**
 * `npm run bench:load`: 50 signed-in clients against the main read routes on loopback.
 *
 * 1. A database of its own (liftwise_bench in the local app cluster, created afresh; or
 *    BENCH_DATABASE_URL), a temporary data folder, and the real server (server/index.ts) in a
 *    child process on a free loopback port, with its in-process workers.
 * 2. A little data: a small synthetic ensemble (scripts/demo generateDemo, coarse grid) uploaded
 *    through POST /api/runs by a meteorologist and processed until ready.
 * 3. BENCH_CLIENTS (default 50) people signed in through the local identity provider (the four
 *    demo roles in turn), each with its own session, each looping over GET /api/runs,
 *    /api/runs/:id, /api/health, /api/me and /api/scenarios (when the server has it) for
 *    BENCH_SECONDS (default 60), bounded by BENCH_MAX_REQUESTS (default 500000) in all.
 * 4. Prints p50 / p95 / p99 latency (ms) and errors per route and overall, and the throughput.
 *
 * BENCH_SERVER_NODE_ARGS adds Node options to the server process only, e.g.
 * "--cpu-prof --cpu-prof-dir=DIR" to see where its time goes.
 *
 * Target (issue 10): no errors and p95 at most 300 ms. Exit code 0 when met, 1 when not, 2 when
 * the bench could not run. The clients share one process and the machine's cores with the
 * server, so the figures include client-side time.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { CookieJar, send, signInAs, type AuthTestApp } from '../../tests/integration/auth/harness.ts';
import { DEFAULT_CONFIG, generateDemo } from '../demo/generate.ts';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
const CLIENTS = Number(process.env.BENCH_CLIENTS ?? 50);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 60);
const MAX_REQUESTS = Number(process.env.BENCH_MAX_REQUESTS ?? 500_000);
const TARGET_P95_MS = 300;
const ROLES = ['meteorologist', 'trader', 'risk', 'admin'] as const;

const log = (line: string) => console.log(`[bench] ${line}`);

function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = net.createServer().listen(0, '127.0.0.1', () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

/** A fresh liftwise_bench database in the local app cluster (or BENCH_DATABASE_URL as given). */
async function benchDatabase(): Promise<string> {
  if (process.env.BENCH_DATABASE_URL) return process.env.BENCH_DATABASE_URL;
  const db = (await import('../db.mjs')) as { start(name: string): Promise<string> };
  const appUrl = new URL(await db.start('app'));
  const admin = new pg.Client({ connectionString: Object.assign(new URL(appUrl), { pathname: '/postgres' }).toString() });
  await admin.connect();
  try {
    await admin.query('DROP DATABASE IF EXISTS liftwise_bench WITH (FORCE)');
    await admin.query('CREATE DATABASE liftwise_bench');
  } finally {
    await admin.end();
  }
  return Object.assign(appUrl, { pathname: '/liftwise_bench' }).toString();
}

async function startServer(databaseUrl: string, dataDir: string): Promise<{ child: ChildProcess; baseUrl: string }> {
  const port = await freePort();
  const baseUrl = `http://127.0.0.1:${port}`;
  const extra = (process.env.BENCH_SERVER_NODE_ARGS ?? '').split(/\s+/).filter(Boolean);
  const child = spawn(process.execPath, [...extra, '--import', 'tsx', 'server/index.ts'], {
    cwd: root,
    env: {
      ...process.env,
      NODE_ENV: 'development',
      DATABASE_URL: databaseUrl,
      DATA_DIR: dataDir,
      HOST: '127.0.0.1',
      PORT: String(port),
      PUBLIC_URL: baseUrl,
      SERVE_CLIENT: 'false',
      LOG_LEVEL: 'warn',
      AUTH_RATE_LIMIT_PER_MINUTE: '100000',
      MAIL_CATCHER_PORT: String(await freePort()),
    },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  await new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error('the server did not start within 60 s')), 60_000);
    child.stdout!.on('data', (c: Buffer) => {
      if (c.toString().includes('serving on')) {
        clearTimeout(timer);
        resolve();
      }
    });
    child.once('exit', (code) => reject(new Error(`the server exited with ${code} before listening`)));
  });
  return { child, baseUrl };
}

interface Session {
  jar: CookieJar;
  csrf: string;
}

async function signIn(baseUrl: string, person: string): Promise<Session> {
  const jar = new CookieJar();
  const acs = await signInAs({ baseUrl } as AuthTestApp, jar, person);
  if (acs.status >= 400) throw new Error(`sign-in as ${person} failed: ${acs.status}`);
  const me = (await (await send(jar, `${baseUrl}/api/me`)).json()) as { csrfToken: string };
  return { jar, csrf: me.csrfToken };
}

/** Uploads a small synthetic ensemble and waits until it is processed. */
async function seed(baseUrl: string, met: Session, workDir: string): Promise<string> {
  const config = {
    ...DEFAULT_CONFIG,
    ensembleDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
    deterministicDomain: { latSouth: 50, latNorth: 70, lonWest: -6, lonEast: 30, resolution: 2 },
    steps: [0, 6, 12, 18, 24],
    members: 3,
    seed: 'bench-load',
  };
  const { manifest } = await generateDemo({ outDir: workDir, config, log: () => {} });
  const file = manifest.files.find((f) => f.format === 'netcdf4')!;
  const form = new FormData();
  form.append('file', new Blob([fs.readFileSync(path.join(workDir, file.path))]), file.path);
  const res = await send(met.jar, `${baseUrl}/api/runs`, { method: 'POST', body: form, headers: { 'X-CSRF-Token': met.csrf } });
  if (res.status !== 201) throw new Error(`seeding upload answered ${res.status}: ${await res.text()}`);
  const id = ((await res.json()) as { run: { id: string } }).run.id;
  const until = Date.now() + 180_000;
  for (;;) {
    const { run } = (await (await send(met.jar, `${baseUrl}/api/runs/${id}`)).json()) as { run: { state: string; message: string | null } };
    if (run.state === 'ready') return id;
    if (run.state === 'rejected') throw new Error(`the seeded run was rejected: ${run.message}`);
    if (Date.now() > until) throw new Error(`the seeded run is still ${run.state} after 180 s`);
    await new Promise((r) => setTimeout(r, 500));
  }
}

function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];
}

interface RouteStats {
  latencies: number[];
  errors: number;
  statuses: Map<string, number>;
}

async function hammer(baseUrl: string, sessions: Session[], routes: string[]): Promise<{ stats: Map<string, RouteStats>; elapsedS: number }> {
  const stats = new Map(routes.map((r) => [r, { latencies: [], errors: 0, statuses: new Map() } as RouteStats]));
  const started = performance.now();
  const endAt = started + SECONDS * 1000;
  let issued = 0;
  await Promise.all(
    sessions.map(async (s, i) => {
      let k = i % routes.length;
      while (performance.now() < endAt && issued < MAX_REQUESTS) {
        issued++;
        const route = routes[k];
        k = (k + 1) % routes.length;
        const entry = stats.get(route)!;
        const t0 = performance.now();
        let label: string;
        try {
          const res = await fetch(`${baseUrl}${route}`, { headers: { Cookie: s.jar.header(), Accept: 'application/json' } });
          await res.arrayBuffer();
          label = String(res.status);
          if (!res.ok) entry.errors++;
        } catch (err) {
          label = (err as Error).name;
          entry.errors++;
        }
        entry.latencies.push(performance.now() - t0);
        entry.statuses.set(label, (entry.statuses.get(label) ?? 0) + 1);
      }
    }),
  );
  return { stats, elapsedS: (performance.now() - started) / 1000 };
}

function report(stats: Map<string, RouteStats>, elapsedS: number): boolean {
  const fmt = (x: number) => x.toFixed(1).padStart(8);
  const rows: string[] = [`${'route'.padEnd(24)} ${'requests'.padStart(9)} ${'p50 ms'.padStart(8)} ${'p95 ms'.padStart(8)} ${'p99 ms'.padStart(8)} ${'errors'.padStart(7)}  statuses`];
  const all: number[] = [];
  let errors = 0;
  for (const [route, s] of stats) {
    const sorted = [...s.latencies].sort((a, b) => a - b);
    all.push(...sorted);
    errors += s.errors;
    const statuses = [...s.statuses].map(([k, v]) => `${k}:${v}`).join(' ');
    const label = route.replace(/[0-9a-f-]{36}/, ':id');
    rows.push(`${label.padEnd(24)} ${String(sorted.length).padStart(9)} ${fmt(percentile(sorted, 50))} ${fmt(percentile(sorted, 95))} ${fmt(percentile(sorted, 99))} ${String(s.errors).padStart(7)}  ${statuses}`);
  }
  all.sort((a, b) => a - b);
  const p95 = percentile(all, 95);
  rows.push(`${'all'.padEnd(24)} ${String(all.length).padStart(9)} ${fmt(percentile(all, 50))} ${fmt(p95)} ${fmt(percentile(all, 99))} ${String(errors).padStart(7)}`);
  console.log(rows.join('\n'));
  console.log(`throughput: ${(all.length / elapsedS).toFixed(0)} requests/s over ${elapsedS.toFixed(1)} s, ${CLIENTS} clients, ${os.cpus().length} CPU(s)`);
  const met = errors === 0 && p95 <= TARGET_P95_MS;
  console.log(`target (no errors, p95 <= ${TARGET_P95_MS} ms): ${met ? 'met' : 'NOT met'}`);
  return met;
}

async function main(): Promise<number> {
  if (!Number.isInteger(CLIENTS) || CLIENTS < 1 || !(SECONDS > 0) || !(MAX_REQUESTS > 0)) {
    throw new Error('BENCH_CLIENTS, BENCH_SECONDS and BENCH_MAX_REQUESTS must be positive numbers');
  }
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-bench-'));
  let server: ChildProcess | null = null;
  try {
    const databaseUrl = await benchDatabase();
    log('starting the server ...');
    const started = await startServer(databaseUrl, dataDir);
    server = started.child;
    const { baseUrl } = started;
    log('seeding: a small synthetic ensemble through POST /api/runs, processed until ready ...');
    const met = await signIn(baseUrl, 'meteorologist');
    const runId = await seed(baseUrl, met, path.join(dataDir, 'demo'));
    log(`signing in ${CLIENTS} clients through the local identity provider ...`);
    const sessions: Session[] = [];
    for (let i = 0; i < CLIENTS; i++) sessions.push(await signIn(baseUrl, ROLES[i % ROLES.length]));
    const routes = ['/api/runs', `/api/runs/${runId}`, '/api/health', '/api/me'];
    const probe = await send(met.jar, `${baseUrl}/api/scenarios`);
    if (probe.status === 200) routes.push('/api/scenarios');
    else log(`GET /api/scenarios answered ${probe.status}: left out`);
    log(`${CLIENTS} clients for ${SECONDS} s (at most ${MAX_REQUESTS} requests) on ${routes.length} routes ...`);
    const { stats, elapsedS } = await hammer(baseUrl, sessions, routes);
    return report(stats, elapsedS) ? 0 : 1;
  } finally {
    if (server) {
      const exited = new Promise((r) => server!.once('exit', r));
      server.kill('SIGTERM');
      await exited;
    }
    fs.rmSync(dataDir, { recursive: true, force: true });
  }
}

main().then(
  (code) => process.exit(code),
  (err: unknown) => {
    console.error(`[bench] failed: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(2);
  },
);
