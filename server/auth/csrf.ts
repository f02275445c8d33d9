/**
 * CSRF protection by synchroniser token: every POST, PUT, PATCH and DELETE must carry the
 * session's token in X-CSRF-Token. The assertion consumer service is exempt (the identity
 * provider's signed response is its proof), and so is the local identity provider's own page,
 * which stands in for an outside party.
 */
import crypto from 'node:crypto';
import type { RequestHandler } from 'express';
import { AppError } from '../errors.ts';

const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

function sameToken(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && crypto.timingSafeEqual(x, y);
}

export function csrfProtection(exemptPaths: readonly string[]): RequestHandler {
  return (req, _res, next) => {
    if (SAFE.has(req.method) || exemptPaths.includes(req.path)) return next();
    const expected = req.session?.csrfToken;
    const sent = req.get('x-csrf-token');
    if (!expected || !sent || !sameToken(expected, sent)) {
      return next(new AppError(403, 'csrf', 'This request is missing its security token; reload the page and try again.'));
    }
    next();
  };
}
