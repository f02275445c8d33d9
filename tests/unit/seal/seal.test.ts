import { createHash, sign, verify } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { sealedSnapshotSchema, type SealedSnapshot, type SnapshotVerification } from '@shared/api/snapshots.ts';
import { CanonicalJsonError, canonicalJson } from '../../../server/seal/canonical-json.ts';
import { SealError, headerHashOf, sealHeader, sealSnapshot, verifyChain, verifySnapshot } from '../../../server/seal/seal.ts';
import { sealedChain, snapshotContent, testKey } from './fixtures.ts';

const key = testKey();
const [first, second, third] = sealedChain(key);

const failed = (result: SnapshotVerification) => result.checks.filter((c) => !c.ok).map((c) => c.name);
const clone = (doc: SealedSnapshot): SealedSnapshot => structuredClone(doc);

describe('sealSnapshot', () => {
  it('hashes the canonical content and header, and signs the header bytes', () => {
    const contentHash = createHash('sha256').update(canonicalJson(first.content)).digest('hex');
    expect(first.contentHash).toBe(contentHash);
    const header = canonicalJson({
      version: 1,
      contentHash,
      previousHash: null,
      sealedAt: '2026-12-02T06:00:00.000Z',
      sealedBy: 'risk.ingrid',
    });
    expect(sealHeader(first)).toBe(header);
    expect(first.hash).toBe(createHash('sha256').update(header).digest('hex'));
    expect(verify(null, Buffer.from(header), key.publicKey, Buffer.from(first.signature, 'base64'))).toBe(true);
    expect(first).toMatchObject({ version: 1, previousHash: null, keyId: key.keyId, algorithm: 'Ed25519' });
    expect(sealedSnapshotSchema.safeParse(first).success).toBe(true);
  });

  it('chains each snapshot to the hash of the one before', () => {
    expect(second.previousHash).toBe(first.hash);
    expect(third.previousHash).toBe(second.hash);
  });

  it('keeps a copy of the content, so later changes to the caller object do not alter the seal', () => {
    const content = snapshotContent();
    const doc = sealSnapshot({ content, previousHash: null, sealedAt: '2026-12-02T06:00:00Z', sealedBy: 'r' }, key);
    (content.summary as { rows: number }).rows = 99;
    expect(verifySnapshot(doc, key.publicKey).valid).toBe(true);
    expect((doc.content.summary as { rows: number }).rows).toBe(3);
  });

  it('normalises sealedAt to ISO 8601 UTC', () => {
    const doc = sealSnapshot({ content: {}, previousHash: null, sealedAt: '2026-12-02T07:00:00+01:00', sealedBy: 'r' }, key);
    expect(doc.sealedAt).toBe('2026-12-02T06:00:00.000Z');
  });

  it.each([
    ['a malformed previousHash', { previousHash: 'ABC' }, SealError, /previousHash/],
    ['an invalid time', { sealedAt: 'yesterday' }, SealError, /sealedAt/],
    ['an empty sealedBy', { sealedBy: '' }, SealError, /sealedBy/],
    ['an array as content', { content: [] as never }, SealError, /JSON object/],
    ['a NaN in the content', { content: { rows: [{ p50: NaN }] } }, CanonicalJsonError, /\$\.rows\[0\]\.p50/],
  ])('refuses %s', (_what, change, type, message) => {
    const input = { content: snapshotContent(), previousHash: null, sealedAt: new Date(), sealedBy: 'r', ...change };
    expect(() => sealSnapshot(input, key)).toThrow(type);
    expect(() => sealSnapshot(input, key)).toThrow(message);
  });
});

