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
    SMTP_URL: z.string().regex(/^smtps?:\/\//, 'must be an smtp:// or smtps:// URL').optional(),
    MAIL_FROM: z.string().min(3).default('Liftwise <liftwise@nordvale.example>'),
    MAIL_CATCHER_PORT: port.default(2525),
  })
  .transform((env) => {
    const dataDir = path.resolve(PROJECT_ROOT, env.DATA_DIR);
    const clientDir = path.join(PROJECT_ROOT, 'dist');
    return {
      env: env.NODE_ENV,
      isProduction: env.NODE_ENV === 'production',
      host: env.HOST,
      port: env.PORT,
      publicUrl: (env.PUBLIC_URL ?? `http://${env.HOST}:${env.PORT}`).replace(/\/$/, ''),
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
      /** null: no mail server configured; outside production the local mail catcher stands in */
      smtpUrl: env.SMTP_URL ?? null,
      mailFrom: env.MAIL_FROM,
      mailCatcherPort: env.MAIL_CATCHER_PORT,
      mailCatcherDir: path.join(dataDir, 'mail-catcher'),
    };
  });

export type Config = z.output<typeof schema>;

/** Settings production cannot do without (checked after parsing, one line each). */
function productionProblems(config: Config): string[] {
  if (!config.isProduction) return [];
  const problems: string[] = [];
  if (!config.smtpUrl) problems.push('configuration: SMTP_URL is required in production (the organisation\'s mail server)');
  return problems;
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
  if (parsed.success) {
    const problems = productionProblems(parsed.data);
    if (problems.length) throw new ConfigError(problems);
    return parsed.data;
  }
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
