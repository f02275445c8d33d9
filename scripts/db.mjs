#!/usr/bin/env node
/**
 * Local PostgreSQL lifecycle for development and tests (Debian's PostgreSQL server).
 *
 *   node scripts/db.mjs start [--cluster app|test]   create if missing, start if stopped, ensure the database
 *   node scripts/db.mjs stop  [--cluster app|test]
 *   node scripts/db.mjs status [--cluster app|test]
 *   node scripts/db.mjs url   [--cluster app|test]   print the connection URL
 *
 * Each cluster lives in a git-ignored folder of the project (.data/pg-<cluster>), listens on
 * 127.0.0.1 only, on a project port (LIFTWISE_PG_PORT, default 54329 for app and 54339 for
 * test), with no unix socket. initdb and postgres refuse to run as root, so as root they run as
 * the `postgres` OS user; when that user cannot reach the project folder, the cluster moves to a
 * folder under the system temp directory keyed by the project path. Plain Node (no packages),
 * because `npm start` calls it before dependencies are known to be installed.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
const SUPERUSER = 'liftwise';

export const CLUSTERS = {
  app: { port: 54329, database: 'liftwise', fast: false },
  test: { port: 54339, database: 'liftwise_test', fast: true },
};

export class DbError extends Error {}

function clusterSettings(name) {
  const base = CLUSTERS[name];
  if (!base) throw new DbError(`unknown cluster "${name}" (use app or test)`);
  const envPort = name === 'app' ? process.env.LIFTWISE_PG_PORT : process.env.LIFTWISE_TEST_PG_PORT;
  const port = envPort ? Number(envPort) : base.port;
  if (!Number.isInteger(port) || port < 1024 || port > 65535) {
    throw new DbError(`${name === 'app' ? 'LIFTWISE_PG_PORT' : 'LIFTWISE_TEST_PG_PORT'} must be a port number from 1024 to 65535, got "${envPort}"`);
  }
  return { ...base, name, port };
}

/** The newest installed server's bin folder, e.g. /usr/lib/postgresql/15/bin. */
function findServerBin() {
  const baseDir = '/usr/lib/postgresql';
  if (!fs.existsSync(baseDir)) return null;
  const versions = fs
    .readdirSync(baseDir)
    .filter((v) => fs.existsSync(path.join(baseDir, v, 'bin', 'initdb')))
    .sort((a, b) => Number(b) - Number(a));
  return versions.length ? path.join(baseDir, versions[0], 'bin') : null;
}

function ensureServerInstalled() {
  let bin = findServerBin();
  if (bin) return bin;
  if (!isRoot) {
    throw new DbError(
      "PostgreSQL's server is not installed. Install Debian's package as an administrator: sudo apt-get install -y postgresql",
    );
  }
  console.log('[db] installing PostgreSQL (apt-get install postgresql) ...');
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  const update = spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
  const install = spawnSync('apt-get', ['install', '-y', '-qq', 'postgresql'], { stdio: 'inherit', env });
  if (update.status !== 0 || install.status !== 0) throw new DbError('apt-get could not install postgresql (see the output above)');
  bin = findServerBin();
  if (!bin) throw new DbError('postgresql was installed but no server binaries were found under /usr/lib/postgresql');
  return bin;
}

function postgresCanReach(dir) {
  if (!isRoot) return true;
  return spawnSync('runuser', ['-u', 'postgres', '--', 'test', '-x', dir], { stdio: 'ignore' }).status === 0;
}

function dataDirFor(name) {
  const local = path.join(root, '.data', `pg-${name}`);
  fs.mkdirSync(path.dirname(local), { recursive: true });
  if (postgresCanReach(path.dirname(local))) return local;
  const key = createHash('sha256').update(root).digest('hex').slice(0, 12);
  return path.join(os.tmpdir(), `liftwise-pg-${key}`, name);
}

/** Runs a server binary, as the postgres user when we are root. */
function runPg(bin, tool, args, opts = {}) {
  const exe = path.join(bin, tool);
  const [cmd, argv] = isRoot ? ['runuser', ['-u', 'postgres', '--', exe, ...args]] : [exe, args];
  return spawnSync(cmd, argv, { encoding: 'utf8', ...opts });
}

function lastLines(file, n = 15) {
  try {
    return fs.readFileSync(file, 'utf8').trimEnd().split('\n').slice(-n).join('\n');
  } catch {
    return '(no log written)';
  }
}

