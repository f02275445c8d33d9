/**
 * /auth: SAML sign-in (redirect to the identity provider, assertion consumer service, our
 * metadata) and sign-out. Every sign-in, refused sign-in (with its reason) and sign-out is
 * recorded in the audit trail.
 */
import { Router, type NextFunction, type Request, type Response } from 'express';
import type { AppDeps } from '../app.ts';
import { auditContext } from '../auth/context.ts';
import type { Auth } from '../auth/index.ts';
import { withClaimScope } from '../auth/request-cache.ts';
import { endSession, sessionCookieName, startSession } from '../auth/session.ts';
import { badRequest } from '../errors.ts';
import { recordAudit } from '../services/audit.ts';
import { signInUser, type VerifiedIdentity } from '../services/users.ts';

/** Only a path on this site: never another origin (open redirect) or a protocol-relative URL. */
export function safeReturnPath(value: unknown): string | null {
  if (typeof value !== 'string' || value.length > 500) return null;
  return /^\/(?![/\\])[\w\-./?=&%#~+]*$/.test(value) ? value : null;
}

function refusalPage(): string {
  return '<!doctype html><html lang="en"><head><meta charset="utf-8"><title>Sign-in refused</title></head><body style="font-family:system-ui,sans-serif;padding:2rem">' +
    '<h1 style="font-size:1.1rem">Sign-in refused</h1><p>The identity provider\'s answer could not be accepted. The refusal has been recorded.</p>' +
    '<p><a href="/sign-in">Try again</a></p></body></html>';
}

export function authRouter({ db, config }: AppDeps, auth: Auth): Router {
  const router = Router();

  const refuse = async (req: Request, res: Response, reason: string) => {
    await recordAudit(db.db, { ...auditContext(req), action: 'auth.sign_in_failed', detail: { reason: reason.slice(0, 500) } });
    req.log.warn({ reason }, 'sign-in refused');
    if (req.accepts(['json', 'html']) === 'html') res.status(401).type('html').send(refusalPage());
    else res.status(401).json({ error: { code: 'sign_in_refused', message: 'The sign-in response was refused.' } });
  };

  router.get('/saml/login', (req, res, next) => {
    if (req.query.RelayState !== undefined && !safeReturnPath(req.query.RelayState)) return next(badRequest('RelayState must be a path on this site.'));
    auth.passport.authenticate('saml', { session: false })(req, res, next);
  });

  router.post('/saml/acs', (req: Request, res: Response, next: NextFunction) => {
    const body = (req.body ?? {}) as Record<string, unknown>;
    if (req.query.SAMLResponse !== undefined || req.query.SAMLRequest !== undefined || body.SAMLRequest !== undefined || typeof body.SAMLResponse !== 'string') {
      refuse(req, res, 'not a SAML response sent with the HTTP-POST binding').catch(next);
      return;
    }
    const done = async (err: Error | null, identity: VerifiedIdentity | false) => {
      if (err || !identity) return refuse(req, res, err?.message ?? 'no identity in the response');
      const user = await signInUser(db.db, identity, { requestId: req.id, clientAddress: req.ip ?? null });
      await startSession(req, user);
      res.redirect(303, safeReturnPath(body.RelayState) ?? '/');
    };
    withClaimScope(() =>
      auth.passport.authenticate('saml', { session: false }, (err: Error | null, identity: VerifiedIdentity | false) => {
        done(err, identity).catch(next);
      })(req, res, next),
    );
  });

  router.get('/saml/metadata', (_req, res) => {
    res.type('application/samlmetadata+xml').send(auth.strategy.generateServiceProviderMetadata(null, null));
  });

  router.post('/logout', async (req, res) => {
    if (req.session?.user) {
      await recordAudit(db.db, { ...auditContext(req), action: 'auth.sign_out', objectType: 'user', objectId: req.session.user.id });
      await endSession(req);
    }
    res.clearCookie(sessionCookieName(config.auth), { path: '/', httpOnly: true, sameSite: 'lax', secure: config.auth.secureCookies });
    res.status(204).end();
  });

  return router;
}
