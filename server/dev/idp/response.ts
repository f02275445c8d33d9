/**
 * The local identity provider's SAML side, on samlify: parses our AuthnRequest (redirect
 * binding) and answers with a response and an assertion, both signed (RSA-SHA256, SHA-256
 * digests), for the HTTP-POST binding.
 */
import crypto from 'node:crypto';
import * as samlify from 'samlify';
import type { DemoPerson } from './people.ts';
import type { IdpKeys } from './keys.ts';

// samlify refuses to parse anything until a schema validator is set. The local IdP only parses
// the AuthnRequests our own service provider sends it, in development and tests, so skipping
// schema validation is acceptable here and nowhere else: our service provider validates
// responses with @node-saml, never with samlify.
samlify.setSchemaValidator({ validate: async () => 'skipped' });

const RSA_SHA256 = 'http://www.w3.org/2001/04/xmldsig-more#rsa-sha256';
const POST_BINDING = 'urn:oasis:names:tc:SAML:2.0:bindings:HTTP-POST';
const REDIRECT_BINDING = 'urn:oasis:names:tc:SAML:2.0:bindings:HTTP-Redirect';

export interface LocalIdpSettings {
  entityId: string;
  ssoUrl: string;
  spEntityId: string;
  acsUrl: string;
  keys: IdpKeys;
}

export interface LocalIdp {
  idp: samlify.IdentityProviderInstance;
  sp: samlify.ServiceProviderInstance;
  settings: LocalIdpSettings;
}

export function createLocalIdp(settings: LocalIdpSettings): LocalIdp {
  const idp = samlify.IdentityProvider({
    entityID: settings.entityId,
    signingCert: settings.keys.certificatePem,
    privateKey: settings.keys.privateKeyPem,
    requestSignatureAlgorithm: RSA_SHA256,
    wantAuthnRequestsSigned: false,
    singleSignOnService: [{ Binding: REDIRECT_BINDING, Location: settings.ssoUrl }],
  });
  // The service provider as the IdP knows it: responses go to this ACS URL, never to one named in a request.
  const sp = samlify.ServiceProvider({
    entityID: settings.spEntityId,
    assertionConsumerService: [{ Binding: POST_BINDING, Location: settings.acsUrl }],
    authnRequestsSigned: false,
    wantAssertionsSigned: true,
    wantMessageSigned: true,
  });
  return { idp, sp, settings };
}

export interface ParsedAuthnRequest {
  id: string;
  issuer: string;
}

/** The AuthnRequest id to answer; refuses a request from any service provider but ours. */
export async function parseAuthnRequest(local: LocalIdp, samlRequest: string): Promise<ParsedAuthnRequest> {
  const parsed = await local.idp.parseLoginRequest(local.sp, 'redirect', { query: { SAMLRequest: samlRequest } });
  const extract = parsed.extract as { request?: { id?: string }; issuer?: string };
  const id = extract.request?.id;
  if (!id || !/^[A-Za-z_][\w.-]{0,200}$/.test(id)) throw new Error('the sign-in request has no usable ID');
  if (extract.issuer !== local.settings.spEntityId) throw new Error(`the sign-in request comes from "${extract.issuer}", not from Liftwise`);
  return { id, issuer: extract.issuer };
}

const escapeXml = (s: string) => s.replace(/[<>&"']/g, (c) => `&#${c.charCodeAt(0)};`);

function attributeXml(name: string, values: readonly string[]): string {
  const inner = values.map((v) => `<saml:AttributeValue xsi:type="xs:string">${escapeXml(v)}</saml:AttributeValue>`).join('');
  return `<saml:Attribute Name="${escapeXml(name)}" NameFormat="urn:oasis:names:tc:SAML:2.0:attrname-format:basic">${inner}</saml:Attribute>`;
}

/** The unsigned response for `person`, answering `inResponseTo`. */
export function responseXml(local: LocalIdp, person: Pick<DemoPerson, 'name' | 'email' | 'groups'>, inResponseTo: string, now = new Date()) {
  const { entityId, spEntityId, acsUrl } = local.settings;
  const id = `_${crypto.randomUUID()}`;
  const assertionId = `_${crypto.randomUUID()}`;
  const instant = now.toISOString();
  const until = new Date(now.getTime() + 5 * 60_000).toISOString();
  const attributes = [attributeXml('name', [person.name]), attributeXml('email', [person.email]), attributeXml('groups', person.groups)].join('');
  const xml =
    `<samlp:Response xmlns:samlp="urn:oasis:names:tc:SAML:2.0:protocol" xmlns:saml="urn:oasis:names:tc:SAML:2.0:assertion" ID="${id}" Version="2.0" IssueInstant="${instant}" Destination="${escapeXml(acsUrl)}" InResponseTo="${escapeXml(inResponseTo)}">` +
    `<saml:Issuer>${escapeXml(entityId)}</saml:Issuer>` +
    `<samlp:Status><samlp:StatusCode Value="urn:oasis:names:tc:SAML:2.0:status:Success"/></samlp:Status>` +
    `<saml:Assertion xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xmlns:xs="http://www.w3.org/2001/XMLSchema" ID="${assertionId}" Version="2.0" IssueInstant="${instant}">` +
    `<saml:Issuer>${escapeXml(entityId)}</saml:Issuer>` +
    `<saml:Subject><saml:NameID Format="urn:oasis:names:tc:SAML:1.1:nameid-format:emailAddress">${escapeXml(person.email)}</saml:NameID>` +
    `<saml:SubjectConfirmation Method="urn:oasis:names:tc:SAML:2.0:cm:bearer"><saml:SubjectConfirmationData NotOnOrAfter="${until}" Recipient="${escapeXml(acsUrl)}" InResponseTo="${escapeXml(inResponseTo)}"/></saml:SubjectConfirmation></saml:Subject>` +
    `<saml:Conditions NotBefore="${instant}" NotOnOrAfter="${until}"><saml:AudienceRestriction><saml:Audience>${escapeXml(spEntityId)}</saml:Audience></saml:AudienceRestriction></saml:Conditions>` +
    `<saml:AuthnStatement AuthnInstant="${instant}" SessionIndex="${assertionId}"><saml:AuthnContext><saml:AuthnContextClassRef>urn:oasis:names:tc:SAML:2.0:ac:classes:unspecified</saml:AuthnContextClassRef></saml:AuthnContext></saml:AuthnStatement>` +
    `<saml:AttributeStatement>${attributes}</saml:AttributeStatement>` +
    `</saml:Assertion></samlp:Response>`;
  return { id, xml };
}

/** A signed response (assertion signed, then the whole response), base64 for the POST form. */
export async function signedResponse(local: LocalIdp, person: Pick<DemoPerson, 'name' | 'email' | 'groups'>, inResponseTo: string): Promise<string> {
  const { id, xml } = responseXml(local, person, inResponseTo);
  const result = await local.idp.createLoginResponse(
    local.sp,
    { extract: { request: { id: inResponseTo } } } as Parameters<samlify.IdentityProviderInstance['createLoginResponse']>[1],
    'post',
    { email: person.email },
    { customTagReplacement: () => ({ id, context: xml }) },
  );
  return result.context;
}