function portInUse(port) {
  return new Promise((resolve) => {
    const socket = net.connect({ host: '127.0.0.1', port });
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => resolve(false));
    socket.setTimeout(1000, () => {
      socket.destroy();
      resolve(false);
    });
  });
}

function isRunning(bin, dataDir) {
  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) return false;
  return runPg(bin, 'pg_ctl', ['status', '-D', dataDir]).status === 0;
}

function initCluster(bin, dataDir) {
  fs.mkdirSync(dataDir, { recursive: true, mode: 0o700 });
  if (isRoot) execFileSync('chown', ['-R', 'postgres:postgres', dataDir]);
  const res = runPg(bin, 'initdb', ['-D', dataDir, '-U', SUPERUSER, '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8']);
  if (res.status !== 0) {
    throw new DbError(`initdb failed for ${dataDir}:\n${(res.stderr || res.stdout || '').trim().split('\n').slice(-15).join('\n')}`);
  }
}

export function connectionUrl(name) {
  const s = clusterSettings(name);
  return `postgres://${SUPERUSER}@127.0.0.1:${s.port}/${s.database}`;
}

async function ensureDatabase(s) {
  const { default: pg } = await import('pg');
  const client = new pg.Client({ host: '127.0.0.1', port: s.port, user: SUPERUSER, database: 'postgres' });
  await client.connect();
  try {
    const found = await client.query('SELECT 1 FROM pg_database WHERE datname = $1', [s.database]);
    if (found.rowCount === 0) await client.query(`CREATE DATABASE "${s.database}"`);
  } finally {
    await client.end();
  }
}

export async function start(name = 'app') {
  const s = clusterSettings(name);
  const bin = ensureServerInstalled();
  const dataDir = dataDirFor(name);
  if (!fs.existsSync(path.join(dataDir, 'PG_VERSION'))) {
    console.log(`[db] creating the ${name} cluster in ${path.relative(root, dataDir) || dataDir}`);
    initCluster(bin, dataDir);
  }
  if (!isRunning(bin, dataDir)) {
    if (await portInUse(s.port)) {
      throw new DbError(
        `port ${s.port} on 127.0.0.1 is already in use by another program, so the ${name} database cannot start. ` +
          `Stop that program or choose another port with ${name === 'app' ? 'LIFTWISE_PG_PORT' : 'LIFTWISE_TEST_PG_PORT'}.`,
      );
    }
    const logFile = path.join(dataDir, 'server.log');
    const options = [`-p ${s.port}`, "-k ''", '-c listen_addresses=127.0.0.1', '-c max_connections=200'];
    if (s.fast) options.push('-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off');
    const res = runPg(bin, 'pg_ctl', ['start', '-D', dataDir, '-l', logFile, '-w', '-t', '30', '-o', options.join(' ')]);
    if (res.status !== 0) {
      throw new DbError(`PostgreSQL (${name}) did not start. Last lines of its log (${logFile}):\n${lastLines(logFile)}`);
    }
    console.log(`[db] ${name} database listening on 127.0.0.1:${s.port}`);
  }
  await ensureDatabase(s);
  return connectionUrl(name);
}

export async function stop(name = 'app') {
  const bin = findServerBin();
  const dataDir = dataDirFor(name);
  if (!bin || !isRunning(bin, dataDir)) {
    console.log(`[db] ${name} database is not running`);
    return;
  }
  const res = runPg(bin, 'pg_ctl', ['stop', '-D', dataDir, '-m', 'fast', '-w', '-t', '30']);
  if (res.status !== 0) throw new DbError(`pg_ctl stop failed:\n${res.stderr || res.stdout}`);
  console.log(`[db] ${name} database stopped`);
}

/** Stop then start: the server is started the same way as by start() (log file, options), so nothing holds our pipes. */
export async function restart(name = 'app') {
  await stop(name);
  await start(name);
}

async function main() {
  const [command = 'status', ...rest] = process.argv.slice(2);
  const idx = rest.indexOf('--cluster');
  const name = idx >= 0 ? rest[idx + 1] : 'app';
  if (command === 'start') console.log(await start(name));
  else if (command === 'stop') await stop(name);
  else if (command === 'url') console.log(connectionUrl(name));
  else if (command === 'status') {
    const bin = findServerBin();
    console.log(bin && isRunning(bin, dataDirFor(name)) ? `${name}: running` : `${name}: stopped`);
  } else throw new DbError(`unknown command "${command}" (start, stop, status, url)`);
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  main().catch((err) => {
    console.error(`[db] ${err instanceof DbError ? err.message : err?.stack || err}`);
    process.exit(1);
  });
}
