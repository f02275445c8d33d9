/**
 * Sealing and verifying snapshots. Pure: no database, no HTTP, no files.
 *
 * The scheme (also in shared/api/snapshots.ts, which holds the document's schema):
 *   contentHash = SHA-256 hex of the RFC 8785 canonical JSON of `content`
 *   header      = RFC 8785 canonical JSON of { version, contentHash, previousHash, sealedAt, sealedBy }
 *   hash        = SHA-256 hex of the UTF-8 bytes of `header`
 *   signature   = Ed25519 over the UTF-8 bytes of `header` (not over `hash`), in base64.
 * Signing the header itself means a verifier that trusts nothing in the document rebuilds the
 * signed bytes from the fields it can see; the `hash` field is then an index for the chain,
 * checked on its own so that a changed `hash` is named as such.
 * `keyId` and `algorithm` are outside the signed bytes; the verifier checks them against the key.
 */
import { createHash, sign, verify, type KeyObject } from 'node:crypto';
import {
  SNAPSHOT_SEAL_ALGORITHM,
  SNAPSHOT_SEAL_VERSION,
  sealedSnapshotSchema,
  type SealedSnapshot,
  type SnapshotCheck,
  type SnapshotVerification,
} from '@shared/api/snapshots.ts';
import { canonicalJson, type JsonObject } from './canonical-json.ts';
import { keyIdOf, parsePublicKeyPem } from './keys.ts';

export class SealError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SealError';
  }
}

export interface SealInput {
  /** What is sealed: any JSON object (scenario rows, summary, regime call version, run checksums...). */
  content: JsonObject;
  /** The `hash` of the latest snapshot before this one; null for the first. */
  previousHash: string | null;
  sealedAt: Date | string;
  sealedBy: string;
}

export interface SigningKey {
  privateKey: KeyObject;
  keyId: string;
}

export function sha256Hex(text: string): string {
  return createHash('sha256').update(text, 'utf8').digest('hex');
}

type HeaderFields = Pick<SealedSnapshot, 'version' | 'contentHash' | 'previousHash' | 'sealedAt' | 'sealedBy'>;

/** The canonical header text: the exact bytes that are hashed into `hash` and signed. */
export function sealHeader(doc: HeaderFields): string {
  const { version, contentHash, previousHash, sealedAt, sealedBy } = doc;
  return canonicalJson({ version, contentHash, previousHash, sealedAt, sealedBy });
}

/** The hash a document's header fields give (what the next snapshot must name as previousHash). */
export function headerHashOf(doc: HeaderFields): string {
  return sha256Hex(sealHeader(doc));
}

function isoTime(value: Date | string): string {
  const time = value instanceof Date ? value : new Date(value);
  if (Number.isNaN(time.getTime())) throw new SealError(`sealedAt ${String(value)} is not a valid time`);
  return time.toISOString();
}

/**
 * Seal a snapshot: canonicalise, hash, chain to the previous hash and sign with the server key.
 * The returned content is a fresh copy parsed back from its canonical JSON, so later changes to
 * the caller's object cannot drift away from what was hashed.
 * @throws CanonicalJsonError when the content holds a value JSON cannot carry (with its path)
 * @throws SealError for a malformed previousHash, sealedAt or sealedBy
 */