describe('verifySnapshot', () => {
  it('accepts an untouched snapshot, with every check named', () => {
    const result = verifySnapshot(second, key.publicKey, { expectedPreviousHash: first.hash });
    expect(result.valid).toBe(true);
    expect(result.checks.map((c) => [c.name, c.ok, c.skipped ?? false])).toEqual([
      ['format', true, false],
      ['content-hash', true, false],
      ['hash', true, false],
      ['signature', true, false],
      ['chain', true, false],
    ]);
  });

  it('accepts the key as PEM text too', () => {
    expect(verifySnapshot(first, key.publicKeyPem, { expectedPreviousHash: null }).valid).toBe(true);
  });

  it('reports the chain link as skipped, not failed, when the previous hash is not given', () => {
    const chain = verifySnapshot(second, key.publicKey).checks.find((c) => c.name === 'chain');
    expect(chain).toMatchObject({ ok: true, skipped: true });
  });

  const otherSignature = sign(null, Buffer.from('something else'), key.privateKey).toString('base64');
  const otherHash = 'c'.repeat(64);
  it.each<[keyof SealedSnapshot, unknown, string[]]>([
    ['version', 2, ['format']],
    ['content', { ...snapshotContent(), codeVersion: '0.1.1' }, ['content-hash']],
    ['sealedAt', '2026-12-02T06:01:00.000Z', ['hash', 'signature']],
    ['sealedBy', 'risk.mallory', ['hash', 'signature']],
    ['previousHash', otherHash, ['hash', 'signature', 'chain']],
    ['contentHash', otherHash, ['content-hash', 'hash', 'signature']],
    ['hash', otherHash, ['hash']],
    ['signature', otherSignature, ['signature']],
    ['keyId', '0123456789abcdef', ['signature']],
    ['algorithm', 'Ed448', ['format']],
  ])('a changed %s is detected and named', (field, value, names) => {
    const doc = { ...clone(first), [field]: value };
    const result = verifySnapshot(doc, key.publicKey, { expectedPreviousHash: null });
    expect(result.valid).toBe(false);
    expect(failed(result)).toEqual(names);
    for (const check of result.checks.filter((c) => !c.ok)) expect(check.detail.length).toBeGreaterThan(10);
  });

  it('a header that cannot be canonicalised (an unpaired surrogate) fails instead of throwing', () => {
    const result = verifySnapshot({ ...clone(first), sealedBy: 'risk.\ud800' }, key.publicKey);
    expect(failed(result)).toEqual(['hash', 'signature']);
    expect(result.checks.find((c) => c.name === 'hash')!.detail).toContain('surrogate');
  });

  it('content with an unpaired surrogate fails the content hash instead of throwing', () => {
    const result = verifySnapshot({ ...clone(first), content: { note: '\udc00' } }, key.publicKey);
    expect(failed(result)).toEqual(['content-hash']);
  });

  it('a missing or extra member fails the format check', () => {
    const { sealedBy: _dropped, ...missing } = clone(first);
    expect(failed(verifySnapshot(missing, key.publicKey))).toEqual(['format']);
    expect(failed(verifySnapshot({ ...clone(first), note: 'x' }, key.publicKey))).toEqual(['format']);
    expect(verifySnapshot('not a snapshot', key.publicKey).checks[0].detail).toMatch(/not a sealed snapshot/);
  });

  it('a change to any value inside the content is detected', () => {
    const leaves: (string | number)[][] = [];
    const walk = (value: unknown, at: (string | number)[]) => {
      if (value !== null && typeof value === 'object') {
        for (const [k, v] of Object.entries(value)) walk(v, [...at, Array.isArray(value) ? Number(k) : k]);
      } else leaves.push(at);
    };
    walk(first.content, []);
    expect(leaves.length).toBeGreaterThan(30);
    for (const at of leaves) {
      const doc = clone(first);
      let parent = doc.content as Record<string | number, unknown>;
      for (const step of at.slice(0, -1)) parent = parent[step] as Record<string | number, unknown>;
      const last = at[at.length - 1];
      const old = parent[last];
      parent[last] = typeof old === 'number' ? old * 2 + 1 : typeof old === 'string' ? `${old}x` : old === null ? 0 : !old;
      const result = verifySnapshot(doc, key.publicKey);
      expect(failed(result), `content path ${at.join('.')}`).toEqual(['content-hash']);
    }
  });

  it('a wrong public key fails the signature check, naming both keys', () => {
    const other = testKey();
    const result = verifySnapshot(first, other.publicKey, { expectedPreviousHash: null });
    expect(failed(result)).toEqual(['signature']);
    const detail = result.checks.find((c) => c.name === 'signature')!.detail;
    expect(detail).toContain(key.keyId);
    expect(detail).toContain(other.keyId);
  });

  it('a signature made by another key under the right key id fails', () => {
    const forger = testKey();
    const forged = sealSnapshot({ content: first.content, previousHash: null, sealedAt: first.sealedAt, sealedBy: first.sealedBy }, { ...forger, keyId: key.keyId });
    expect(failed(verifySnapshot(forged, key.publicKey))).toEqual(['signature']);
  });

  it('a signature whose base64 spare bits were changed is refused (one canonical spelling)', () => {
    const bytes = Buffer.from(first.signature, 'base64');
    const alphabet = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
    // The 86th digit carries 2 bits of the last byte and 4 spare bits: other digits decode the same.
    const alternative = [...alphabet]
      .map((c) => first.signature.slice(0, 85) + c + '==')
      .find((s) => s !== first.signature && Buffer.from(s, 'base64').equals(bytes));
    expect(alternative).toBeDefined();
    expect(failed(verifySnapshot({ ...clone(first), signature: alternative! }, key.publicKey))).toEqual(['signature']);
  });

  it('a non-Ed25519 or unreadable key fails the signature check instead of throwing', () => {
    expect(failed(verifySnapshot(first, 'not a key'))).toEqual(['signature']);
  });
});

