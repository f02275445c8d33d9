/**
 * An identity provider set up inside the tests, independent of server/dev/idp: its own key
 * pair, entity id and response XML, signed by samlify. Each option lets a test bend one part of
 * the response to check that the service provider refuses it.
 */
import crypto from 'node:crypto';
import zlib from 'node:zlib';
import * as samlify from 'samlify';
import { selfSignedCertificate } from '../../../server/dev/idp/certificate.ts';

export const TEST_IDP_ENTITY_ID = 'https://idp.test.example/metadata';
export const TEST_IDP_SSO_URL = 'https://idp.test.example/sso';

const RSA_SHA256 = 'http://www.w3.org/2001/04/xmldsig-more#rsa-sha256';

export interface KeyMaterial {
  privateKeyPem: string;
  certificatePem: string;
}

export function newKeyMaterial(commonName: string): KeyMaterial {
  const pair = crypto.generateKeyPairSync('rsa', { modulusLength: 2048 });
  return { privateKeyPem: pair.privateKey.export({ type: 'pkcs8', format: 'pem' }).toString(), certificatePem: selfSignedCertificate(pair, commonName) };
}

export interface ResponseOptions {
  inResponseTo?: string | null;
  subjectInResponseTo?: string | null;
  destination?: string;
  recipient?: string;
  audience?: string;
  issuer?: string;
  notBefore?: Date;
  notOnOrAfter?: Date;
  nameId?: string;
  name?: string;
  email?: string;
  groups?: string[];
}

export interface SpView {
  spEntityId: string;
  acsUrl: string;
}

const esc = (s: string) => s.replace(/[<>&"]/g, (c) => `&#${c.charCodeAt(0)};`);
const attr = (name: string, value: string | null | undefined) => (value === null || value === undefined ? '' : ` ${name}="${esc(value)}"`);

export function responseXml(sp: SpView, o: ResponseOptions): { id: string; assertionId: string; xml: string } {
  const id = `_r${crypto.randomBytes(12).toString('hex')}`;
  const assertionId = `_a${crypto.randomBytes(12).toString('hex')}`;
  const now = new Date();
  const notBefore = (o.notBefore ?? new Date(now.getTime() - 1000)).toISOString();
  const notOnOrAfter = (o.notOnOrAfter ?? new Date(now.getTime() + 5 * 60_000)).toISOString();
  const issuer = o.issuer ?? TEST_IDP_ENTITY_ID;
  const subjectInResponseTo = o.subjectInResponseTo === undefined ? o.inResponseTo : o.subjectInResponseTo;
  const groups = (o.groups ?? ['lw-traders']).map((g) => `<saml:AttributeValue>${esc(g)}</saml:AttributeValue>`).join('');
  const xml =
    `<samlp:Response xmlns:samlp="urn:oasis:names:tc:SAML:2.0:protocol" xmlns:saml="urn:oasis:names:tc:SAML:2.0:assertion" ID="${id}" Version="2.0" IssueInstant="${now.toISOString()}"` +
    `${attr('Destination', o.destination ?? sp.acsUrl)}${attr('InResponseTo', o.inResponseTo)}>` +
    `<saml:Issuer>${esc(issuer)}</saml:Issuer><samlp:Status><samlp:StatusCode Value="urn:oasis:names:tc:SAML:2.0:status:Success"/></samlp:Status>` +
    `<saml:Assertion ID="${assertionId}" Version="2.0" IssueInstant="${now.toISOString()}"><saml:Issuer>${esc(issuer)}</saml:Issuer>` +
    `<saml:Subject><saml:NameID>${esc(o.nameId ?? 'ola.test@nordvale.example')}</saml:NameID>` +
    `<saml:SubjectConfirmation Method="urn:oasis:names:tc:SAML:2.0:cm:bearer"><saml:SubjectConfirmationData NotOnOrAfter="${notOnOrAfter}"${attr('Recipient', o.recipient ?? sp.acsUrl)}${attr('InResponseTo', subjectInResponseTo)}/></saml:SubjectConfirmation></saml:Subject>` +
    `<saml:Conditions NotBefore="${notBefore}" NotOnOrAfter="${notOnOrAfter}"><saml:AudienceRestriction><saml:Audience>${esc(o.audience ?? sp.spEntityId)}</saml:Audience></saml:AudienceRestriction></saml:Conditions>` +
    `<saml:AuthnStatement AuthnInstant="${now.toISOString()}"><saml:AuthnContext><saml:AuthnContextClassRef>urn:oasis:names:tc:SAML:2.0:ac:classes:Password</saml:AuthnContextClassRef></saml:AuthnContext></saml:AuthnStatement>` +
    `<saml:AttributeStatement><saml:Attribute Name="name"><saml:AttributeValue>${esc(o.name ?? 'Ola Test')}</saml:AttributeValue></saml:Attribute>` +
    `<saml:Attribute Name="email"><saml:AttributeValue>${esc(o.email ?? 'ola.test@nordvale.example')}</saml:AttributeValue></saml:Attribute>` +
    `<saml:Attribute Name="groups">${groups}</saml:Attribute></saml:AttributeStatement></saml:Assertion></samlp:Response>`;
  return { id, assertionId, xml };
}

/** samlify signs the assertion, then the whole response, and gives back the XML. */
export async function signResponse(sp: SpView, keys: KeyMaterial, xml: string, id: string, signatureAlgorithm = RSA_SHA256): Promise<string> {
  const idp = samlify.IdentityProvider({
    entityID: TEST_IDP_ENTITY_ID,
    signingCert: keys.certificatePem,
    privateKey: keys.privateKeyPem,
    requestSignatureAlgorithm: signatureAlgorithm,
    singleSignOnService: [{ Binding: 'urn:oasis:names:tc:SAML:2.0:bindings:HTTP-Redirect', Location: TEST_IDP_SSO_URL }],
  });
  const samlSp = samlify.ServiceProvider({
    entityID: sp.spEntityId,
    assertionConsumerService: [{ Binding: 'urn:oasis:names:tc:SAML:2.0:bindings:HTTP-POST', Location: sp.acsUrl }],
    wantAssertionsSigned: true,
    wantMessageSigned: true,
  });
  const result = await idp.createLoginResponse(samlSp, { extract: { request: { id: '' } } } as Parameters<typeof idp.createLoginResponse>[1], 'post', {}, {
    customTagReplacement: () => ({ id, context: xml }),
  });
  return Buffer.from(result.context, 'base64').toString('utf8');
}

/** The ID of the AuthnRequest carried by a redirect-binding URL. */
export function authnRequestId(idpUrl: URL): string {
  const xml = zlib.inflateRawSync(Buffer.from(idpUrl.searchParams.get('SAMLRequest')!, 'base64')).toString('utf8');
  const id = /<samlp:AuthnRequest[^>]*\sID="([^"]+)"/.exec(xml)?.[1];
  if (!id) throw new Error('no ID in the AuthnRequest');
  return id;
}

export const b64 = (xml: string) => Buffer.from(xml, 'utf8').toString('base64');
