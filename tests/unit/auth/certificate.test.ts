import { spawnSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { selfSignedCertificate } from '../../../server/dev/idp/certificate.ts';

describe('the local identity provider certificate', () => {
  const keys = crypto.generateKeyPairSync('rsa', { modulusLength: 2048 });
  const pem = selfSignedCertificate(keys, 'Liftwise local identity provider', 30);

  it('parses as X.509, is self-signed by the key and valid now', () => {
    const cert = new crypto.X509Certificate(pem);
    expect(cert.subject).toBe('CN=Liftwise local identity provider');
    expect(cert.issuer).toBe(cert.subject);
    expect(cert.verify(keys.publicKey)).toBe(true);
    expect(cert.checkPrivateKey(keys.privateKey)).toBe(true);
    expect(Date.parse(cert.validFrom)).toBeLessThan(Date.now());
    expect(Date.parse(cert.validTo)).toBeGreaterThan(Date.now() + 28 * 86_400_000);
  });

  it('is not verified by another key', () => {
    const other = crypto.generateKeyPairSync('rsa', { modulusLength: 2048 });
    expect(new crypto.X509Certificate(pem).verify(other.publicKey)).toBe(false);
  });

  it.runIf(spawnSync('sh', ['-c', 'command -v openssl']).status === 0)('reads as a SHA-256, version 3 certificate (reference tool: openssl x509)', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
    const file = path.join(dir, 'cert.pem');
    fs.writeFileSync(file, pem);
    const text = spawnSync('openssl', ['x509', '-in', file, '-noout', '-text'], { encoding: 'utf8' }).stdout;
    expect(text).toContain('Version: 3 (0x2)');
    expect(text).toContain('Signature Algorithm: sha256WithRSAEncryption');
    expect(text).toMatch(/Public-Key: \(2048 bit\)/);
    expect(spawnSync('openssl', ['verify', '-CAfile', file, file], { encoding: 'utf8' }).stdout.trim()).toBe(`${file}: OK`);
    fs.rmSync(dir, { recursive: true });
  });
});
