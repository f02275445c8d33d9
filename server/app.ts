import { randomUUID } from 'node:crypto';
import path from 'node:path';
import express, { type ErrorRequestHandler, type RequestHandler } from 'express';
import helmet from 'helmet';
import { ZodError } from 'zod';
import type { Config } from './config.ts';
import type { DbHandle } from './db/client.ts';
import { authorizeApi } from './auth/authorize.ts';
import { apiTokenAuth, csrfUnlessBearer } from './auth/api-token.ts';
import { csrfProtection } from './auth/csrf.ts';
import { createAuth } from './auth/index.ts';
import { unlistedApiRoutes } from './auth/route-list.ts';
import { LOCAL_IDP_MOUNT, localIdpRouter } from './dev/idp/router.ts';
import { AppError } from './errors.ts';
import type { JobQueue } from './jobs/queue.ts';
import type { Logger } from './logger.ts';
import type { MailService } from './mail/index.ts';
import { outboxRouter } from './routes/outbox.ts';
import { adminRolesRouter } from './routes/admin-roles.ts';
import { apiTokensRouter } from './routes/api-tokens.ts';
import { appInfoRouter } from './routes/app-info.ts';
import { auditRouter } from './routes/audit.ts';
import { authRouter } from './routes/auth.ts';
import { healthRouter } from './routes/health.ts';
import { runsRouter } from './routes/runs.ts';
import { snapshotsRouter } from './routes/snapshots.ts';
import { runViewRouter } from './routes/run-view.ts';
import { scenariosRouter } from './routes/scenarios.ts';
import { meRouter } from './routes/me.ts';
import { regionsRouter } from './routes/regions.ts';
import { calibrationRouter } from './routes/calibration.ts';
import { signalsRouter } from './routes/signals.ts';
import { clustersRouter } from './routes/clusters.ts';
import { regimeCallsRouter } from './routes/regime-calls.ts';
import { regimeNamesRouter } from './routes/regime-names.ts';
import { subscriptionsRouter } from './routes/subscriptions.ts';

export interface AppDeps {
  config: Config;
  db: DbHandle;
  logger: Logger;
  queue: JobQueue;
  mail?: MailService;
}

declare module 'express-serve-static-core' {
  interface Request {
    id: string;
    log: Logger;
  }
}

/** The Express app without listen(): server/index.ts serves it, tests drive it directly. */
export function createApp(deps: AppDeps): express.Express {
  const { config, logger } = deps;
  const app = express();
  app.disable('x-powered-by');
  // One reverse proxy in front, not any number: trusting every X-Forwarded-For hop would let a client
  // choose its own address (and so slip past the sign-in rate limit and into the audit trail).
  app.set('trust proxy', config.trustProxy ? 1 : false);

  app.use(requestContext(logger));
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          // AG Grid's theming API and ECharts write inline styles.
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          formAction: ["'self'"],
          frameAncestors: ["'none'"],
          objectSrc: ["'none'"],
          upgradeInsecureRequests: config.publicUrl.startsWith('https:') ? [] : null,
        },
      },
    }),
  );
  // Bodies are small, except a regions file (polygons), which may be large.
  const smallJson = express.json({ limit: '1mb' });
  const regionsJson = express.json({ limit: '25mb' });
  app.use((req, res, next) => (req.path === '/api/regions' ? regionsJson : smallJson)(req, res, next));
  app.use(express.urlencoded({ extended: false, limit: '1mb' }));

  const auth = createAuth(deps);
  // The stand-in identity provider: outside production, when no real one is configured.
  if (auth.localIdp) app.use(LOCAL_IDP_MOUNT, localIdpRouter(auth.localIdp));
  app.use(['/api', '/auth'], ...auth.session);
  // The assertion consumer service is exempt from CSRF tokens: the IdP's signature protects it.
  app.use('/auth', auth.rateLimit, csrfProtection(['/saml/acs']), authRouter(deps, auth));
  // Every /api request passes the permission table (deny by default), then the CSRF check.
  // A bearer API token authenticates machines; such requests without a session cookie skip CSRF.
  app.use('/api', ...apiTokenAuth(deps));
  app.use('/api', authorizeApi(), csrfUnlessBearer(csrfProtection([]), deps));

  app.use('/api', healthRouter(deps));
  app.use('/api', appInfoRouter(deps));
  app.use('/api', runsRouter(deps));
  app.use('/api', snapshotsRouter(deps));
  app.use('/api', runViewRouter(deps));
  app.use('/api', scenariosRouter(deps));
  if (!config.isProduction) app.use('/api', outboxRouter(deps));
  app.use('/api', meRouter(deps));
  app.use('/api', auditRouter(deps));
  app.use('/api', adminRolesRouter(deps));
  app.use('/api', regionsRouter(deps));
  app.use('/api', calibrationRouter(deps));
  app.use('/api', signalsRouter(deps));
  app.use('/api', apiTokensRouter(deps));
  app.use('/api', clustersRouter(deps));
  app.use('/api', regimeNamesRouter(deps));
  app.use('/api', regimeCallsRouter(deps));
  app.use('/api', subscriptionsRouter(deps));

  app.use('/api', (_req, _res, next) => next(new AppError(404, 'not_found', 'No such API route.')));
  if (config.serveClient) serveClient(app, config.clientDir);
  app.use(errorHandler);
  warnAboutUnlistedRoutes(app, logger);
  return app;
}

/** An /api route missing from shared/permissions.ts is refused at run time; say so at start too. */
function warnAboutUnlistedRoutes(app: express.Express, logger: Logger): void {
  for (const route of unlistedApiRoutes(app)) {
    logger.warn(route, 'API route missing from the permission table (shared/permissions.ts): it is refused');
  }
}

function requestContext(logger: Logger): RequestHandler {
  return (req, res, next) => {
    const incoming = req.get('x-request-id');
    req.id = incoming && /^[\w.-]{8,80}$/.test(incoming) ? incoming : randomUUID();
    req.log = logger.child({ requestId: req.id });
    res.setHeader('X-Request-Id', req.id);
    const started = process.hrtime.bigint();
    res.on('finish', () => {
      const ms = Number(process.hrtime.bigint() - started) / 1e6;
      req.log.info({ method: req.method, url: req.originalUrl, status: res.statusCode, ms: Math.round(ms * 10) / 10 }, 'request');
    });
    next();
  };
}

/** The built client on the same port; any non-API path falls back to index.html for the router. */
function serveClient(app: express.Express, clientDir: string): void {
  app.use(express.static(clientDir, { index: false, maxAge: '1h' }));
  app.get(/^\/(?!api\/|auth\/|idp\/).*/, (_req, res) => {
    res.sendFile(path.join(clientDir, 'index.html'));
  });
}

const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  if (res.headersSent) return;
  if (err instanceof AppError) {
    res.status(err.status).json({ error: { code: err.code, message: err.message, details: err.details } });
    return;
  }
  if (err instanceof ZodError) {
    const details = err.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
    res.status(400).json({ error: { code: 'invalid', message: 'The request does not have the expected form.', details } });
    return;
  }
  const status = typeof err?.status === 'number' && err.status >= 400 && err.status < 500 ? err.status : 500;
  if (status === 413) {
    res.status(413).json({ error: { code: 'too_large', message: 'The request body is larger than allowed.' } });
    return;
  }
  if (status < 500) {
    res.status(status).json({ error: { code: 'bad_request', message: err?.message ?? 'Bad request.' } });
    return;
  }
  (req.log ?? console).error({ err }, 'unhandled error');
  res.status(500).json({ error: { code: 'internal', message: 'Something went wrong on the server.', requestId: req.id } });
};
