/**
 * The demo feed of `npm start`: the demo runs go in through the same HTTP API a person or a
 * scheduled job uses (POST /api/runs with an API token), never straight into the database.
 *
 *   tsx scripts/demo/feed.ts ensure-token
 *       makes sure .data/demo-token (mode 0600) holds a live API token with the meteorologist
 *       role. This is the only step that touches the database directly, and only to issue the
 *       credential (an admin would do it in the Admin screen). Needs DATABASE_URL.
 *   tsx scripts/demo/feed.ts upload --url URL [--demo-dir DIR]
 *       waits for the server, uploads every run of DIR/manifest.json (the server answers a file
 *       it already has as a duplicate), then sends the regions file with PUT /api/regions when
 *       the server has that route.
 *
 * Progress lines start with "[demo]". Exit code 0 when everything was accepted or already there.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Manifest } from './generate.ts';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
export const DEMO_DIR = path.join(repoRoot, '.data', 'demo');
export const DEMO_TOKEN_FILE = path.join(repoRoot, '.data', 'demo-token');
export const DEMO_TOKEN_NAME = 'demo-feed';

const log = (line: string) => console.log(`[demo] ${line}`);

/** The demo feed uploads runs (meteorologist) and sets up regions and subscribers (admin). */
const DEMO_TOKEN_ROLES = ['meteorologist', 'admin'] as const;

/** Reuses the token in the file while it is live; otherwise issues a new one and writes it (0600). */
export async function ensureDemoToken(databaseUrl: string, tokenFile = DEMO_TOKEN_FILE): Promise<'kept' | 'issued'> {
  const { createDb } = await import('../../server/db/client.ts');
  const { authenticateApiToken, issueApiToken } = await import('../../server/services/api-tokens.ts');
  const db = createDb(databaseUrl, 1);
  try {
    const existing = fs.existsSync(tokenFile) ? fs.readFileSync(tokenFile, 'utf8').trim() : '';
    if (existing) {
      const check = await authenticateApiToken(db.db, existing);
      if (check.ok && DEMO_TOKEN_ROLES.every((r) => check.user.roles.includes(r))) return 'kept';
    }
    const { token } = await issueApiToken(
      db.db,
      { name: DEMO_TOKEN_NAME, roles: [...DEMO_TOKEN_ROLES], createdBy: null },
      { actorLabel: 'system:npm-start', actorId: null, requestId: null, clientAddress: null },
    );
    fs.mkdirSync(path.dirname(tokenFile), { recursive: true });
    const temp = `${tokenFile}.${process.pid}.tmp`;
    fs.writeFileSync(temp, `${token}\n`, { mode: 0o600 });
    fs.renameSync(temp, tokenFile);
    return 'issued';
  } finally {
    await db.close();
  }
}

async function waitForServer(baseUrl: string, timeoutMs: number): Promise<void> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    try {
      const res = await fetch(`${baseUrl}/api/health`);
      await res.body?.cancel();
      if (res.status < 500) return;
    } catch {
      // not listening yet
    }
    if (Date.now() > until) throw new Error(`the server at ${baseUrl} did not answer within ${timeoutMs / 1000} s`);
    await new Promise((r) => setTimeout(r, 500));
  }
}

/** PUT /api/regions with the demo regions; a server without that route (404) is skipped with a note. */
async function sendRegions(baseUrl: string, token: string, file: string): Promise<void> {
  const res = await fetch(`${baseUrl}/api/regions`, {
    method: 'PUT',
    headers: { Authorization: `Bearer ${token}`, 'Content-Type': 'application/json', Accept: 'application/json' },
    body: fs.readFileSync(file),
  });
  const text = await res.text();
  if (res.status === 404) return log('regions: this server has no PUT /api/regions yet; skipped');
  if (res.ok) return log(`regions: ${path.basename(file)} accepted (${res.status})`);
  let message = text;
  try {
    message = (JSON.parse(text) as { error?: { message?: string } }).error?.message ?? text;
  } catch {
    // keep the text
  }
  throw new Error(`regions: the server answered ${res.status}: ${message.slice(0, 300)}`);
}

