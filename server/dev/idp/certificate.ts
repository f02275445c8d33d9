/**
 * A self-signed X.509 certificate for the local identity provider's RSA key, written as DER by
 * hand. node:crypto makes keys and signatures but not certificates, and no certificate library
 * (node-forge, selfsigned) is installed: the structure is small (RFC 5280 section 4.1), and the
 * tests check the result with node's own X509Certificate parser.
 */
import crypto from 'node:crypto';

function length(n: number): Buffer {
  if (n < 0x80) return Buffer.from([n]);
  const bytes: number[] = [];
  for (let v = n; v > 0; v = Math.floor(v / 256)) bytes.unshift(v & 0xff);
  return Buffer.from([0x80 | bytes.length, ...bytes]);
}

function tlv(tag: number, content: Buffer): Buffer {
  return Buffer.concat([Buffer.from([tag]), length(content.length), content]);
}

const sequence = (...parts: Buffer[]) => tlv(0x30, Buffer.concat(parts));
const set = (...parts: Buffer[]) => tlv(0x31, Buffer.concat(parts));
const utf8 = (s: string) => tlv(0x0c, Buffer.from(s, 'utf8'));
const nullValue = () => Buffer.from([0x05, 0x00]);

function integer(bytes: Buffer): Buffer {
  // DER integers are signed: a leading byte >= 0x80 needs a zero in front to stay positive.
  return tlv(0x02, bytes[0] >= 0x80 ? Buffer.concat([Buffer.from([0]), bytes]) : bytes);
}

function oid(dotted: string): Buffer {
  const [a, b, ...rest] = dotted.split('.').map(Number);
  const out = [40 * a + b];
  for (const arc of rest) {
    const chunk: number[] = [arc & 0x7f];
    for (let v = Math.floor(arc / 128); v > 0; v = Math.floor(v / 128)) chunk.unshift((v & 0x7f) | 0x80);
    out.push(...chunk);
  }
  return tlv(0x06, Buffer.from(out));
}

function utcTime(d: Date): Buffer {
  // UTCTime covers 1950-2049; GeneralizedTime after that (RFC 5280 section 4.1.2.5).
  const iso = d.toISOString().replace(/[-:T]/g, '').slice(0, 14);
  return d.getUTCFullYear() < 2050 ? tlv(0x17, Buffer.from(`${iso.slice(2)}Z`)) : tlv(0x18, Buffer.from(`${iso}Z`));
}

const SHA256_WITH_RSA = '1.2.840.113549.1.1.11';
const COMMON_NAME = '2.5.4.3';

/** A PEM certificate for `keys`, self-signed with SHA-256, valid from yesterday for `days` days. */
export function selfSignedCertificate(keys: { publicKey: crypto.KeyObject; privateKey: crypto.KeyObject }, commonName: string, days = 3650): string {
  const name = sequence(set(sequence(oid(COMMON_NAME), utf8(commonName))));
  const algorithm = sequence(oid(SHA256_WITH_RSA), nullValue());
  const notBefore = new Date(Date.now() - 86_400_000);
  const notAfter = new Date(notBefore.getTime() + days * 86_400_000);
  const serial = crypto.randomBytes(16);
  // Positive (top bit clear) and minimal (first byte not zero): a leading zero byte would make the
  // DER integer non-canonical, and strict parsers refuse such a certificate.
  serial[0] = (serial[0] & 0x7f) | 0x40;
  const tbs = sequence(
    tlv(0xa0, integer(Buffer.from([2]))), // version 3
    integer(serial),
    algorithm,
    name,
    sequence(utcTime(notBefore), utcTime(notAfter)),
    name,
    keys.publicKey.export({ type: 'spki', format: 'der' }),
  );
  const signature = crypto.sign('sha256', tbs, keys.privateKey);
  const der = sequence(tbs, algorithm, tlv(0x03, Buffer.concat([Buffer.from([0]), signature])));
  const body = der.toString('base64').replace(/(.{64})/g, '$1\n').trim();
  return `-----BEGIN CERTIFICATE-----\n${body}\n-----END CERTIFICATE-----\n`;
}