export function sealSnapshot(input: SealInput, key: SigningKey): SealedSnapshot {
  if (input.previousHash !== null && !/^[0-9a-f]{64}$/.test(input.previousHash)) {
    throw new SealError(`previousHash must be null or 64 lowercase hex digits, got ${JSON.stringify(input.previousHash)}`);
  }
  if (typeof input.sealedBy !== 'string' || input.sealedBy.length === 0) throw new SealError('sealedBy must name who sealed');
  if (input.content === null || typeof input.content !== 'object' || Array.isArray(input.content)) {
    throw new SealError('content must be a JSON object');
  }
  const contentText = canonicalJson(input.content);
  const header: HeaderFields = {
    version: SNAPSHOT_SEAL_VERSION,
    contentHash: sha256Hex(contentText),
    previousHash: input.previousHash,
    sealedAt: isoTime(input.sealedAt),
    sealedBy: input.sealedBy,
  };
  const headerText = sealHeader(header);
  const signature = sign(null, Buffer.from(headerText, 'utf8'), key.privateKey).toString('base64');
  const doc: SealedSnapshot = {
    version: header.version,
    content: JSON.parse(contentText) as JsonObject,
    sealedAt: header.sealedAt,
    sealedBy: header.sealedBy,
    previousHash: header.previousHash,
    contentHash: header.contentHash,
    hash: sha256Hex(headerText),
    signature,
    keyId: key.keyId,
    algorithm: SNAPSHOT_SEAL_ALGORITHM,
  };
  return sealedSnapshotSchema.parse(doc);
}

export interface VerifyOptions {
  /**
   * The hash the document must name as previousHash (null: it must be the first snapshot).
   * Left out, the chain link is not checked (reported as skipped).
   */
  expectedPreviousHash?: string | null;
}

const short = (hex: string | null) => (hex === null ? 'null' : `${hex.slice(0, 16)}…`);

function formatIssues(error: { issues: { path: PropertyKey[]; message: string }[] }): string {
  return error.issues
    .slice(0, 3)
    .map((i) => `${i.path.length ? i.path.map(String).join('.') : '(document)'}: ${i.message}`)
    .join('; ');
}

function checkSignature(doc: SealedSnapshot, headerText: string, publicKey: KeyObject): SnapshotCheck {
  const name = 'signature';
  if (publicKey.asymmetricKeyType !== 'ed25519') {
    return { name, ok: false, detail: `the public key is ${publicKey.asymmetricKeyType ?? 'unknown'}, not Ed25519` };
  }
  const keyId = keyIdOf(publicKey);
  const signature = Buffer.from(doc.signature, 'base64');
  // Base64 has spare bits in its last digit: insist on the one canonical spelling of the bytes.
  if (signature.length !== 64 || signature.toString('base64') !== doc.signature) {
    return { name, ok: false, detail: 'the signature is not a canonical base64 64-byte Ed25519 signature' };
  }
  const good = verify(null, Buffer.from(headerText, 'utf8'), publicKey, signature);
  if (keyId !== doc.keyId) {
    return { name, ok: false, detail: `the snapshot names key ${doc.keyId} but the public key is ${keyId}${good ? ' (the signature itself verifies)' : '; the signature does not verify'}` };
  }
  return good
    ? { name, ok: true, detail: `Ed25519 signature verifies with key ${keyId}` }
    : { name, ok: false, detail: `the Ed25519 signature does not verify with key ${keyId}` };
}

function checkChain(doc: SealedSnapshot, options: VerifyOptions): SnapshotCheck {
  const name = 'chain';
  if (options.expectedPreviousHash === undefined) {
    const what = doc.previousHash === null ? 'it claims to be the first snapshot' : `it links to ${short(doc.previousHash)}`;
    return { name, ok: true, skipped: true, detail: `previous snapshot not given, link not checked (${what})` };
  }
  if (doc.previousHash === options.expectedPreviousHash) {
    return { name, ok: true, detail: doc.previousHash === null ? 'first snapshot of the chain' : `links to previous snapshot ${short(doc.previousHash)}` };
  }
  return {
    name,
    ok: false,
    detail: `previousHash is ${short(doc.previousHash)} but the previous snapshot's hash is ${short(options.expectedPreviousHash)}`,
  };
}

/**
 * Verify a sealed document: its form, the content hash, the header hash, the signature with the
 * given public key (null: not checked, reported as skipped) and, when asked, the chain link.
 * Never throws on a bad document; each failed check says what is wrong.
 */
