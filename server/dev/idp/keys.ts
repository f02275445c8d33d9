/**
 * The local identity provider's signing key: RSA 2048 with a self-signed certificate, made at
 * first start into the git-ignored data folder and reused afterwards.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { selfSignedCertificate } from './certificate.ts';

export interface IdpKeys {
  privateKeyPem: string;
  certificatePem: string;
}

function writeAtomically(file: string, content: string): void {
  const temp = `${file}.${process.pid}.tmp`;
  fs.writeFileSync(temp, content, { mode: 0o600 });
  fs.renameSync(temp, file);
}

export function loadOrCreateIdpKeys(dataDir: string): IdpKeys {
  const dir = path.join(dataDir, 'idp');
  const keyFile = path.join(dir, 'signing-key.pem');
  const certFile = path.join(dir, 'signing-cert.pem');
  if (fs.existsSync(keyFile) && fs.existsSync(certFile)) {
    const keys = { privateKeyPem: fs.readFileSync(keyFile, 'utf8'), certificatePem: fs.readFileSync(certFile, 'utf8') };
    if (new crypto.X509Certificate(keys.certificatePem).checkPrivateKey(crypto.createPrivateKey(keys.privateKeyPem))) return keys;
  }
  fs.mkdirSync(dir, { recursive: true });
  const pair = crypto.generateKeyPairSync('rsa', { modulusLength: 2048 });
  const privateKeyPem = pair.privateKey.export({ type: 'pkcs8', format: 'pem' }).toString();
  const certificatePem = selfSignedCertificate(pair, 'Liftwise local identity provider');
  // The certificate is written last: a reader that finds it also finds its key.
  writeAtomically(keyFile, privateKeyPem);
  writeAtomically(certFile, certificatePem);
  return { privateKeyPem, certificatePem };
}
