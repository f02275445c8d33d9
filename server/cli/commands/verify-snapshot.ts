/**
 * `npm run liftwise -- verify-snapshot FILE.json [--public-key KEY.pem] [--previous PREV.json]`
 *
 * Checks an exported snapshot offline, without the database: the file is the export
 * `{ "publicKey": PEM, "snapshot": {...} }` (or a bare sealed document, which needs --public-key).
 *
 *   --public-key KEY.pem   pin the server's public key (GET /api/snapshots/public-key); without
 *                          it the key embedded in the file is used and a warning is printed
 *   --previous PREV.json   the export of the snapshot sealed just before: checks the chain link
 *
 * OUTPUT CONTRACT (desk scripts parse it; change it only with a new command name):
 *   stdout, one line per check, in this order: format, public-key, content-hash, hash, signature, chain
 *     `<status> <name padded to 12> <detail>`   status is `ok  `, `FAIL` or `skip` (4 characters)
 *     `skip` is a check that could not be made (the chain link without --previous); it does not
 *     make the snapshot invalid. After a failed `format` no other check line is printed.
 *   stdout, last line: `VALID` or `INVALID: <name>: <detail>[; <name>: <detail>...]` (every failed check)
 *   stderr: `warning: ...` lines (the embedded key was used instead of a pinned one), and
 *     `verify-snapshot: <message>` for usage and file errors.
 * EXIT CODES: 0 valid; 1 invalid (the file is JSON but the snapshot fails a check, or is no
 *   snapshot); 2 usage error, or a file (snapshot, key, previous) that cannot be read, is not
 *   JSON or not a public key.
 */
import fs from 'node:fs';
import { parseArgs } from 'node:util';
import type { KeyObject } from 'node:crypto';
import { sealedSnapshotSchema, type SnapshotCheck } from '@shared/api/snapshots.ts';
import { verifySnapshotExport } from '../../seal/export.ts';
import { parsePublicKeyPem } from '../../seal/keys.ts';
import { headerHashOf } from '../../seal/seal.ts';

export interface CliOutput {
  out(line: string): void;
  err(line: string): void;
}

const processOutput: CliOutput = {
  out: (line) => process.stdout.write(`${line}\n`),
  err: (line) => process.stderr.write(`${line}\n`),
};

const USAGE = 'usage: npm run liftwise -- verify-snapshot FILE.json [--public-key KEY.pem] [--previous PREV.json]';

class UsageError extends Error {}

function readText(file: string, what: string): string {
  try {
    return fs.readFileSync(file, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    throw new UsageError(`cannot read the ${what} ${file}${code ? ` (${code})` : ''}`);
  }
}

function readJson(file: string, what: string): unknown {
  const text = readText(file, what);
  try {
    return JSON.parse(text) as unknown;
  } catch (err) {
    throw new UsageError(`the ${what} ${file} is not JSON: ${err instanceof Error ? err.message : String(err)}`);
  }
}

function readPublicKey(file: string): KeyObject {
  try {
    return parsePublicKeyPem(readText(file, 'public key file'));
  } catch (err) {
    if (err instanceof UsageError) throw err;
    throw new UsageError(`${file}: ${err instanceof Error ? err.message : String(err)}`);
  }
}

/** The header hash of the previous snapshot, recomputed (its recorded `hash` is not trusted). */
function previousHashFrom(file: string): string {
  const json = readJson(file, 'previous snapshot file');
  const inner = json !== null && typeof json === 'object' && 'snapshot' in json ? json.snapshot : json;
  const parsed = sealedSnapshotSchema.safeParse(inner);
  if (!parsed.success) throw new UsageError(`the previous snapshot file ${file} holds no sealed snapshot`);
  try {
    return headerHashOf(parsed.data);
  } catch (err) {
    throw new UsageError(`the previous snapshot file ${file} cannot be hashed: ${err instanceof Error ? err.message : String(err)}`);
  }
}

function checkLine(check: SnapshotCheck): string {
  const status = check.skipped ? 'skip' : check.ok ? 'ok  ' : 'FAIL';
  return `${status} ${check.name.padEnd(12)} ${check.detail}`;
}

export async function run(argv: string[], io: CliOutput = processOutput): Promise<number> {
  try {
    const { values, positionals } = parseArgs({
      args: argv,
      allowPositionals: true,
      options: {
        'public-key': { type: 'string' },
        previous: { type: 'string' },
        help: { type: 'boolean', short: 'h' },
      },
    });
    if (values.help) {
      io.out(USAGE);
      return 0;
    }
    if (positionals.length !== 1) throw new UsageError(positionals.length ? 'give exactly one snapshot file' : 'give the snapshot file to verify');

    const candidate = readJson(positionals[0], 'snapshot file');
    const pinned = values['public-key'] === undefined ? null : readPublicKey(values['public-key']);
    const expectedPreviousHash = values.previous === undefined ? undefined : previousHashFrom(values.previous);

    const result = verifySnapshotExport(candidate, { pinnedPublicKey: pinned, expectedPreviousHash });
    for (const warning of result.warnings) io.err(`warning: ${warning}`);
    for (const check of result.checks) io.out(checkLine(check));
    const failed = result.checks.filter((c) => !c.ok);
    io.out(result.valid ? 'VALID' : `INVALID: ${failed.map((c) => `${c.name}: ${c.detail}`).join('; ')}`);
    return result.valid ? 0 : 1;
  } catch (err) {
    // parseArgs reports unknown options and missing values as TypeErrors with a code.
    const isArgError = err instanceof TypeError && 'code' in err && String(err.code).startsWith('ERR_PARSE_ARGS');
    if (err instanceof UsageError || isArgError) {
      io.err(`verify-snapshot: ${err.message}`);
      io.err(USAGE);
      return 2;
    }
    throw err;
  }
}
