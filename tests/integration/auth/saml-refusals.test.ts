/**
 * The service provider against an identity provider configured only by its certificate: a
 * correct response signs in; each bent response is refused with 401 and a failed sign-in in the
 * audit trail naming the reason.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { b64, authnRequestId, newKeyMaterial, responseXml, signResponse, TEST_IDP_ENTITY_ID, TEST_IDP_SSO_URL, type KeyMaterial, type ResponseOptions } from './test-idp.ts';
import { CookieJar, form, me, send, startAuthTestApp, startSignIn, type AuthTestApp } from './harness.ts';

const RSA_SHA1 = 'http://www.w3.org/2000/09/xmldsig#rsa-sha1';

describe('SAML responses from an independently set-up identity provider', () => {
  let t: AuthTestApp;
  let keys: KeyMaterial;
  let stranger: KeyMaterial;
  const sp = () => ({ spEntityId: t.config.auth.spEntityId, acsUrl: t.config.auth.acsUrl });

  beforeAll(async () => {
    keys = newKeyMaterial('Test identity provider');
    stranger = newKeyMaterial('Unknown signer');
    const rollover = newKeyMaterial('Retired key of the test identity provider');
    t = await startAuthTestApp({
      SAML_IDP_SSO_URL: TEST_IDP_SSO_URL,
      SAML_IDP_ENTITY_ID: TEST_IDP_ENTITY_ID,
      SAML_IDP_CERTS: rollover.certificatePem + keys.certificatePem,
    });
  });
  afterAll(async () => {
    await t.close();
  });

  /** Starts a sign-in, so that a request id is pending, and returns it. */
  async function pendingRequest(jar: CookieJar): Promise<string> {
    const url = await startSignIn(t, jar);
    expect(url.origin + url.pathname).toBe(TEST_IDP_SSO_URL);
    return authnRequestId(url);
  }

  async function postToAcs(jar: CookieJar, samlResponse: string): Promise<Response> {
    return send(jar, `${t.baseUrl}/auth/saml/acs`, { method: 'POST', body: form({ SAMLResponse: samlResponse }), headers: { Accept: 'application/json' } });
  }

  async function signed(o: ResponseOptions, signer = keys, algorithm?: string): Promise<string> {
    const { id, xml } = responseXml(sp(), o);
    return signResponse(sp(), signer, xml, id, algorithm);
  }

  /** The failed sign-in recorded for the request that got `res`. */
  async function refusalReason(res: Response): Promise<string> {
    const rows = await t.db.pool.query<{ detail: { reason: string } }>("SELECT detail FROM audit_events WHERE action = 'auth.sign_in_failed' AND request_id = $1", [
      res.headers.get('x-request-id'),
    ]);
    expect(rows.rows).toHaveLength(1);
    return rows.rows[0].detail.reason;
  }

  async function expectRefused(jar: CookieJar, samlResponseXml: string, reason: RegExp): Promise<void> {
    const res = await postToAcs(jar, b64(samlResponseXml));
    expect(res.status).toBe(401);
    expect(res.headers.getSetCookie().some((c) => c.startsWith('liftwise.sid='))).toBe(false);
    expect(await refusalReason(res)).toMatch(reason);
    expect((await me(t, jar)).status).toBe(401);
  }

  it('signs in once its certificate is configured (second of two pinned certificates)', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    const res = await postToAcs(jar, b64(await signed({ inResponseTo: id, groups: ['lw-risk', 'not-mapped'] })));
    expect(res.status).toBe(303);
    expect(await (await me(t, jar)).json()).toMatchObject({ name: 'Ola Test', email: 'ola.test@nordvale.example', roles: ['risk'] });
  });

  it('refuses an unsigned response and assertion', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, responseXml(sp(), { inResponseTo: id }).xml, /signature/i);
  });

  it('refuses a response signed by an unknown key', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id }, stranger), /signature/i);
  });

  it('refuses a response whose attribute was changed after signing', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    const xml = await signed({ inResponseTo: id, groups: ['lw-traders'] });
    const tampered = xml.replace('<saml:AttributeValue>lw-traders</saml:AttributeValue>', '<saml:AttributeValue>lw-admins</saml:AttributeValue>');
    expect(tampered).not.toBe(xml);
    await expectRefused(jar, tampered, /signature/i);
  });

  it('refuses an extra assertion wrapped beside the signed one (XML signature wrapping)', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    const xml = await signed({ inResponseTo: id, groups: ['lw-traders'] });
    const evil = responseXml(sp(), { inResponseTo: id, nameId: 'mallory@evil.example', groups: ['lw-admins'] }).xml;
    const evilAssertion = /<saml:Assertion[\s\S]*<\/saml:Assertion>/.exec(evil)![0];
    // The forged assertion goes first, where a naive reader looks; the signed one stays, so every signature still verifies.
    const wrapped = xml.replace('<saml:Assertion', `${evilAssertion}<saml:Assertion`);
    await expectRefused(jar, wrapped, /signature|assertion/i);
  });

  it('refuses the signed assertion hidden inside a forged one (XML signature wrapping)', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    const xml = await signed({ inResponseTo: id, groups: ['lw-traders'] });
    const signedAssertion = /<saml:Assertion[\s\S]*<\/saml:Assertion>/.exec(xml)![0];
    const evil = responseXml(sp(), { inResponseTo: id, nameId: 'mallory@evil.example', groups: ['lw-admins'] }).xml;
    const evilAssertion = /<saml:Assertion[\s\S]*<\/saml:Assertion>/.exec(evil)![0].replace('</saml:Subject>', `<saml:SubjectConfirmation Method="urn:oasis:names:tc:SAML:2.0:cm:bearer"><saml:SubjectConfirmationData>${signedAssertion}</saml:SubjectConfirmationData></saml:SubjectConfirmation></saml:Subject>`);
    await expectRefused(jar, xml.replace(signedAssertion, evilAssertion), /signature|assertion/i);
  });

  it('refuses a wrong audience', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id, audience: 'https://other-app.example/sp' }), /audience/i);
  });

  it('refuses a wrong Destination', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id, destination: 'https://other-app.example/acs' }), /Destination/);
  });

  it('refuses a wrong Recipient', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id, recipient: 'https://other-app.example/acs' }), /Recipient/);
  });

  it('refuses an expired response (beyond the clock skew)', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    const past = Date.now() - 10 * 60_000;
    await expectRefused(jar, await signed({ inResponseTo: id, notBefore: new Date(past - 60_000), notOnOrAfter: new Date(past) }), /expired|subject confirmation/i);
  });

  it('refuses a response that is not yet valid (beyond the clock skew)', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id, notBefore: new Date(Date.now() + 10 * 60_000) }), /not yet valid/i);
  });

  it('accepts a response a few seconds early, within the clock skew', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    const res = await postToAcs(jar, b64(await signed({ inResponseTo: id, notBefore: new Date(Date.now() + 5_000) })));
    expect(res.status).toBe(303);
  });

  it('refuses the same response twice (replay)', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    const xml = await signed({ inResponseTo: id });
    expect((await postToAcs(jar, b64(xml))).status).toBe(303);
    await expectRefused(new CookieJar(), xml, /InResponseTo/);
  });

  it('refuses a response with no request behind it (unsolicited InResponseTo)', async () => {
    const jar = new CookieJar();
    await expectRefused(jar, await signed({ inResponseTo: '_never_sent_by_us' }), /InResponseTo/);
  });

  it('refuses an IdP-initiated response without InResponseTo', async () => {
    await expectRefused(new CookieJar(), await signed({ inResponseTo: null }), /InResponseTo/);
  });

  it('refuses a subject confirmation without InResponseTo, and spends the request id', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id, subjectInResponseTo: null }), /InResponseTo/);
    await expectRefused(jar, await signed({ inResponseTo: id }), /InResponseTo/);
  });

  it('refuses SHA-1 signatures', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id }, keys, RSA_SHA1), /algorithm/i);
  });

  it('refuses a response from another issuer signed with the pinned key', async () => {
    const jar = new CookieJar();
    const id = await pendingRequest(jar);
    await expectRefused(jar, await signed({ inResponseTo: id, issuer: 'https://someone-else.example/idp' }), /issuer/i);
  });

  it('refuses a SAMLResponse sent in the query string', async () => {
    const jar = new CookieJar();
    const res = await send(jar, `${t.baseUrl}/auth/saml/acs?SAMLResponse=abc`, { method: 'POST', headers: { Accept: 'application/json' } });
    expect(res.status).toBe(401);
    expect(await refusalReason(res)).toMatch(/HTTP-POST/);
  });
});
