/**
 * `npm run liftwise -- upload`: the command line a scheduled job uses, run as a child process
 * against the real app, checking its stdout contract and exit codes (server/cli/commands/upload.ts).
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { issueApiToken } from '../../server/services/api-tokens.ts';
import { startTestApp, type TestApp } from './support.ts';

const root = path.resolve(import.meta.dirname, '../..');
const tsx = path.join(root, 'node_modules', 'tsx', 'dist', 'cli.mjs');

function cli(args: string[], env: Record<string, string> = {}): Promise<{ code: number; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [tsx, 'server/cli/liftwise.ts', 'upload', ...args], {
      cwd: root,
      env: { PATH: process.env.PATH ?? '', ...env },
    });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (c) => (stdout += c));
    child.stderr.on('data', (c) => (stderr += c));
    child.on('exit', (code) => resolve({ code: code ?? -1, stdout, stderr }));
  });
}

describe('liftwise upload', () => {
  let t: TestApp;
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-cli-'));
  const tokenFile = path.join(dir, 'token');
  const runFile = path.join(dir, 'truncated.grib2');
  const textFile = path.join(dir, 'notes.grib2');

  beforeAll(async () => {
    t = await startTestApp();
    const { token } = await issueApiToken(t.db.db, { name: `cli-test-${process.pid}`, roles: ['meteorologist'], createdBy: null }, { actorLabel: 'test' });
    fs.writeFileSync(tokenFile, `${token}\n`, { mode: 0o600 });
    const bytes = Buffer.alloc(900);
    bytes.set([0x47, 0x52, 0x49, 0x42, 0, 0, 0, 2]);
    bytes.writeDoubleLE(Date.now() + process.pid, 200); // unique per test process
    fs.writeFileSync(runFile, bytes);
    fs.writeFileSync(textFile, 'no model run here\n');
  });
  afterAll(async () => {
    await t.close();
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it('refuses a token on the command line and a missing token (exit 2)', async () => {
    const a = await cli([runFile, '--url', t.baseUrl, '--token', 'lw_x']);
    expect(a.code).toBe(2);
    expect(a.stderr).toMatch(/never taken on the command line/);
    const b = await cli([runFile, '--url', t.baseUrl]);
    expect(b.code).toBe(2);
    expect(b.stderr).toMatch(/no API token/);
  });

  it('uploads, prints "RUN_ID<TAB>new", then "duplicate" for the same file; --wait reports the rejection (exit 5)', async () => {
    const first = await cli([runFile, '--url', t.baseUrl, '--token-file', tokenFile]);
    expect(first.code, first.stderr).toBe(0);
    const [id, kind] = first.stdout.trim().split('\t');
    expect(id).toMatch(/^[0-9a-f-]{36}$/);
    expect(kind).toBe('new');
    const second = await cli([runFile, '--url', t.baseUrl, '--wait', '--timeout', '60'], { LIFTWISE_TOKEN: fs.readFileSync(tokenFile, 'utf8') });
    expect(second.code, second.stderr).toBe(5);
    const lines = second.stdout.trim().split('\n').map((l) => l.split('\t'));
    expect(lines[0]).toEqual([id, 'duplicate']);
    expect(lines[1].slice(0, 2)).toEqual([id, 'rejected']);
    expect(lines[1][2]).toMatch(/section 0/);
  });

  it('exit 4 with the server message for a file that is no model run; exit 3 for a refused token', async () => {
    const refused = await cli([textFile, '--url', t.baseUrl, '--token-file', tokenFile]);
    expect(refused.code).toBe(4);
    expect(refused.stderr).toMatch(/422: .*not a GRIB2, NetCDF-3 or NetCDF-4 file/);
    const bad = await cli([runFile, '--url', t.baseUrl], { LIFTWISE_TOKEN: `lw_${'C'.repeat(43)}` });
    expect(bad.code).toBe(3);
    expect(bad.stderr).toMatch(/401: .*not known to this server/);
  });
});
