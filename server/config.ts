import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { z } from 'zod';

/** The repository root (server/ sits directly below it). */
export const PROJECT_ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

const port = z.coerce.number().int().min(1).max(65535);
const flag = z
  .enum(['true', 'false', '1', '0', 'yes', 'no'])
  .transform((v) => v === 'true' || v === '1' || v === 'yes');

/**
 * Every setting, from the environment, with local defaults so that `npm start` needs none.
 * Names are documented in the README's configuration table: keep the two in step.
 */
const schema = z
  .object({
    NODE_ENV: z.enum(['development', 'test', 'production']).default('development'),
    HOST: z.string().min(1).default('127.0.0.1'),
    PORT: port.default(8080),
    PUBLIC_URL: z.url().optional(),
    DATABASE_URL: z
      .string()
      .regex(/^postgres(ql)?:\/\//, 'must be a postgres:// URL')
      .default('postgres://liftwise@127.0.0.1:54329/liftwise'),
    DATA_DIR: z.string().min(1).default('.data'),
    STORAGE_DIR: z.string().min(1).optional(),
    UPLOAD_LIMIT_BYTES: z.coerce.number().int().positive().default(4_000_000_000),
    LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
    SERVE_CLIENT: flag.optional(),
    TRUST_PROXY: flag.default(false),
    CODE_VERSION: z.string().min(1).optional(),
    IN_PROCESS_WORKER: flag.default(true),
    JOB_EXPIRE_SECONDS: z.coerce.number().int().min(1).default(60 * 60),
    JOB_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).default(120),
    QUEUE_SCHEMA: z.string().regex(/^[a-z_][a-z0-9_]{0,40}$/, 'must be a lower-case SQL identifier').default('pgboss'),
    SNAPSHOT_AFTER_PUBLISH: flag.default(false),
    SMTP_URL: z.string().regex(/^smtps?:\/\//, 'must be an smtp:// or smtps:// URL').optional(),
    MAIL_FROM: z.string().min(3).default('Liftwise <liftwise@nordvale.example>'),
    MAIL_CATCHER_PORT: port.default(2525),
    // Sign-in (SAML 2.0). Without SAML_IDP_SSO_URL, development and tests use the local identity provider.
    SAML_IDP_SSO_URL: z.url().optional(),
    SAML_IDP_CERTS: z.string().min(1).optional(),
    SAML_IDP_CERTS_FILE: z.string().min(1).optional(),
    SAML_IDP_ENTITY_ID: z.string().min(1).optional(),
    SAML_SP_ENTITY_ID: z.string().min(1).optional(),
    SAML_ACS_URL: z.url().optional(),
    SAML_CLOCK_SKEW_MS: z.coerce.number().int().min(0).max(300_000).default(30_000),
    SESSION_SECRET: z.string().optional(),
    SESSION_IDLE_MINUTES: z.coerce.number().int().min(1).max(7 * 24 * 60).default(8 * 60),
    SESSION_ABSOLUTE_MINUTES: z.coerce.number().int().min(1).max(30 * 24 * 60).default(12 * 60),
    AUTH_RATE_LIMIT_PER_MINUTE: z.coerce.number().int().min(1).default(60),
  })
  .superRefine((env, ctx) => {
    const issue = (key: string, message: string) => ctx.addIssue({ code: 'custom', path: [key], message });
    if (env.SAML_IDP_CERTS_FILE && !fs.existsSync(path.resolve(PROJECT_ROOT, env.SAML_IDP_CERTS_FILE))) issue('SAML_IDP_CERTS_FILE', 'names a file that does not exist');
    else if (env.SAML_IDP_SSO_URL && !env.SAML_IDP_CERTS && !env.SAML_IDP_CERTS_FILE) {
      issue('SAML_IDP_CERTS', "is required with SAML_IDP_SSO_URL: the identity provider's signing certificate(s), PEM (or SAML_IDP_CERTS_FILE)");
    } else if (env.SAML_IDP_CERTS && splitPemCertificates(env.SAML_IDP_CERTS).length === 0) {
      issue('SAML_IDP_CERTS', 'holds no PEM certificate (-----BEGIN CERTIFICATE----- ... -----END CERTIFICATE-----)');
    }
    const secrets = (env.SESSION_SECRET ?? '').split(',').map((s) => s.trim()).filter(Boolean);
    if (secrets.some((s) => s.length < 32)) issue('SESSION_SECRET', 'must be at least 32 characters (each, when several are comma-separated)');
    if (env.NODE_ENV !== 'production') return;
    if (!env.SAML_IDP_SSO_URL) issue('SAML_IDP_SSO_URL', "is required in production: the organisation's identity provider sign-in URL");
    if (secrets.length === 0) issue('SESSION_SECRET', 'is required in production: at least 32 random characters');
    if (!env.SMTP_URL) issue('SMTP_URL', "is required in production: the organisation's mail server (smtp:// or smtps://)");
  })
  .transform((env) => {
    const dataDir = path.resolve(PROJECT_ROOT, env.DATA_DIR);
    const clientDir = path.join(PROJECT_ROOT, 'dist');
    const publicUrl = (env.PUBLIC_URL ?? `http://${env.HOST}:${env.PORT}`).replace(/\/$/, '');
    return {
      env: env.NODE_ENV,
      isProduction: env.NODE_ENV === 'production',
      host: env.HOST,
      port: env.PORT,
      publicUrl,
      databaseUrl: env.DATABASE_URL,
      dataDir,
      storageDir: env.STORAGE_DIR ? path.resolve(PROJECT_ROOT, env.STORAGE_DIR) : path.join(dataDir, 'uploads'),
      uploadLimitBytes: env.UPLOAD_LIMIT_BYTES,
      logLevel: env.LOG_LEVEL,
      clientDir,
      serveClient: env.SERVE_CLIENT ?? fs.existsSync(path.join(clientDir, 'index.html')),
      trustProxy: env.TRUST_PROXY,
      codeVersion: env.CODE_VERSION ?? readCodeVersion(),
      inProcessWorker: env.IN_PROCESS_WORKER,
      queue: { schema: env.QUEUE_SCHEMA, expireSeconds: env.JOB_EXPIRE_SECONDS, maintenanceSeconds: env.JOB_MAINTENANCE_SECONDS },
      /** seal a snapshot automatically after each published regime call */
      snapshotAfterPublish: env.SNAPSHOT_AFTER_PUBLISH,
      /** null: no mail server configured; outside production the local mail catcher stands in */
      smtpUrl: env.SMTP_URL ?? null,
      mailFrom: env.MAIL_FROM,
      mailCatcherPort: env.MAIL_CATCHER_PORT,
      mailCatcherDir: path.join(dataDir, 'mail-catcher'),
      auth: authSettings(env, publicUrl, dataDir),
    };
  });

export type Config = z.output<typeof schema>;
export type AuthConfig = Config['auth'];

interface AuthEnv {
  SAML_IDP_SSO_URL?: string;
  SAML_IDP_CERTS?: string;
  SAML_IDP_CERTS_FILE?: string;
  SAML_IDP_ENTITY_ID?: string;
  SAML_SP_ENTITY_ID?: string;
  SAML_ACS_URL?: string;
  SAML_CLOCK_SKEW_MS: number;
  SESSION_SECRET?: string;
  SESSION_IDLE_MINUTES: number;
  SESSION_ABSOLUTE_MINUTES: number;
  AUTH_RATE_LIMIT_PER_MINUTE: number;
}

/**
 * Sign-in and session settings. The identity provider's certificates are pinned: only responses
 * signed by one of them are accepted (several while the provider rolls its key over).
 * Without SAML_IDP_SSO_URL outside production, `idp` is null and the local identity provider
 * (server/dev/idp) stands in for it.
 */
function authSettings(env: AuthEnv, publicUrl: string, dataDir: string) {
  const certsText = [env.SAML_IDP_CERTS ?? '', env.SAML_IDP_CERTS_FILE ? fs.readFileSync(path.resolve(PROJECT_ROOT, env.SAML_IDP_CERTS_FILE), 'utf8') : ''].join('\n');
  return {
    idp: env.SAML_IDP_SSO_URL
      ? { ssoUrl: env.SAML_IDP_SSO_URL, certs: splitPemCertificates(certsText), entityId: env.SAML_IDP_ENTITY_ID ?? null }
      : null,
    spEntityId: env.SAML_SP_ENTITY_ID ?? `${publicUrl}/auth/saml/metadata`,
    acsUrl: env.SAML_ACS_URL ?? `${publicUrl}/auth/saml/acs`,
    clockSkewMs: env.SAML_CLOCK_SKEW_MS,
    /** signing secrets, newest first; empty outside production means "generate one into the data folder" */
    sessionSecrets: (env.SESSION_SECRET ?? '').split(',').map((s) => s.trim()).filter(Boolean),
    sessionSecretFile: path.join(dataDir, 'session-secret'),
    sessionIdleMs: env.SESSION_IDLE_MINUTES * 60_000,
    sessionAbsoluteMs: env.SESSION_ABSOLUTE_MINUTES * 60_000,
    /** Secure cookie with the __Host- prefix when the public address is https */
    secureCookies: publicUrl.startsWith('https:'),
    rateLimitPerMinute: env.AUTH_RATE_LIMIT_PER_MINUTE,
  };
}

/** Each PEM certificate block of `text` (environment values may carry "\\n" for line breaks). */
export function splitPemCertificates(text: string): string[] {
  const normalised = text.replace(/\\n/g, '\n');
  return normalised.match(/-----BEGIN CERTIFICATE-----[\s\S]+?-----END CERTIFICATE-----/g) ?? [];
}


/** A bad setting: the message is one line per variable, naming it. */
export class ConfigError extends Error {
  constructor(readonly problems: string[]) {
    super(problems.join('\n'));
    this.name = 'ConfigError';
  }
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const parsed = schema.safeParse(env);
  if (parsed.success) return parsed.data;
  const problems = parsed.error.issues.map((issue) => {
    const name = issue.path.join('.');
    const got = env[name];
    return `configuration: ${name} ${issue.message.toLowerCase()}${got === undefined ? '' : ` (got "${got}")`}`;
  });
  throw new ConfigError(problems);
}

/** package.json version plus the git commit when the checkout has one: recorded with every computed number. */
function readCodeVersion(): string {
  const pkg = JSON.parse(fs.readFileSync(path.join(PROJECT_ROOT, 'package.json'), 'utf8')) as { version: string };
  try {
    const head = fs.readFileSync(path.join(PROJECT_ROOT, '.git', 'HEAD'), 'utf8').trim();
    const ref = head.startsWith('ref: ') ? head.slice(5) : null;
    const sha = ref ? readRef(ref) : head;
    return sha ? `${pkg.version}+${sha.slice(0, 12)}` : pkg.version;
  } catch {
    return pkg.version;
  }
}

function readRef(ref: string): string | null {
  const loose = path.join(PROJECT_ROOT, '.git', ref);
  if (fs.existsSync(loose)) return fs.readFileSync(loose, 'utf8').trim();
  const packed = path.join(PROJECT_ROOT, '.git', 'packed-refs');
  if (!fs.existsSync(packed)) return null;
  const line = fs.readFileSync(packed, 'utf8').split('\n').find((l) => l.endsWith(` ${ref}`));
  return line ? line.split(' ')[0] : null;
}