describe('verifyChain', () => {
  it('accepts an intact chain', () => {
    expect(verifyChain([first, second, third], { publicKey: key.publicKey })).toEqual({ valid: true, count: 3, firstBroken: null });
    expect(verifyChain([second, third], { publicKey: key.publicKey, firstPreviousHash: first.hash }).valid).toBe(true);
  });

  it('names the first broken link when a snapshot is removed', () => {
    const result = verifyChain([first, third], { publicKey: key.publicKey });
    expect(result.valid).toBe(false);
    expect(result.firstBroken).toMatchObject({ index: 1, hash: third.hash });
    expect(result.firstBroken!.reason).toMatch(/^snapshot #1 .*chain: previousHash is/);
  });

  it('names the first broken link when snapshots are reordered', () => {
    expect(verifyChain([first, third, second]).firstBroken?.index).toBe(1);
    expect(verifyChain([second, first, third]).firstBroken?.index).toBe(0);
  });

  it('detects a rewritten middle snapshot even when it is consistently re-hashed and re-signed', () => {
    // An insider with the key rewrites #1 and reseals it: its hash changes, so #2 no longer links to it.
    const rewritten = sealSnapshot({ content: { ...second.content, codeVersion: 'forged' }, previousHash: first.hash, sealedAt: second.sealedAt, sealedBy: second.sealedBy }, key);
    const result = verifyChain([first, rewritten, third], { publicKey: key.publicKey });
    expect(result.firstBroken).toMatchObject({ index: 2 });
  });

  it('links to the recomputed hash of the previous snapshot, not the one it records', () => {
    const tampered = { ...clone(first), sealedBy: 'risk.mallory', hash: headerHashOf({ ...first, sealedBy: 'risk.mallory' }) };
    const result = verifyChain([tampered, second, third], { publicKey: key.publicKey });
    expect(result.firstBroken?.index).toBe(0);
    expect(result.firstBroken?.reason).toContain('signature');
    // Without a key the tampered first snapshot looks self-consistent, but the link to it breaks.
    expect(verifyChain([tampered, second, third], { publicKey: null }).valid).toBe(false);
  });

  it('names a tampered content in the middle of the chain', () => {
    const doc = clone(second);
    (doc.content.summary as { weightedP50GWh: number }).weightedP50GWh = 9.9;
    const result = verifyChain([first, doc, third], { publicKey: key.publicKey });
    expect(result.firstBroken).toMatchObject({ index: 1 });
    expect(result.firstBroken!.reason).toContain('content-hash');
  });

  it('a first snapshot that claims a predecessor breaks a chain that must start at the genesis', () => {
    expect(verifyChain([second, third]).firstBroken?.index).toBe(0);
  });
});
