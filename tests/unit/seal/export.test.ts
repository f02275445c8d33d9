import { describe, expect, it } from 'vitest';
import { snapshotExportSchema } from '@shared/api/snapshots.ts';
import { canonicalJson } from '../../../server/seal/canonical-json.ts';
import { snapshotExportText, verifySnapshotExport } from '../../../server/seal/export.ts';
import { verifySnapshot } from '../../../server/seal/seal.ts';
import { mulberry32, sealedChain, testKey } from './fixtures.ts';

const key = testKey();
const [first, second] = sealedChain(key, 2);
const text = snapshotExportText(second, key.publicKeyPem);
const failedNames = (checks: { name: string; ok: boolean }[]) => checks.filter((c) => !c.ok).map((c) => c.name);

describe('the export file', () => {
  it('is the canonical JSON of { publicKey, snapshot } and matches the shared schema', () => {
    const parsed = JSON.parse(text) as unknown;
    expect(canonicalJson(parsed)).toBe(text);
    expect(snapshotExportSchema.parse(parsed)).toEqual({ snapshot: second, publicKey: key.publicKeyPem });
  });

  it('verifies with the embedded key, with a warning, and with a pinned key without one', () => {
    const embedded = verifySnapshotExport(JSON.parse(text), { expectedPreviousHash: first.hash });
    expect(embedded).toMatchObject({ valid: true, keySource: 'embedded' });
    expect(embedded.warnings.join(' ')).toMatch(/embedded in the file.*--public-key/);
    const pinned = verifySnapshotExport(JSON.parse(text), { pinnedPublicKey: key.publicKey, expectedPreviousHash: first.hash });
    expect(pinned).toMatchObject({ valid: true, keySource: 'pinned', warnings: [] });
    expect(pinned.checks.map((c) => c.name)).toEqual(['format', 'public-key', 'content-hash', 'hash', 'signature', 'chain']);
  });

  it('still verifies after being pretty-printed (the values are sealed, not the layout)', () => {
    const pretty = JSON.stringify(JSON.parse(text), null, 2);
    expect(verifySnapshotExport(JSON.parse(pretty), { pinnedPublicKey: key.publicKey }).valid).toBe(true);
  });

  it('a pinned key that differs from the embedded one fails public-key and signature', () => {
    const other = testKey();
    const result = verifySnapshotExport(JSON.parse(text), { pinnedPublicKey: other.publicKeyPem });
    expect(failedNames(result.checks)).toEqual(['public-key', 'signature']);
  });

  it('a forger who re-signs with their own key and embeds it passes only without a pinned key', () => {
    const forger = testKey();
    const [forged] = sealedChain(forger, 1);
    const forgedText = snapshotExportText(forged, forger.publicKeyPem);
    expect(verifySnapshotExport(JSON.parse(forgedText)).valid).toBe(true);
    expect(verifySnapshotExport(JSON.parse(forgedText), { pinnedPublicKey: key.publicKey }).valid).toBe(false);
  });

  it('a bare sealed document verifies with a pinned key and fails without one', () => {
    expect(verifySnapshotExport(second, { pinnedPublicKey: key.publicKey }).valid).toBe(true);
    const result = verifySnapshotExport(second);
    expect(failedNames(result.checks)).toEqual(['public-key', 'signature']);
  });

  it('an embedded key in a non-canonical PEM spelling is refused', () => {
    const exp = JSON.parse(text) as { publicKey: string };
    exp.publicKey = exp.publicKey.replace(/\n$/, '\r\n');
    expect(failedNames(verifySnapshotExport(exp).checks)).toEqual(['public-key', 'signature']);
  });

  it('a file that is no export fails the format check with the reason', () => {
    const result = verifySnapshotExport({ hello: 'world' });
    expect(result.valid).toBe(false);
    expect(result.checks).toHaveLength(1);
    expect(result.checks[0]).toMatchObject({ name: 'format', ok: false });
    expect(result.checks[0].detail).toMatch(/not a snapshot export/);
  });
});

/**
 * Single-character substitutions of the export text. A change that leaves the parsed value
 * identical (none is expected in canonical text, which has no free whitespace) must verify;
 * every other change must be caught, with the embedded key and with the pinned key.
 */
function mutations(source: string, from: number, to: number, wanted: number, seed: number) {
  const random = mulberry32(seed);
  const alphabet = '0123456789abcdefABCDEF+/=-_ ."\\:,{}[]nultrefxyzEÆ€';
  const found: string[] = [];
  let unparseable = 0;
  for (let attempt = 0; attempt < wanted * 20 && found.length < wanted; attempt++) {
    const at = from + Math.floor(random() * (to - from));
    const replacement = alphabet[Math.floor(random() * alphabet.length)];
    if (source[at] === replacement) continue;
    const changed = source.slice(0, at) + replacement + source.slice(at + 1);
    try {
      JSON.parse(changed);
      found.push(changed);
    } catch {
      unparseable++;
    }
  }
  return { found, unparseable };
}

describe('every single-character change of the exported JSON that still parses is detected', () => {
  const original = canonicalJson(JSON.parse(text));
  const contentStart = text.indexOf('"content":');
  const contentEnd = text.indexOf(',"contentHash":');

  it.each([
    ['anywhere in the file', 0, text.length, 300, 8785],
    ['inside the sealed content', contentStart, contentEnd, 300, 20261202],
  ])('%s', (_where, from, to, wanted, seed) => {
    const { found } = mutations(text, from, to, wanted, seed);
    expect(found.length).toBeGreaterThanOrEqual(wanted * 0.9);
    let identical = 0;
    for (const changed of found) {
      const parsed = JSON.parse(changed) as unknown;
      let same = false;
      try {
        same = canonicalJson(parsed) === original;
      } catch {
        same = false;
      }
      if (same) {
        identical++;
        expect(verifySnapshotExport(parsed).valid).toBe(true);
        continue;
      }
      const embedded = verifySnapshotExport(parsed, { expectedPreviousHash: first.hash });
      const pinned = verifySnapshotExport(parsed, { pinnedPublicKey: key.publicKey, expectedPreviousHash: first.hash });
      expect(embedded.valid, changed).toBe(false);
      expect(pinned.valid, changed).toBe(false);
    }
    expect(identical).toBeLessThan(found.length);
  });
});

describe('the offline verifier agrees with the server', () => {
  // The server checks the stored document with its own key and the previous row's hash;
  // offline, the export file is checked with the pinned key and the previous export.
  const cases: [string, (doc: typeof second) => unknown][] = [
    ['untouched', (d) => d],
    ['content changed', (d) => ({ ...d, content: { ...d.content, codeVersion: 'x' } })],
    ['sealedBy changed', (d) => ({ ...d, sealedBy: 'someone' })],
    ['hash changed', (d) => ({ ...d, hash: '0'.repeat(64) })],
    ['signature of the first', (d) => ({ ...d, signature: first.signature })],
    ['chain link changed and resealed', () => sealedChain(key, 1)[0]],
  ];
  it.each(cases)('%s', (_name, change) => {
    const doc = change(structuredClone(second));
    const server = verifySnapshot(doc, key.publicKey, { expectedPreviousHash: first.hash });
    const offline = verifySnapshotExport({ snapshot: doc, publicKey: key.publicKeyPem }, { pinnedPublicKey: key.publicKeyPem, expectedPreviousHash: first.hash });
    expect(offline.valid).toBe(server.valid);
    expect(offline.checks.filter((c) => c.name !== 'public-key')).toEqual(server.checks);
  });
});
