/**
 * The SAML service provider: passport with @node-saml/passport-saml, configured strictly
 * (response AND assertion signed by a pinned certificate, audience, InResponseTo always, time
 * conditions with a small skew), plus the checks the library leaves to us, made on the XML
 * whose signature it has just verified: Destination, Recipient, the subject's InResponseTo,
 * the issuer (when configured) and SHA-256 as the only signature and digest algorithm.
 */
import { DOMParser } from '@xmldom/xmldom';
import { Strategy, ValidateInResponseTo, type Profile, type VerifiedCallback } from '@node-saml/passport-saml';
import type { Database } from '../db/client.ts';
import type { VerifiedIdentity } from '../services/users.ts';
import { PgSamlRequestCache } from './request-cache.ts';

/** Attribute names the identity provider sends (the local one does; configure a real one to match). */
export const SAML_ATTRIBUTES = { name: 'name', email: 'email', groups: 'groups' } as const;

const RSA_SHA256 = 'http://www.w3.org/2001/04/xmldsig-more#rsa-sha256';
const SHA256 = 'http://www.w3.org/2001/04/xmlenc#sha256';
const DSIG_NS = 'http://www.w3.org/2000/09/xmldsig#';
const ASSERTION_NS = 'urn:oasis:names:tc:SAML:2.0:assertion';
const BEARER = 'urn:oasis:names:tc:SAML:2.0:cm:bearer';

/** How long a sign-in request waits for its response. */
export const SAML_REQUEST_EXPIRY_MS = 10 * 60_000;

export interface SamlSettings {
  entryPoint: string;
  idpCerts: string[];
  idpEntityId: string | null;
  spEntityId: string;
  acsUrl: string;
  clockSkewMs: number;
}

/** A sign-in refused after the library accepted the signature: the reason goes to the audit trail. */
export class SignInRefused extends Error {
  constructor(reason: string) {
    super(reason);
    this.name = 'SignInRefused';
  }
}

export function createSamlStrategy(settings: SamlSettings, db: Database): { strategy: Strategy; cache: PgSamlRequestCache } {
  const cache = new PgSamlRequestCache(db, SAML_REQUEST_EXPIRY_MS);
  const verify = (profile: Profile | null, done: VerifiedCallback) => {
    try {
      if (!profile) throw new SignInRefused('the response carries no assertion');
      done(null, { ...identityFromProfile(profile, settings) });
    } catch (err) {
      // The subject may have lacked InResponseTo, in which case node-saml kept the request id: spend it.
      const inResponseTo = typeof profile?.inResponseTo === 'string' ? profile.inResponseTo : null;
      void cache.removeAsync(inResponseTo).catch(() => {});
      done(err instanceof Error ? err : new Error(String(err)));
    }
  };
  const strategy = new Strategy(
    {
      name: 'saml',
      entryPoint: settings.entryPoint,
      idpCert: settings.idpCerts,
      issuer: settings.spEntityId,
      audience: settings.spEntityId,
      callbackUrl: settings.acsUrl,
      wantAuthnResponseSigned: true,
      wantAssertionsSigned: true,
      validateInResponseTo: ValidateInResponseTo.always,
      requestIdExpirationPeriodMs: SAML_REQUEST_EXPIRY_MS,
      cacheProvider: cache,
      acceptedClockSkewMs: settings.clockSkewMs,
      signatureAlgorithm: 'sha256',
      digestAlgorithm: 'sha256',
      identifierFormat: null,
      disableRequestedAuthnContext: true,
    },
    verify,
    (_profile: Profile | null, done: VerifiedCallback) => done(new SignInRefused('single logout requests are not accepted')),
  );
  return { strategy, cache };
}

function parse(xml: string): Document {
  const errors: string[] = [];
  const doc = new DOMParser({ errorHandler: { error: (msg: string) => void errors.push(msg), fatalError: (msg: string) => void errors.push(msg) } }).parseFromString(xml, 'text/xml');
  if (errors.length || !doc.documentElement) throw new SignInRefused('the response is not well-formed XML');
  return doc as unknown as Document;
}

