/**
 * The snapshot export file (canonical JSON): `{ "publicKey": PEM, "snapshot": sealed document }`,
 * and its offline verification, shared by the verify-snapshot command and any server code that
 * checks an uploaded export.
 *
 * Which key counts: a pinned key (the server's, obtained separately) proves who signed; the
 * key embedded in the file only proves the document is unchanged since it was signed with that
 * key, since whoever alters the file can also replace the key. So a pinned key always wins, an
 * embedded key that differs from it fails the `public-key` check, and using the embedded key
 * produces a warning.
 */
import type { KeyObject } from 'node:crypto';
import {
  sealedSnapshotSchema,
  snapshotExportSchema,
  type SealedSnapshot,
  type SnapshotCheck,
  type SnapshotExport,
  type SnapshotVerification,
} from '@shared/api/snapshots.ts';
import { canonicalJson } from './canonical-json.ts';
import { keyIdOf, parsePublicKeyPem, publicKeyPemOf } from './keys.ts';
import { verifySnapshot, type VerifyOptions } from './seal.ts';

export function snapshotExport(snapshot: SealedSnapshot, publicKeyPem: string): SnapshotExport {
  return snapshotExportSchema.parse({ snapshot, publicKey: publicKeyPem });
}

/** The export file's text: RFC 8785 canonical JSON of the export. */
export function snapshotExportText(snapshot: SealedSnapshot, publicKeyPem: string): string {
  return canonicalJson(snapshotExport(snapshot, publicKeyPem));
}

export interface ExportVerification extends SnapshotVerification {
  /** Which key the signature was checked with; null when there was none. */
  keySource: 'pinned' | 'embedded' | null;
  warnings: string[];
}

interface KeyChoice {
  key: KeyObject | null;
  source: ExportVerification['keySource'];
  check: SnapshotCheck;
  warnings: string[];
}

function chooseKey(embeddedPem: string | null, pinned: KeyObject | null): KeyChoice {
  const name = 'public-key';
  if (pinned) {
    const pinnedId = keyIdOf(pinned);
    if (embeddedPem !== null && embeddedPem !== publicKeyPemOf(pinned)) {
      let embeddedId = 'unreadable';
      try {
        embeddedId = keyIdOf(parsePublicKeyPem(embeddedPem));
      } catch {
        // the detail below says it differs; an unreadable embedded key is just as wrong
      }
      return { key: pinned, source: 'pinned', warnings: [], check: { name, ok: false, detail: `the embedded key (${embeddedId}) differs from the pinned key ${pinnedId}` } };
    }
    const also = embeddedPem === null ? 'the file embeds no key' : 'same as the embedded key';
    return { key: pinned, source: 'pinned', warnings: [], check: { name, ok: true, detail: `pinned key ${pinnedId}, ${also}` } };
  }
  if (embeddedPem === null) {
    return { key: null, source: null, warnings: [], check: { name, ok: false, detail: 'no public key: the file embeds none and none was pinned (--public-key)' } };
  }
  let embedded: KeyObject;
  try {
    embedded = parsePublicKeyPem(embeddedPem);
  } catch (err) {
    return { key: null, source: null, warnings: [], check: { name, ok: false, detail: `embedded key: ${err instanceof Error ? err.message : String(err)}` } };
  }
  // PEM has spare bits and optional whitespace: only the exact text the server exports is accepted.
  if (publicKeyPemOf(embedded) !== embeddedPem) {
    return { key: null, source: null, warnings: [], check: { name, ok: false, detail: 'the embedded key is not in the canonical PEM form the server exports' } };
  }
  const keyId = keyIdOf(embedded);
  return {
    key: embedded,
    source: 'embedded',
    warnings: [`using the public key embedded in the file (${keyId}): this shows the snapshot is unchanged since it was signed with that key, not who signed it; pin the server's key with --public-key`],
    check: { name, ok: true, detail: `embedded key ${keyId} (not pinned)` },
  };
}

/**
 * Verify an export file's parsed JSON: either the export `{ snapshot, publicKey }` or a bare
 * sealed document (which then needs a pinned key). A bad file never throws: the failed checks
 * say what is wrong.
 * @throws SealKeyError only when `pinnedPublicKey` is PEM text that is no Ed25519 public key
 *   (the caller's own input, reported as a usage error by the command line).
 */
export function verifySnapshotExport(
  candidate: unknown,
  options: VerifyOptions & { pinnedPublicKey?: KeyObject | string | null } = {},
): ExportVerification {
  const asExport = snapshotExportSchema.safeParse(candidate);
  const bare = asExport.success ? null : sealedSnapshotSchema.safeParse(candidate);
  if (!asExport.success && !bare?.success) {
    // Name the problems of the form the file seems to attempt: a bare document or an export.
    const looksBare = candidate !== null && typeof candidate === 'object' && !('snapshot' in candidate) && 'contentHash' in candidate;
    const issues = (looksBare ? bare!.error! : asExport.error).issues;
    const listed = issues.slice(0, 3).map((i) => `${i.path.map(String).join('.') || '(file)'}: ${i.message}`).join('; ');
    const what = looksBare ? 'not a sealed snapshot' : 'not a snapshot export';
    return { valid: false, keySource: null, warnings: [], checks: [{ name: 'format', ok: false, detail: `${what}: ${listed}` }] };
  }
  const doc = asExport.success ? asExport.data.snapshot : (bare!.data as SealedSnapshot);
  const embeddedPem = asExport.success ? asExport.data.publicKey : null;
  const pinned = typeof options.pinnedPublicKey === 'string' ? parsePublicKeyPem(options.pinnedPublicKey) : (options.pinnedPublicKey ?? null);
  const choice = chooseKey(embeddedPem, pinned);

  const result = verifySnapshot(doc, choice.key, options);
  const [format, ...rest] = result.checks;
  const checks = [format, choice.check, ...rest];
  if (!choice.key) {
    const at = checks.findIndex((c) => c.name === 'signature');
    checks[at] = { name: 'signature', ok: false, detail: 'not checked: no usable public key' };
  }
  return { valid: checks.every((c) => c.ok), checks, keySource: choice.source, warnings: choice.warnings };
}
