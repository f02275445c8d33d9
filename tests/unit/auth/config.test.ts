import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig, splitPemCertificates } from '../../../server/config.ts';

const PEM = (body: string) => `-----BEGIN CERTIFICATE-----\n${body}\n-----END CERTIFICATE-----`;

function problems(env: Record<string, string>): string {
  try {
    loadConfig(env);
  } catch (err) {
    expect(err).toBeInstanceOf(ConfigError);
    return (err as ConfigError).message;
  }
  return '';
}

describe('sign-in settings', () => {
  it('derives the SP entity id and ACS URL from PUBLIC_URL, and uses the local IdP by default', () => {
    const { auth } = loadConfig({ PUBLIC_URL: 'https://liftwise.nordvale.example/' });
    expect(auth.acsUrl).toBe('https://liftwise.nordvale.example/auth/saml/acs');
    expect(auth.spEntityId).toBe('https://liftwise.nordvale.example/auth/saml/metadata');
    expect(auth.idp).toBeNull();
    expect(auth.secureCookies).toBe(true);
    expect(auth.sessionIdleMs).toBe(8 * 3_600_000);
    expect(auth.sessionAbsoluteMs).toBe(12 * 3_600_000);
    expect(loadConfig({}).auth.secureCookies).toBe(false);
  });

  it('pins several IdP certificates, with literal \\n line breaks allowed', () => {
    const two = `${PEM('QUFB')}\\n${PEM('QkJC')}`;
    const { auth } = loadConfig({ SAML_IDP_SSO_URL: 'https://idp.nordvale.example/sso', SAML_IDP_CERTS: two });
    expect(auth.idp?.certs).toHaveLength(2);
    expect(splitPemCertificates(two)[1]).toContain('QkJC');
  });

  it('reads the certificates from SAML_IDP_CERTS_FILE, and names a missing file', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
    const file = path.join(dir, 'idp.pem');
    fs.writeFileSync(file, `${PEM('QUFB')}\n${PEM('QkJC')}\n`);
    expect(loadConfig({ SAML_IDP_SSO_URL: 'https://idp.nordvale.example/sso', SAML_IDP_CERTS_FILE: file }).auth.idp?.certs).toHaveLength(2);
    expect(problems({ SAML_IDP_SSO_URL: 'https://idp.nordvale.example/sso', SAML_IDP_CERTS_FILE: path.join(dir, 'missing.pem') })).toMatch(/SAML_IDP_CERTS_FILE/);
    fs.rmSync(dir, { recursive: true });
  });

  it('refuses a real IdP without a certificate', () => {
    expect(problems({ SAML_IDP_SSO_URL: 'https://idp.nordvale.example/sso' })).toMatch(/SAML_IDP_CERTS/);
    expect(problems({ SAML_IDP_SSO_URL: 'https://idp.nordvale.example/sso', SAML_IDP_CERTS: 'not a pem' })).toMatch(/SAML_IDP_CERTS/);
  });

  it('production needs a real IdP and a session secret', () => {
    const message = problems({ NODE_ENV: 'production' });
    expect(message).toMatch(/SAML_IDP_SSO_URL/);
    expect(message).toMatch(/SESSION_SECRET/);
    expect(message).toMatch(/SMTP_URL/);
    expect(problems({ NODE_ENV: 'production', SAML_IDP_SSO_URL: 'https://idp.x/sso', SAML_IDP_CERTS: PEM('QUFB'), SESSION_SECRET: 'short' })).toMatch(/SESSION_SECRET/);
    expect(
      loadConfig({
        NODE_ENV: 'production',
        SAML_IDP_SSO_URL: 'https://idp.x/sso',
        SAML_IDP_CERTS: PEM('QUFB'),
        SESSION_SECRET: `${'a'.repeat(32)},${'b'.repeat(40)}`,
        SMTP_URL: 'smtp://mail.nordvale.example:587',
      }).auth.sessionSecrets,
    ).toHaveLength(2);
  });
});
