/**
 * Helpers shared by the start and test scripts. Plain Node with no packages: these run before
 * the dependencies are known to be installed.
 */
import { spawn, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
export const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;

export function log(message) {
  console.log(`[liftwise] ${message}`);
}

export class StepError extends Error {}

function mtime(file) {
  try {
    return fs.statSync(file).mtimeMs;
  } catch {
    return 0;
  }
}

/**
 * Installs npm dependencies when node_modules is missing or was installed from another lockfile
 * (compared by content, so a fresh checkout's file times do not matter). A node_modules that is
 * a link to another checkout's is left alone.
 */
export function ensureDependencies() {
  const modules = path.join(root, 'node_modules');
  if (fs.existsSync(modules) && fs.lstatSync(modules).isSymbolicLink()) return;
  const lockHash = createHash('sha256').update(fs.readFileSync(path.join(root, 'package-lock.json'))).digest('hex');
  const stamp = path.join(modules, '.liftwise-lock-sha256');
  const installed = fs.existsSync(stamp) ? fs.readFileSync(stamp, 'utf8').trim() : null;
  if (installed === lockHash) return;
  if (installed === null && fs.existsSync(path.join(modules, '.package-lock.json')) && mtime(path.join(modules, '.package-lock.json')) >= mtime(path.join(root, 'package-lock.json'))) {
    fs.writeFileSync(stamp, lockHash);
    return;
  }
  log('installing npm dependencies (npm ci) ...');
  const res = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root, stdio: 'inherit' });
  if (res.status !== 0) throw new StepError('npm ci failed (see the output above)');
  fs.writeFileSync(stamp, lockHash);
}

/** The newest modification time of any file below the given paths. */
export function newestMtime(paths) {
  let newest = 0;
  const walk = (p) => {
    let st;
    try {
      st = fs.statSync(p);
    } catch {
      return;
    }
    if (st.isDirectory()) for (const entry of fs.readdirSync(p)) walk(path.join(p, entry));
    else newest = Math.max(newest, st.mtimeMs);
  };
  for (const p of paths) walk(path.join(root, p));
  return newest;
}

/** Builds the client when dist/ is missing or older than its sources. */
export function ensureClientBuilt({ force = false } = {}) {
  const built = mtime(path.join(root, 'dist', 'index.html'));
  const sources = newestMtime(['src', 'shared', 'public', 'index.html', 'vite.config.ts', 'tailwind.config.ts', 'package-lock.json']);
  if (!force && built > sources) return;
  log('building the client (vite build) ...');
  const res = spawnSync(process.execPath, [path.join(root, 'node_modules', 'vite', 'bin', 'vite.js'), 'build', '--logLevel', 'warn'], {
    cwd: root,
    stdio: 'inherit',
  });
  if (res.status !== 0) throw new StepError('the client build failed (see the output above)');
}

/** Debian packages the tests use as reference tools, installed when missing and we are root. */
export function ensureDebianPackages(requirements) {
  const missing = requirements.filter((r) => !r.present());
  if (missing.length === 0) return;
  const names = [...new Set(missing.flatMap((r) => r.packages))];
  if (!isRoot) {
    throw new StepError(`missing Debian packages for the tests: ${names.join(' ')}. Install them: sudo apt-get install -y ${names.join(' ')}`);
  }
  log(`installing Debian packages: ${names.join(' ')} ...`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  const res = spawnSync('apt-get', ['install', '-y', '-qq', '--no-install-recommends', ...names], { stdio: 'inherit', env });
  if (res.status !== 0) throw new StepError(`apt-get could not install ${names.join(' ')}`);
  const still = missing.filter((r) => !r.present());
  if (still.length) throw new StepError(`still missing after apt-get: ${still.map((r) => r.label).join(', ')}`);
}

export function hasCommand(name) {
  return spawnSync('sh', ['-c', `command -v ${name}`], { stdio: 'ignore' }).status === 0;
}

/** Runs a command, streaming its output; resolves with its exit code. */
export function run(cmd, args, opts = {}) {
  return new Promise((resolve) => {
    const child = spawn(cmd, args, { cwd: root, stdio: 'inherit', ...opts });
    child.on('exit', (code, signal) => resolve(code ?? (signal ? 1 : 0)));
    child.on('error', () => resolve(127));
  });
}

/**
 * The demo feed of `npm start`, in the background once the server is starting: generates the
 * demo runs when .data/demo/manifest.json is missing, makes sure the demo upload token exists,
 * then uploads the runs through the HTTP API (scripts/demo/feed.ts). Skipped in production and
 * with DEMO_FEED=false. Returns a stop function for shutdown.
 */
export function startDemoFeed(env) {
  const off = ['false', '0', 'no'].includes(String(env.DEMO_FEED ?? '').toLowerCase());
  if (env.NODE_ENV === 'production' || off) {
    log(`demo feed skipped (${off ? 'DEMO_FEED=false' : 'production'})`);
    return () => {};
  }
  const tsx = path.join(root, 'node_modules', 'tsx', 'dist', 'cli.mjs');
  const host = !env.HOST || env.HOST === '0.0.0.0' || env.HOST === '::' ? '127.0.0.1' : env.HOST;
  const url = `http://${host.includes(':') ? `[${host}]` : host}:${env.PORT ?? 8080}`;
  let current = null;
  let stopped = false;
  const step = (args) =>
    new Promise((resolve) => {
      if (stopped) return resolve(1);
      current = spawn(process.execPath, [tsx, ...args], { cwd: root, stdio: 'inherit', env });
      current.on('exit', (code, signal) => resolve(code ?? (signal ? 1 : 0)));
      current.on('error', () => resolve(127));
    });
  (async () => {
    if (!fs.existsSync(path.join(root, '.data', 'demo', 'manifest.json'))) {
      log('demo feed: generating the demo runs into .data/demo (about half a minute, in the background) ...');
      if ((await step(['scripts/demo/generate.ts'])) !== 0) return log('demo feed: generating the demo runs failed (see above); run `npm run demo:generate` to retry');
    }
    if ((await step(['scripts/demo/feed.ts', 'ensure-token'])) !== 0) return log('demo feed: could not make the demo upload token (see above)');
    log(`demo feed: uploading the demo runs to ${url} through the API ...`);
    if ((await step(['scripts/demo/feed.ts', 'upload', '--url', url])) !== 0) log('demo feed: some uploads failed (see above); a restart tries again');
  })();
  return () => {
    stopped = true;
    current?.kill('SIGTERM');
  };
}
