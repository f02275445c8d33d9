/**
 * Machine access: `Authorization: Bearer lw_...` authenticates a request as an API token
 * (services/api-tokens.ts), with the token's roles. No cookies are involved, so such a request is
 * not exposed to cross-site request forgery and skips the CSRF check, unless it also carries a
 * session cookie (a browser), in which case the check applies as usual. Token requests are
 * rate-limited per address like sign-in; an unknown, malformed or revoked token is answered 401
 * with a clear message and recorded in the audit trail. See README.md, "Machine access".
 */
import type { Request, RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import type { AppDeps } from '../app.ts';
import { AppError } from '../errors.ts';
import { recordAudit } from '../services/audit.ts';
import { authenticateApiToken } from '../services/api-tokens.ts';
import type { SignedInUser } from '../services/users.ts';
import { sessionCookieName } from './session.ts';

declare module 'express-serve-static-core' {
  interface Request {
    /** set when the request was authenticated by an API token */
    apiToken?: { id: string; user: SignedInUser };
  }
}

/** Who is behind a request: the API token's principal, else the session's person, else nobody. */
export function requestUser(req: Request): SignedInUser | null {
  return req.apiToken?.user ?? req.session?.user ?? null;
}

function bearerToken(req: Request): string | null {
  const header = req.get('authorization');
  // Other schemes (e.g. Basic from a proxy in front) are not ours to judge.
  if (!header || !/^Bearer(\s|$)/i.test(header)) return null;
  const match = /^Bearer\s+(\S+)\s*$/i.exec(header);
  return match ? match[1] : '';
}

const REFUSALS = {
  malformed: 'The API token is not in the expected form (lw_ followed by 43 characters). Check the token file.',
  unknown: 'The API token is not known to this server. Ask an administrator for a token.',
  revoked: 'The API token has been revoked. Ask an administrator for a new one.',
} as const;

/** Mount on /api after the session middleware and before the authorization gate. */
export function apiTokenAuth({ db, config }: AppDeps): RequestHandler[] {
  const limiter = rateLimit({
    windowMs: 60_000,
    limit: config.auth.rateLimitPerMinute,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    skip: (req) => bearerToken(req) === null,
    handler: (_req, _res, next) => next(new AppError(429, 'too_many_requests', 'Too many API token requests from this address; wait a minute and try again.')),
  });
  const authenticate: RequestHandler = (req, _res, next) => {
    const token = bearerToken(req);
    if (token === null) return next();
    (async () => {
      const check = await authenticateApiToken(db.db, token);
      if (check.ok) {
        req.apiToken = { id: check.tokenId, user: check.user };
        return next();
      }
      await recordAudit(db.db, {
        action: 'auth.token_refused',
        actorId: null,
        actorLabel: check.name ? `token:${check.name}` : 'anonymous',
        objectType: check.tokenId ? 'api_token' : null,
        objectId: check.tokenId ?? null,
        detail: { reason: check.reason, method: req.method, path: req.originalUrl.split('?')[0].slice(0, 200) },
        requestId: req.id,
        clientAddress: req.ip ?? null,
      });
      next(new AppError(401, 'invalid_token', REFUSALS[check.reason]));
    })().catch(next);
  };
  return [limiter, authenticate];
}

/** Runs `csrf` except for token-authenticated requests that carry no session cookie. */
export function csrfUnlessBearer(csrf: RequestHandler, { config }: Pick<AppDeps, 'config'>): RequestHandler {
  const cookieName = sessionCookieName(config.auth);
  return (req, res, next) => {
    const cookies = req.get('cookie') ?? '';
    const hasSessionCookie = cookies.split(';').some((c) => c.trim().startsWith(`${cookieName}=`));
    if (req.apiToken && !hasSessionCookie) return next();
    csrf(req, res, next);
  };
}
