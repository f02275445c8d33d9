#!/usr/bin/env node
/**
 * `npm start`: from a fresh clone to a served desk tool.
 *   installs npm dependencies when missing or stale, starts the local PostgreSQL (installing
 *   Debian's server when missing and we are root), migrates, seeds the demo, builds the client,
 *   and serves everything on http://127.0.0.1:$PORT (default 8080). In the background, once the
 *   server starts, the demo runs are generated (when missing) and uploaded through the API with
 *   the demo upload token (scripts/demo/feed.ts; DEMO_FEED=false skips it).
 * `npm run dev`: the same, but Vite with hot reload on :5173 and the API restarted on change.
 * A DATABASE_URL in the environment skips the local PostgreSQL.
 */
import { spawn } from 'node:child_process';
import path from 'node:path';
import { ensureClientBuilt, ensureDependencies, log, root, run, startDemoFeed, StepError } from './lib.mjs';

const dev = process.argv.includes('--dev');

async function main() {
  ensureDependencies();
  const db = await import('./db.mjs');
  const databaseUrl = process.env.DATABASE_URL ?? (await db.start('app'));
  const env = { ...process.env, DATABASE_URL: databaseUrl };

  const tsx = path.join(root, 'node_modules', 'tsx', 'dist', 'cli.mjs');
  const seeded = await run(process.execPath, [tsx, 'server/db/seed.ts'], { env });
  if (seeded !== 0) throw new StepError('migrating or seeding the database failed (see above)');

  const children = [];
  if (dev) {
    // People use Vite's port; sign-in redirects and the assertion consumer service go through its proxy.
    const devEnv = { ...env, PUBLIC_URL: process.env.PUBLIC_URL ?? `http://127.0.0.1:${process.env.VITE_PORT ?? 5173}` };
    children.push(spawn(process.execPath, [tsx, 'watch', '--clear-screen=false', 'server/index.ts'], { cwd: root, stdio: 'inherit', env: devEnv }));
    children.push(spawn(process.execPath, [path.join(root, 'node_modules', 'vite', 'bin', 'vite.js')], { cwd: root, stdio: 'inherit', env }));
    log(`development: open http://127.0.0.1:${process.env.VITE_PORT ?? 5173} (API on port ${process.env.PORT ?? 8080})`);
  } else {
    ensureClientBuilt();
    children.push(spawn(process.execPath, [tsx, 'server/index.ts'], { cwd: root, stdio: 'inherit', env: { ...env, SERVE_CLIENT: 'true' } }));
  }
  const stopFeed = startDemoFeed(env);
  const stopAll = (signal) => {
    stopFeed();
    children.forEach((c) => c.kill(signal));
  };
  process.on('SIGINT', () => stopAll('SIGINT'));
  process.on('SIGTERM', () => stopAll('SIGTERM'));
  const codes = await Promise.all(children.map((c) => new Promise((resolve) => c.on('exit', (code) => resolve(code ?? 0)))));
  stopFeed();
  process.exit(Math.max(...codes));
}

main().catch((err) => {
  console.error(`[liftwise] ${err instanceof StepError || err?.constructor?.name === 'DbError' ? err.message : err?.stack || err}`);
  process.exit(1);
});