export function verifySnapshot(
  candidate: unknown,
  publicKey: KeyObject | string | null,
  options: VerifyOptions = {},
): SnapshotVerification {
  const parsed = sealedSnapshotSchema.safeParse(candidate);
  if (!parsed.success) {
    return { valid: false, checks: [{ name: 'format', ok: false, detail: `not a sealed snapshot: ${formatIssues(parsed.error)}` }] };
  }
  const doc = parsed.data;
  const checks: SnapshotCheck[] = [
    { name: 'format', ok: true, detail: `sealed snapshot v${doc.version}, sealed ${doc.sealedAt} by ${doc.sealedBy}` },
  ];

  let contentHash: string | null = null;
  let contentError = '';
  try {
    contentHash = sha256Hex(canonicalJson(doc.content));
  } catch (err) {
    contentError = err instanceof Error ? err.message : String(err);
  }
  checks.push(
    contentHash === doc.contentHash
      ? { name: 'content-hash', ok: true, detail: `content SHA-256 ${short(contentHash)}` }
      : { name: 'content-hash', ok: false, detail: contentHash === null ? contentError : `content hashes to ${short(contentHash)}, the snapshot records ${short(doc.contentHash)}` },
  );

  let headerText: string | null = null;
  try {
    headerText = sealHeader(doc);
  } catch (err) {
    const detail = `the header cannot be canonicalised: ${err instanceof Error ? err.message : String(err)}`;
    checks.push({ name: 'hash', ok: false, detail }, { name: 'signature', ok: false, detail }, checkChain(doc, options));
    return { valid: false, checks };
  }
  const headerHash = sha256Hex(headerText);
  checks.push(
    headerHash === doc.hash
      ? { name: 'hash', ok: true, detail: `header SHA-256 ${short(headerHash)}` }
      : { name: 'hash', ok: false, detail: `the header hashes to ${short(headerHash)}, the snapshot records ${short(doc.hash)}` },
  );

  if (publicKey === null) {
    checks.push({ name: 'signature', ok: true, skipped: true, detail: 'no public key given, signature not checked' });
  } else {
    let key: KeyObject | null = null;
    try {
      key = typeof publicKey === 'string' ? parsePublicKeyPem(publicKey) : publicKey;
    } catch (err) {
      checks.push({ name: 'signature', ok: false, detail: err instanceof Error ? err.message : String(err) });
    }
    if (key) checks.push(checkSignature(doc, headerText, key));
  }

  checks.push(checkChain(doc, options));
  return { valid: checks.every((c) => c.ok), checks };
}

export interface ChainBreak {
  index: number;
  /** The hash the broken snapshot records (or null when it is not even a snapshot). */
  hash: string | null;
  reason: string;
}

export interface ChainVerification {
  valid: boolean;
  count: number;
  /** The first snapshot, in chain order, that fails; null when the whole chain holds. */
  firstBroken: ChainBreak | null;
}

/**
 * Verify snapshots in the order they were sealed: each document, and that each names the
 * recomputed header hash of the one before it. The first names `firstPreviousHash` (default
 * null: the chain starts at the genesis snapshot).
 */
export function verifyChain(
  docs: readonly unknown[],
  options: { publicKey?: KeyObject | string | null; firstPreviousHash?: string | null } = {},
): ChainVerification {
  let expected: string | null = options.firstPreviousHash ?? null;
  for (let index = 0; index < docs.length; index++) {
    const result = verifySnapshot(docs[index], options.publicKey ?? null, { expectedPreviousHash: expected });
    const failed = result.checks.find((c) => !c.ok);
    const parsed = sealedSnapshotSchema.safeParse(docs[index]);
    if (failed || !parsed.success) {
      const hash = parsed.success ? parsed.data.hash : null;
      const label = `snapshot #${index}${hash ? ` (${short(hash)})` : ''}`;
      return { valid: false, count: docs.length, firstBroken: { index, hash, reason: `${label}: ${failed?.name ?? 'format'}: ${failed?.detail ?? 'not a sealed snapshot'}` } };
    }
    expected = headerHashOf(parsed.data);
  }
  return { valid: true, count: docs.length, firstBroken: null };
}
