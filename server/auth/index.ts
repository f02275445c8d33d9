/**
 * Sign-in wiring: the SAML strategy (for the configured identity provider, or the local one
 * outside production), sessions, rate limit. app.ts mounts the pieces in order.
 */
import type { RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import { Passport } from 'passport';
import type { AppDeps } from '../app.ts';
import { loadOrCreateIdpKeys } from '../dev/idp/keys.ts';
import { createLocalIdp, type LocalIdp } from '../dev/idp/response.ts';
import { LOCAL_IDP_MOUNT } from '../dev/idp/router.ts';
import { AppError } from '../errors.ts';
import { createSamlStrategy, type SamlSettings } from './saml.ts';
import { absoluteTimeout, sessionMiddleware } from './session.ts';

export interface Auth {
  passport: InstanceType<typeof Passport>;
  strategy: ReturnType<typeof createSamlStrategy>['strategy'];
  settings: SamlSettings;
  /** the local identity provider, when it stands in for a real one */
  localIdp: LocalIdp | null;
  session: RequestHandler[];
  rateLimit: RequestHandler;
}

export function createAuth({ config, db, logger }: AppDeps): Auth {
  const { auth } = config;
  let localIdp: LocalIdp | null = null;
  let settings: SamlSettings;
  if (auth.idp) {
    settings = { entryPoint: auth.idp.ssoUrl, idpCerts: auth.idp.certs, idpEntityId: auth.idp.entityId, spEntityId: auth.spEntityId, acsUrl: auth.acsUrl, clockSkewMs: auth.clockSkewMs };
  } else {
    if (config.isProduction) throw new Error('production needs a real identity provider (SAML_IDP_SSO_URL and SAML_IDP_CERTS)');
    const idpBase = `${config.publicUrl}${LOCAL_IDP_MOUNT}`;
    localIdp = createLocalIdp({
      entityId: `${idpBase}/metadata`,
      ssoUrl: `${idpBase}/sso`,
      spEntityId: auth.spEntityId,
      acsUrl: auth.acsUrl,
      keys: loadOrCreateIdpKeys(config.dataDir),
    });
    settings = {
      entryPoint: localIdp.settings.ssoUrl,
      idpCerts: [localIdp.settings.keys.certificatePem],
      idpEntityId: localIdp.settings.entityId,
      spEntityId: auth.spEntityId,
      acsUrl: auth.acsUrl,
      clockSkewMs: auth.clockSkewMs,
    };
  }
  const { strategy } = createSamlStrategy(settings, db.db);
  const passport = new Passport();
  passport.use('saml', strategy);
  return {
    passport,
    strategy,
    settings,
    localIdp,
    session: [sessionMiddleware(auth, db.pool, logger), absoluteTimeout(auth)],
    rateLimit: rateLimit({
      windowMs: 60_000,
      limit: auth.rateLimitPerMinute,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      handler: (_req, _res, next) => next(new AppError(429, 'too_many_requests', 'Too many sign-in attempts from this address; wait a minute and try again.')),
    }),
  };
}