function byTag(root: Document | Element, ns: string, localName: string): Element[] {
  return Array.from(root.getElementsByTagNameNS(ns, localName) as unknown as ArrayLike<Element>);
}

/** Every signature in the response must use RSA-SHA256 with SHA-256 digests. */
function checkAlgorithms(responseDoc: Document): void {
  for (const method of byTag(responseDoc, DSIG_NS, 'SignatureMethod')) {
    if (method.getAttribute('Algorithm') !== RSA_SHA256) throw new SignInRefused(`signature algorithm ${method.getAttribute('Algorithm')} is not accepted (RSA-SHA256 only)`);
  }
  for (const method of byTag(responseDoc, DSIG_NS, 'DigestMethod')) {
    if (method.getAttribute('Algorithm') !== SHA256) throw new SignInRefused(`digest algorithm ${method.getAttribute('Algorithm')} is not accepted (SHA-256 only)`);
  }
}

/**
 * The checks node-saml does not make. The response's root is covered by the response
 * signature the library verified (it refuses a response whose signature does not reference
 * the root), and the assertion XML is the library's verified copy.
 */
export function checkVerifiedResponse(responseXml: string, assertionXml: string, inResponseTo: string | null, settings: SamlSettings): void {
  const response = parse(responseXml);
  checkAlgorithms(response);
  const destination = response.documentElement.getAttribute('Destination');
  if (destination !== settings.acsUrl) throw new SignInRefused(`Destination "${destination ?? ''}" is not our assertion consumer service URL`);
  const assertion = parse(assertionXml);
  const confirmations = byTag(assertion, ASSERTION_NS, 'SubjectConfirmation').filter((c) => c.getAttribute('Method') === BEARER);
  if (confirmations.length === 0) throw new SignInRefused('the assertion has no bearer subject confirmation');
  for (const confirmation of confirmations) {
    const data = byTag(confirmation, ASSERTION_NS, 'SubjectConfirmationData')[0];
    const recipient = data?.getAttribute('Recipient') ?? '';
    if (recipient !== settings.acsUrl) throw new SignInRefused(`Recipient "${recipient}" is not our assertion consumer service URL`);
    const subjectInResponseTo = data?.getAttribute('InResponseTo') ?? '';
    if (!inResponseTo || subjectInResponseTo !== inResponseTo) throw new SignInRefused('the subject confirmation does not answer our sign-in request (InResponseTo)');
  }
  if (settings.idpEntityId) {
    const issuers = byTag(assertion, ASSERTION_NS, 'Issuer').map((i) => i.textContent?.trim());
    if (issuers[0] !== settings.idpEntityId) throw new SignInRefused(`issuer "${issuers[0] ?? ''}" is not the configured identity provider`);
  }
}

function attribute(profile: Profile, name: string): string[] {
  const value = (profile.attributes as Record<string, unknown> | undefined)?.[name];
  const list = Array.isArray(value) ? value : value === undefined || value === null ? [] : [value];
  return list.filter((v): v is string => typeof v === 'string').map((v) => v.trim()).filter(Boolean);
}

export function identityFromProfile(profile: Profile, settings: SamlSettings): VerifiedIdentity {
  const responseXml = profile.getSamlResponseXml?.();
  const assertionXml = profile.getAssertionXml?.();
  if (!responseXml || !assertionXml) throw new SignInRefused('the verified response is not available for the final checks');
  const inResponseTo = typeof profile.inResponseTo === 'string' ? profile.inResponseTo : null;
  checkVerifiedResponse(responseXml, assertionXml, inResponseTo, settings);
  if (!profile.nameID) throw new SignInRefused('the assertion has no NameID');
  const email = attribute(profile, SAML_ATTRIBUTES.email)[0] ?? (typeof profile.email === 'string' ? profile.email : '');
  const name = attribute(profile, SAML_ATTRIBUTES.name)[0] ?? (email || profile.nameID);
  return { externalId: profile.nameID, name, email, groups: [...new Set(attribute(profile, SAML_ATTRIBUTES.groups))] };
}
