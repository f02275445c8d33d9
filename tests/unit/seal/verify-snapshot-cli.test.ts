import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { run, type CliOutput } from '../../../server/cli/commands/verify-snapshot.ts';
import { snapshotExportText } from '../../../server/seal/export.ts';
import { sealedChain, testKey } from './fixtures.ts';

const root = path.resolve(import.meta.dirname, '..', '..', '..');
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

const key = testKey();
const [first, second] = sealedChain(key, 2);
const write = (name: string, text: string) => {
  const file = path.join(dir, name);
  fs.writeFileSync(file, text);
  return file;
};
const firstFile = write('first.json', snapshotExportText(first, key.publicKeyPem));
const secondFile = write('second.json', snapshotExportText(second, key.publicKeyPem));
const pemFile = write('seal.pub', key.publicKeyPem);
const otherPemFile = write('other.pub', testKey().publicKeyPem);
const tamperedFile = write('tampered.json', fs.readFileSync(secondFile, 'utf8').replace('"sealedBy":"risk.ingrid"', '"sealedBy":"risk.mallory"'));

async function cli(...argv: string[]) {
  const out: string[] = [];
  const err: string[] = [];
  const io: CliOutput = { out: (l) => out.push(l), err: (l) => err.push(l) };
  const code = await run(argv, io);
  return { code, out, err };
}

const LINE = /^(ok {2}|FAIL|skip) (format|public-key|content-hash|hash|signature|chain) +\S.*$/;

describe('verify-snapshot', () => {
  it('tampering in the fixture really happened', () => {
    expect(fs.readFileSync(tamperedFile, 'utf8')).toContain('risk.mallory');
  });

  it('exits 0 on a valid export with a pinned key, printing one line per check and VALID', async () => {
    const { code, out, err } = await cli(secondFile, '--public-key', pemFile, '--previous', firstFile);
    expect(code).toBe(0);
    expect(out.slice(0, -1).every((l) => LINE.test(l))).toBe(true);
    expect(out.slice(0, -1).map((l) => l.slice(0, 4) + ' ' + l.slice(5).split(/ +/)[0])).toEqual([
      'ok   format',
      'ok   public-key',
      'ok   content-hash',
      'ok   hash',
      'ok   signature',
      'ok   chain',
    ]);
    expect(out.at(-1)).toBe('VALID');
    expect(err).toEqual([]);
  });

  it('uses the embedded key with a warning when none is pinned, and skips the chain without --previous', async () => {
    const { code, out, err } = await cli(firstFile);
    expect(code).toBe(0);
    expect(err.join('\n')).toMatch(/^warning: using the public key embedded in the file/);
    expect(out).toContainEqual(expect.stringMatching(/^skip chain +previous snapshot not given/));
    expect(out.at(-1)).toBe('VALID');
  });

  it('exits 1 on a tampered export and says why', async () => {
    const { code, out } = await cli(tamperedFile, '--public-key', pemFile);
    expect(code).toBe(1);
    expect(out).toContainEqual(expect.stringMatching(/^FAIL hash /));
    expect(out).toContainEqual(expect.stringMatching(/^FAIL signature /));
    expect(out.at(-1)).toMatch(/^INVALID: hash: .*; signature: /);
  });

  it('exits 1 when the pinned key is another key', async () => {
    const { code, out } = await cli(secondFile, '--public-key', otherPemFile);
    expect(code).toBe(1);
    expect(out.at(-1)).toMatch(/^INVALID: public-key: the embedded key .* differs from the pinned key/);
  });

  it('exits 1 when the chain link to --previous is broken', async () => {
    const { code, out } = await cli(firstFile, '--public-key', pemFile, '--previous', secondFile);
    expect(code).toBe(1);
    expect(out.at(-1)).toMatch(/^INVALID: chain: /);
  });

  it('exits 1 on JSON that is no snapshot, with only the format line', async () => {
    const { code, out } = await cli(write('other.json', '{"rows":[]}'));
    expect(code).toBe(1);
    expect(out).toHaveLength(2);
    expect(out[0]).toMatch(/^FAIL format +not a snapshot export/);
  });

  it.each([
    ['a missing file', () => [path.join(dir, 'missing.json')], /cannot read the snapshot file .*ENOENT/],
    ['a file that is not JSON', () => [write('broken.json', '{"snapshot":')], /is not JSON/],
    ['no file', () => [], /give the snapshot file/],
    ['two files', () => [firstFile, secondFile], /exactly one/],
    ['an unknown option', () => [firstFile, '--bogus'], /Unknown option/],
    ['a missing key file', () => [firstFile, '--public-key', path.join(dir, 'nope.pem')], /cannot read the public key file/],
    ['a key file that is no key', () => [firstFile, '--public-key', firstFile], /not a PEM public key/],
    ['a previous file that is no snapshot', () => [secondFile, '--previous', write('x.json', '[]')], /holds no sealed snapshot/],
  ])('exits 2 on %s', async (_what, args, message) => {
    const { code, out, err } = await cli(...args());
    expect(code).toBe(2);
    expect(out).toEqual([]);
    expect(err[0]).toMatch(message);
    expect(err.at(-1)).toMatch(/^usage: /);
  });

  it('runs through the liftwise entry point with the same exit codes', () => {
    const tsx = path.join(root, 'node_modules', '.bin', 'tsx');
    const spawn = (...args: string[]) =>
      spawnSync(tsx, ['server/cli/liftwise.ts', 'verify-snapshot', ...args], { cwd: root, encoding: 'utf8' });
    const valid = spawn(secondFile, '--public-key', pemFile);
    expect(valid.status, valid.stderr).toBe(0);
    expect(valid.stdout.trim().split('\n').at(-1)).toBe('VALID');
    const tampered = spawn(tamperedFile, '--public-key', pemFile);
    expect(tampered.status).toBe(1);
    expect(tampered.stdout).toMatch(/^FAIL signature /m);
    expect(spawn(path.join(dir, 'missing.json')).status).toBe(2);
  }, 30_000);
});
