#!/usr/bin/env node
/**
 * `npm test`: the same bootstrap as `npm start`, then every check, with a non-zero exit on any failure.
 *   1. npm dependencies; Debian reference tools the tests use (installed when missing and root)
 *   2. a separate PostgreSQL cluster for tests (port 54339), with a fresh test database
 *   3. typecheck and lint (`npm run check`)
 *   4. the client's production build
 *   5. vitest: unit, client, reference and integration projects
 * Extra arguments go to vitest (e.g. `npm test -- tests/unit/science`).
 * Closing line: "Tests: N passed, N failed, N skipped".
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { ensureClientBuilt, ensureDebianPackages, ensureDependencies, hasCommand, log, root, run, StepError } from './lib.mjs';

const DEBIAN_PYTHON = '/usr/bin/python3';
const pythonHas = (modules) => () =>
  fs.existsSync(DEBIAN_PYTHON) && spawnSync(DEBIAN_PYTHON, ['-c', `import ${modules}`], { stdio: 'ignore' }).status === 0;

/** Reference tools named by tests/reference (ARCHITECTURE.md): each test says which one it uses. */
const REFERENCE_TOOLS = [
  { label: 'ecCodes tools', packages: ['libeccodes-tools'], present: () => hasCommand('grib_set') && hasCommand('grib_get_data') },
  { label: 'netCDF tools', packages: ['netcdf-bin'], present: () => hasCommand('ncgen') && hasCommand('ncdump') && hasCommand('nccopy') },
  {
    label: 'numpy, SciPy and ecCodes for Debian Python',
    packages: ['python3-numpy', 'python3-scipy', 'python3-eccodes'],
    present: pythonHas('numpy, scipy.sparse.linalg, eccodes'),
  },
  { label: 'Chromium for the browser tests', packages: ['chromium'], present: () => fs.existsSync('/usr/bin/chromium') },
  { label: 'LibreOffice Calc (reads the exported workbooks)', packages: ['libreoffice-calc'], present: () => hasCommand('soffice') },
];

async function resetTestDatabase(url) {
  const { default: pg } = await import('pg');
  const target = new URL(url);
  const dbName = target.pathname.slice(1);
  const admin = new pg.Client({ connectionString: Object.assign(new URL(url), { pathname: '/postgres' }).toString() });
  await admin.connect();
  try {
    await admin.query(`DROP DATABASE IF EXISTS "${dbName}" WITH (FORCE)`);
    await admin.query(`CREATE DATABASE "${dbName}"`);
  } finally {
    await admin.end();
  }
}

function summarise(file) {
  try {
    const report = JSON.parse(fs.readFileSync(file, 'utf8'));
    return {
      passed: report.numPassedTests ?? 0,
      failed: report.numFailedTests ?? 0,
      skipped: (report.numPendingTests ?? 0) + (report.numTodoTests ?? 0),
    };
  } catch {
    return null;
  }
}

async function main() {
  ensureDependencies();
  ensureDebianPackages(REFERENCE_TOOLS);
  const db = await import('./db.mjs');
  const failures = [];
  let summary = null;
  try {
    const url = await db.start('test');
    await resetTestDatabase(url);
    const env = { ...process.env, NODE_ENV: 'test', DATABASE_URL: url, LOG_LEVEL: process.env.LOG_LEVEL ?? 'silent' };

    log('typecheck and lint (npm run check) ...');
    if ((await run('npm', ['run', '--silent', 'check'], { env })) !== 0) failures.push('typecheck or lint');

    try {
      ensureClientBuilt({ force: true });
    } catch (err) {
      failures.push(err.message);
    }

    const reportFile = path.join(root, 'test-results', 'vitest.json');
    fs.mkdirSync(path.dirname(reportFile), { recursive: true });
    fs.rmSync(reportFile, { force: true });
    log('vitest (unit, client, reference, integration) ...');
    const vitest = path.join(root, 'node_modules', 'vitest', 'vitest.mjs');
    const code = await run(
      process.execPath,
      [vitest, 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${reportFile}`, ...process.argv.slice(2)],
      { env },
    );
    summary = summarise(reportFile);
    if (code !== 0) failures.push('vitest');
  } finally {
    await db.stop('test').catch((err) => console.error(`[liftwise] could not stop the test database: ${err.message}`));
  }
  if (summary) console.log(`Tests: ${summary.passed} passed, ${summary.failed} failed, ${summary.skipped} skipped`);
  if (failures.length) {
    console.error(`[liftwise] FAILED: ${failures.join('; ')}`);
    process.exit(1);
  }
  log('all checks passed');
}

main().catch((err) => {
  console.error(`[liftwise] ${err instanceof StepError || err?.constructor?.name === 'DbError' ? err.message : err?.stack || err}`);
  process.exit(1);
});
