/**
 * The server's Ed25519 seal key. Generated once, at first use, into `<dataDir>/keys/`:
 *   seal-ed25519.key  private key, PKCS#8 PEM, mode 0600
 *   seal-ed25519.pub  public key, SPKI PEM (what GET /api/snapshots/public-key serves)
 * and read back on every later start. The public key is always derived from the private key;
 * the .pub file is a convenience copy and must agree with it.
 */
import { createHash, createPrivateKey, createPublicKey, generateKeyPairSync, type KeyObject } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';

export const PRIVATE_KEY_FILE = 'seal-ed25519.key';
export const PUBLIC_KEY_FILE = 'seal-ed25519.pub';

export interface SealKey {
  privateKey: KeyObject;
  publicKey: KeyObject;
  /** SPKI PEM, as served and embedded in exports. */
  publicKeyPem: string;
  keyId: string;
}

export class SealKeyError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'SealKeyError';
  }
}

/** Short key id: the first 16 hex digits of the SHA-256 of the DER SubjectPublicKeyInfo. */
export function keyIdOf(publicKey: KeyObject): string {
  const der = publicKey.export({ type: 'spki', format: 'der' });
  return createHash('sha256').update(der).digest('hex').slice(0, 16);
}

export function publicKeyPemOf(publicKey: KeyObject): string {
  return publicKey.export({ type: 'spki', format: 'pem' }).toString();
}

/**
 * Read an Ed25519 public key from PEM text.
 * @throws SealKeyError when the text is no PEM public key or the key is not Ed25519.
 */
export function parsePublicKeyPem(pem: string): KeyObject {
  let key: KeyObject;
  try {
    key = createPublicKey({ key: pem, format: 'pem' });
  } catch (err) {
    throw new SealKeyError(`not a PEM public key (${err instanceof Error ? err.message : String(err)})`);
  }
  if (key.asymmetricKeyType !== 'ed25519') {
    throw new SealKeyError(`the public key is ${key.asymmetricKeyType ?? 'of unknown type'}, not Ed25519`);
  }
  return key;
}

function sealKeyFrom(privateKey: KeyObject): SealKey {
  const publicKey = createPublicKey(privateKey);
  return { privateKey, publicKey, publicKeyPem: publicKeyPemOf(publicKey), keyId: keyIdOf(publicKey) };
}

function readPrivateKey(file: string): KeyObject {
  if (process.platform !== 'win32') {
    const mode = fs.statSync(file).mode & 0o777;
    if (mode & 0o077) {
      throw new SealKeyError(
        `the seal private key ${file} is readable by others (mode ${mode.toString(8)}); run chmod 600 on it`,
      );
    }
  }
  let key: KeyObject;
  try {
    key = createPrivateKey({ key: fs.readFileSync(file, 'utf8'), format: 'pem' });
  } catch (err) {
    throw new SealKeyError(`cannot read the seal private key ${file}: ${err instanceof Error ? err.message : String(err)}`);
  }
  if (key.asymmetricKeyType !== 'ed25519') {
    throw new SealKeyError(`the seal private key ${file} is ${key.asymmetricKeyType ?? 'of unknown type'}, not Ed25519`);
  }
  return key;
}

/**
 * Write a new private key without ever leaving a half-written or world-readable file, and
 * without overwriting a key another process wrote first (link() fails when the name exists).
 * Returns false when another process won the race.
 */
function writeNewPrivateKey(file: string, pem: string): boolean {
  const temp = `${file}.${process.pid}.${Date.now()}.tmp`;
  fs.writeFileSync(temp, pem, { mode: 0o600, flag: 'wx' });
  fs.chmodSync(temp, 0o600);
  try {
    fs.linkSync(temp, file);
    return true;
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'EEXIST') return false;
    throw err;
  } finally {
    fs.rmSync(temp, { force: true });
  }
}

/** The seal key of this data folder, created at first use. */
export function loadOrCreateSealKey(dataDir: string): SealKey {
  const dir = path.join(dataDir, 'keys');
  const privateFile = path.join(dir, PRIVATE_KEY_FILE);
  const publicFile = path.join(dir, PUBLIC_KEY_FILE);
  fs.mkdirSync(dir, { recursive: true, mode: 0o700 });

  if (!fs.existsSync(privateFile)) {
    const { privateKey } = generateKeyPairSync('ed25519');
    writeNewPrivateKey(privateFile, privateKey.export({ type: 'pkcs8', format: 'pem' }).toString());
  }
  const key = sealKeyFrom(readPrivateKey(privateFile));

  if (!fs.existsSync(publicFile)) {
    fs.writeFileSync(publicFile, key.publicKeyPem, { mode: 0o644 });
  } else {
    const stored = fs.readFileSync(publicFile, 'utf8');
    let storedId: string;
    try {
      storedId = keyIdOf(parsePublicKeyPem(stored));
    } catch (err) {
      throw new SealKeyError(`${publicFile}: ${err instanceof Error ? err.message : String(err)}`);
    }
    if (storedId !== key.keyId) {
      throw new SealKeyError(
        `${publicFile} (key ${storedId}) does not belong to the private key ${privateFile} (key ${key.keyId})`,
      );
    }
  }
  return key;
}
