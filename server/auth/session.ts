/**
 * Sessions in PostgreSQL (express-session + connect-pg-simple): HttpOnly, SameSite=Lax cookies,
 * Secure with the __Host- prefix when the public address is https; an idle timeout (the cookie
 * and the stored row expire together and roll forward with use) and an absolute timeout
 * counted from sign-in.
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import connectPgSimple from 'connect-pg-simple';
import type { RequestHandler } from 'express';
import session from 'express-session';
import type pg from 'pg';
import type { AuthConfig } from '../config.ts';
import type { Logger } from '../logger.ts';
import type { SignedInUser } from '../services/users.ts';

declare module 'express-session' {
  interface SessionData {
    user: SignedInUser;
    csrfToken: string;
    signedInAt: number;
  }
}

export function sessionCookieName(auth: AuthConfig): string {
  return auth.secureCookies ? '__Host-liftwise.sid' : 'liftwise.sid';
}

/**
 * The configured secrets; outside production without one, a secret generated once into the
 * data folder (so sessions survive a restart).
 */
export function sessionSecrets(auth: AuthConfig): string[] {
  if (auth.sessionSecrets.length) return auth.sessionSecrets;
  if (fs.existsSync(auth.sessionSecretFile)) {
    const stored = fs.readFileSync(auth.sessionSecretFile, 'utf8').trim();
    if (stored.length >= 32) return [stored];
  }
  const secret = crypto.randomBytes(32).toString('base64url');
  fs.mkdirSync(path.dirname(auth.sessionSecretFile), { recursive: true });
  const temp = `${auth.sessionSecretFile}.${process.pid}.tmp`;
  fs.writeFileSync(temp, secret, { mode: 0o600 });
  fs.renameSync(temp, auth.sessionSecretFile);
  return [fs.readFileSync(auth.sessionSecretFile, 'utf8').trim()];
}

export function sessionMiddleware(auth: AuthConfig, pool: pg.Pool, logger: Logger): RequestHandler {
  const PgStore = connectPgSimple(session);
  const store = new PgStore({
    pool,
    tableName: 'session',
    // The table also comes with the migrations (server/db/schema.ts); this covers a database set up without them.
    createTableIfMissing: true,
    errorLog: (...args: unknown[]) => logger.warn({ detail: args.map(String).join(' ') }, 'session store'),
  });
  return session({
    name: sessionCookieName(auth),
    secret: sessionSecrets(auth),
    store,
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: { httpOnly: true, sameSite: 'lax', secure: auth.secureCookies, path: '/', maxAge: auth.sessionIdleMs },
  });
}

/** Ends a session that has outlived the absolute timeout, whatever its activity. */
export function absoluteTimeout(auth: AuthConfig): RequestHandler {
  return (req, _res, next) => {
    const started = req.session?.signedInAt;
    if (req.session?.user && (!started || Date.now() - started > auth.sessionAbsoluteMs)) {
      req.session.destroy((err) => next(err));
      return;
    }
    next();
  };
}

export function newCsrfToken(): string {
  return crypto.randomBytes(32).toString('base64url');
}

/** Sign-in: a fresh session id (no fixation), the person, a new CSRF token. */
export function startSession(req: Parameters<RequestHandler>[0], user: SignedInUser): Promise<void> {
  return new Promise((resolve, reject) => {
    req.session.regenerate((err) => {
      if (err) return reject(err);
      req.session.user = user;
      req.session.csrfToken = newCsrfToken();
      req.session.signedInAt = Date.now();
      req.session.save((saveErr) => (saveErr ? reject(saveErr) : resolve()));
    });
  });
}

export function endSession(req: Parameters<RequestHandler>[0]): Promise<void> {
  return new Promise((resolve, reject) => req.session.destroy((err) => (err ? reject(err) : resolve())));
}
