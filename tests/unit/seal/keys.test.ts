import { createHash, generateKeyPairSync, sign, verify } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import {
  PRIVATE_KEY_FILE,
  PUBLIC_KEY_FILE,
  SealKeyError,
  keyIdOf,
  loadOrCreateSealKey,
  parsePublicKeyPem,
} from '../../../server/seal/keys.ts';

const dirs: string[] = [];
function dataDir(): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  dirs.push(dir);
  return dir;
}
afterEach(() => {
  for (const dir of dirs.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});

describe('loadOrCreateSealKey', () => {
  it('creates an Ed25519 key pair at first use and reads the same key afterwards', () => {
    const dir = dataDir();
    const first = loadOrCreateSealKey(dir);
    expect(first.privateKey.asymmetricKeyType).toBe('ed25519');
    expect(fs.existsSync(path.join(dir, 'keys', PRIVATE_KEY_FILE))).toBe(true);
    expect(fs.readFileSync(path.join(dir, 'keys', PUBLIC_KEY_FILE), 'utf8')).toBe(first.publicKeyPem);

    const second = loadOrCreateSealKey(dir);
    expect(second.keyId).toBe(first.keyId);
    expect(second.publicKeyPem).toBe(first.publicKeyPem);
    const message = Buffer.from('sealed');
    expect(verify(null, message, first.publicKey, sign(null, message, second.privateKey))).toBe(true);
  });

  it('gives each data folder its own key', () => {
    expect(loadOrCreateSealKey(dataDir()).keyId).not.toBe(loadOrCreateSealKey(dataDir()).keyId);
  });

  it.skipIf(process.platform === 'win32')('writes the private key with mode 0600 and leaves no temporary file', () => {
    const dir = dataDir();
    loadOrCreateSealKey(dir);
    expect(fs.statSync(path.join(dir, 'keys', PRIVATE_KEY_FILE)).mode & 0o777).toBe(0o600);
    expect(fs.readdirSync(path.join(dir, 'keys')).sort()).toEqual([PRIVATE_KEY_FILE, PUBLIC_KEY_FILE].sort());
  });

  it.skipIf(process.platform === 'win32')('refuses a private key others can read', () => {
    const dir = dataDir();
    loadOrCreateSealKey(dir);
    fs.chmodSync(path.join(dir, 'keys', PRIVATE_KEY_FILE), 0o644);
    expect(() => loadOrCreateSealKey(dir)).toThrow(/readable by others.*chmod 600/);
  });

  it('refuses a public key file that belongs to another key', () => {
    const dir = dataDir();
    loadOrCreateSealKey(dir);
    const other = generateKeyPairSync('ed25519').publicKey.export({ type: 'spki', format: 'pem' }).toString();
    fs.writeFileSync(path.join(dir, 'keys', PUBLIC_KEY_FILE), other);
    expect(() => loadOrCreateSealKey(dir)).toThrow(SealKeyError);
  });

  it('writes the public key file again when it was removed', () => {
    const dir = dataDir();
    const key = loadOrCreateSealKey(dir);
    fs.rmSync(path.join(dir, 'keys', PUBLIC_KEY_FILE));
    expect(loadOrCreateSealKey(dir).keyId).toBe(key.keyId);
    expect(fs.readFileSync(path.join(dir, 'keys', PUBLIC_KEY_FILE), 'utf8')).toBe(key.publicKeyPem);
  });
});

describe('keyIdOf and parsePublicKeyPem', () => {
  it('the key id is the first 16 hex digits of the SHA-256 of the DER SPKI', () => {
    const { publicKey } = generateKeyPairSync('ed25519');
    const der = publicKey.export({ type: 'spki', format: 'der' });
    expect(keyIdOf(publicKey)).toBe(createHash('sha256').update(der).digest('hex').slice(0, 16));
    expect(keyIdOf(publicKey)).toMatch(/^[0-9a-f]{16}$/);
  });

  it('refuses text that is no PEM key, and keys that are not Ed25519', () => {
    expect(() => parsePublicKeyPem('not a key')).toThrow(/not a PEM public key/);
    const ec = generateKeyPairSync('ec', { namedCurve: 'P-256' }).publicKey.export({ type: 'spki', format: 'pem' }).toString();
    expect(() => parsePublicKeyPem(ec)).toThrow(/ec, not Ed25519/);
  });
});