export async function feedDemo(options: { baseUrl: string; token: string; demoDir?: string; waitMs?: number }): Promise<{ uploaded: number; duplicates: number }> {
  const { uploadRunFile } = await import('../../server/cli/commands/upload.ts');
  const demoDir = options.demoDir ?? DEMO_DIR;
  const manifest = JSON.parse(fs.readFileSync(path.join(demoDir, 'manifest.json'), 'utf8')) as Manifest;
  await waitForServer(options.baseUrl, options.waitMs ?? 120_000);
  let uploaded = 0;
  let duplicates = 0;
  // Runs the server already has (same SHA-256) are not sent again: the files are large.
  const known = await fetch(`${options.baseUrl}/api/runs`, { headers: { Authorization: `Bearer ${options.token}`, Accept: 'application/json' } });
  const have = new Map<string, { id: string; state: string }>();
  if (known.ok) for (const r of ((await known.json()) as { runs: { id: string; state: string; checksum: string }[] }).runs) have.set(r.checksum, r);
  else await known.body?.cancel();
  // Regions and subscribers first: each run's signals are derived for the regions active when it is processed.
  const regions = manifest.files.find((f) => f.format === 'geojson');
  if (regions) await sendRegions(options.baseUrl, options.token, path.join(demoDir, regions.path));
  await sendSubscribers(options.baseUrl, options.token, path.join(demoDir, 'subscribers.json'));
  for (const file of manifest.files.filter((f) => f.format === 'grib2' || f.format === 'netcdf4')) {
    const existing = have.get(file.sha256);
    if (existing) {
      duplicates++;
      log(`${file.path}: already uploaded as run ${existing.id} (${existing.state})`);
      continue;
    }
    const result = await uploadRunFile({ baseUrl: options.baseUrl, token: options.token, file: path.join(demoDir, file.path), model: file.model ?? undefined });
    if (result.duplicate) duplicates++;
    else uploaded++;
    log(`${file.path}: ${result.duplicate ? 'already uploaded' : 'uploaded'} as run ${result.run.id} (${result.run.state})`);
  }
  return { uploaded, duplicates };
}

/** POST /api/subscriptions for each demo subscriber the server does not have yet. */
async function sendSubscribers(baseUrl: string, token: string, file: string): Promise<void> {
  if (!fs.existsSync(file)) return;
  const headers = { Authorization: `Bearer ${token}`, Accept: 'application/json', 'Content-Type': 'application/json' };
  const known = await fetch(`${baseUrl}/api/subscriptions`, { headers });
  if (!known.ok) {
    await known.body?.cancel();
    return log(`subscribers: the server answered ${known.status}; skipped`);
  }
  const have = new Set(((await known.json()) as { subscriptions: { email: string }[] }).subscriptions.map((s) => s.email));
  const wanted = JSON.parse(fs.readFileSync(file, 'utf8')) as { email: string; name: string; regions: string[] }[];
  let added = 0;
  for (const sub of wanted.filter((w) => !have.has(w.email))) {
    const res = await fetch(`${baseUrl}/api/subscriptions`, { method: 'POST', headers, body: JSON.stringify({ email: sub.email, name: sub.name, regionIds: sub.regions }) });
    await res.body?.cancel();
    if (res.ok) added++;
    else log(`subscribers: ${sub.email} refused (${res.status})`);
  }
  log(`subscribers: ${added} added, ${wanted.length - added} already there or refused`);
}

function option(argv: string[], name: string): string | undefined {
  const i = argv.indexOf(name);
  return i >= 0 ? argv[i + 1] : undefined;
}

async function main(argv: string[]): Promise<void> {
  const [command] = argv;
  if (command === 'ensure-token') {
    const url = process.env.DATABASE_URL;
    if (!url) throw new Error('DATABASE_URL is not set');
    const outcome = await ensureDemoToken(url);
    log(outcome === 'kept' ? 'upload token in .data/demo-token is live' : 'issued a demo upload token into .data/demo-token');
  } else if (command === 'upload') {
    const baseUrl = option(argv, '--url');
    if (!baseUrl) throw new Error('--url is required');
    const token = fs.readFileSync(DEMO_TOKEN_FILE, 'utf8').trim();
    const { uploaded, duplicates } = await feedDemo({ baseUrl, token, demoDir: option(argv, '--demo-dir') });
    log(`feed done: ${uploaded} new run(s), ${duplicates} already there; processing continues in the background (Runs screen)`);
  } else throw new Error('usage: feed.ts ensure-token | upload --url URL [--demo-dir DIR]');
}

const invokedDirectly = process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (invokedDirectly) {
  main(process.argv.slice(2)).catch((err: unknown) => {
    console.error(`[demo] feed failed: ${err instanceof Error ? err.message : String(err)}`);
    process.exitCode = 1;
  });
}
