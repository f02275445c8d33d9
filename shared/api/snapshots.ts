/**
 * Sealed snapshots as they travel: the sealed document, its export file, the answer of
 * GET /api/snapshots/:id/verify and of GET /api/snapshots/public-key.
 *
 * How a document is sealed (server/seal/seal.ts):
 *   contentHash = SHA-256 hex of the RFC 8785 canonical JSON of `content`
 *   header      = RFC 8785 canonical JSON of { version, contentHash, previousHash, sealedAt, sealedBy }
 *   hash        = SHA-256 hex of the UTF-8 bytes of `header`
 *   signature   = base64 Ed25519 signature over the UTF-8 bytes of `header` (the same bytes `hash` digests)
 * `previousHash` is the `hash` of the snapshot sealed before it (null for the first), which
 * chains the snapshots. `keyId` names the signing key (first 16 hex of SHA-256 of its DER SPKI).
 */
import { z } from 'zod';

export const SNAPSHOT_SEAL_VERSION = 1;
export const SNAPSHOT_SEAL_ALGORITHM = 'Ed25519';

const sha256Hex = z.string().regex(/^[0-9a-f]{64}$/, 'a SHA-256 digest in 64 lowercase hex digits');

/** What was sealed. Opaque to the seal: any JSON object (rows, summary, versions, run checksums...). */
export const snapshotContentSchema = z.record(z.string(), z.json());

export const sealedSnapshotSchema = z.strictObject({
  version: z.literal(SNAPSHOT_SEAL_VERSION),
  content: snapshotContentSchema,
  /** ISO 8601 UTC time of sealing. */
  sealedAt: z.iso.datetime(),
  /** Who sealed it (the risk manager's user name). */
  sealedBy: z.string().min(1),
  previousHash: sha256Hex.nullable(),
  contentHash: sha256Hex,
  hash: sha256Hex,
  /** 64-byte Ed25519 signature in padded standard base64. */
  signature: z.string().regex(/^[A-Za-z0-9+/]{86}==$/, 'a 64-byte signature in base64'),
  keyId: z.string().regex(/^[0-9a-f]{16}$/, '16 lowercase hex digits'),
  algorithm: z.literal(SNAPSHOT_SEAL_ALGORITHM),
});
export type SealedSnapshot = z.infer<typeof sealedSnapshotSchema>;

/**
 * The canonical-JSON export file: the sealed document, and beside it the PEM public key of the
 * signer so it can be checked offline (`npm run liftwise -- verify-snapshot FILE.json`).
 * The embedded key only proves the document is unchanged since it was signed with that key;
 * pinning the server's key (--public-key) proves who signed it.
 */
export const snapshotExportSchema = z.strictObject({
  snapshot: sealedSnapshotSchema,
  publicKey: z.string().min(1),
});
export type SnapshotExport = z.infer<typeof snapshotExportSchema>;

/** `public-key` is checked only for export files (the embedded key against a pinned one). */
export const SNAPSHOT_CHECK_NAMES = ['format', 'public-key', 'content-hash', 'hash', 'signature', 'chain'] as const;
export type SnapshotCheckName = (typeof SNAPSHOT_CHECK_NAMES)[number];

export const snapshotCheckSchema = z.object({
  name: z.enum(SNAPSHOT_CHECK_NAMES),
  ok: z.boolean(),
  /** True when the check could not be made (e.g. the chain link offline, without the previous snapshot). */
  skipped: z.boolean().optional(),
  detail: z.string(),
});
export type SnapshotCheck = z.infer<typeof snapshotCheckSchema>;

export const snapshotVerificationSchema = z.object({
  valid: z.boolean(),
  checks: z.array(snapshotCheckSchema),
});
export type SnapshotVerification = z.infer<typeof snapshotVerificationSchema>;

export const snapshotPublicKeySchema = z.object({
  publicKey: z.string(),
  keyId: z.string(),
  algorithm: z.literal(SNAPSHOT_SEAL_ALGORITHM),
});
export type SnapshotPublicKey = z.infer<typeof snapshotPublicKeySchema>;
