/**
 * `npm run liftwise -- upload FILE --url URL [--token-file F] [--wait] [--timeout SECONDS]`
 *
 * Uploads a model-run file to a Liftwise server through its API (POST /api/runs), the way a
 * scheduled job on the desk's server does. The file is streamed as multipart/form-data, never
 * read into memory whole. Progress goes to stderr when stderr is a terminal.
 *
 * Authentication: an API token issued by an admin (README.md, "Machine access"), read from the file
 * named by --token-file, else from the LIFTWISE_TOKEN environment variable. It is never accepted
 * on the command line (it would show in the process list and the shell history).
 *
 * Output (contract: desk scripts parse it), tab-separated on stdout:
 *   RUN_ID<TAB>new            the file was stored as a new run
 *   RUN_ID<TAB>duplicate      the same file (same SHA-256) was already there: that run's id
 * With --wait, polls the run until it is ready or rejected (default limit 3600 s), then adds:
 *   RUN_ID<TAB>ready
 *   RUN_ID<TAB>rejected<TAB>MESSAGE
 *
 * Exit codes:
 *   0  uploaded (new or duplicate); with --wait: the run is ready
 *   1  unexpected failure (one line on stderr, "upload: MESSAGE")
 *   2  wrong arguments, unreadable file or no token
 *   3  the server refused the token (401) or its roles (403)
 *   4  the server refused the file (e.g. 413 too large, 422 not a model run, 507 storage full);
 *      the server's message is printed on stderr
 *   5  with --wait: the run was rejected while reading or diagnosing (message on stdout and stderr)
 *   6  the server could not be reached, answered 5xx, or --wait ran out of time
 */
import fs from 'node:fs';
import http from 'node:http';
import https from 'node:https';
import path from 'node:path';
import { randomBytes } from 'node:crypto';

export const EXIT = { ok: 0, failure: 1, usage: 2, auth: 3, refused: 4, rejected: 5, unavailable: 6 } as const;

class UsageError extends Error {}

export class UploadError extends Error {
  constructor(
    readonly exitCode: number,
    message: string,
    readonly status?: number,
  ) {
    super(message);
    this.name = 'UploadError';
  }
}

interface Args {
  file: string;
  url: string;
  tokenFile: string | null;
  wait: boolean;
  timeoutS: number;
}

function parseArgs(argv: string[]): Args {
  const a: Args = { file: '', url: '', tokenFile: null, wait: false, timeoutS: 3600 };
  for (let i = 0; i < argv.length; i++) {
    const x = argv[i];
    const value = () => {
      const v = argv[++i];
      if (v === undefined || v.startsWith('--')) throw new UsageError(`${x} needs a value`);
      return v;
    };
    if (x === '--url') a.url = value();
    else if (x === '--token-file') a.tokenFile = value();
    else if (x === '--wait') a.wait = true;
    else if (x === '--timeout') a.timeoutS = Number(value());
    else if (x === '--token' || x.startsWith('--token=')) {
      throw new UsageError('a token is never taken on the command line; use --token-file FILE or the LIFTWISE_TOKEN environment variable');
    } else if (x.startsWith('--')) throw new UsageError(`unknown option ${x}`);
    else if (!a.file) a.file = x;
    else throw new UsageError(`unexpected argument ${x}`);
  }
  if (!a.file) throw new UsageError('name the file to upload');
  if (!a.url) throw new UsageError('--url is required (the Liftwise server, e.g. http://127.0.0.1:8080)');
  if (!/^https?:\/\//.test(a.url)) throw new UsageError('--url must start with http:// or https://');
  if (!Number.isFinite(a.timeoutS) || a.timeoutS <= 0) throw new UsageError('--timeout must be a positive number of seconds');
  return a;
}

export function readToken(tokenFile: string | null, env: NodeJS.ProcessEnv = process.env): string {
  let token: string;
  if (tokenFile) {
    try {
      token = fs.readFileSync(tokenFile, 'utf8').trim();
    } catch (err) {
      throw new UsageError(`cannot read the token file ${tokenFile}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
    }
  } else token = (env.LIFTWISE_TOKEN ?? '').trim();
  if (!token) throw new UsageError('no API token: pass --token-file FILE or set LIFTWISE_TOKEN (an admin issues tokens in the Admin screen)');
  return token;
}

export interface UploadResult {
  run: { id: string; state: string; message: string | null };
  duplicate: boolean;
}

interface Answer {
  status: number;
  body: unknown;
}

function errorMessage(body: unknown, fallback: string): string {
  const message = (body as { error?: { message?: unknown } } | null)?.error?.message;
  return typeof message === 'string' ? message : fallback;
}

/** Turns a non-success answer into an UploadError with the exit code it means. */
export function refusal(answer: Answer): UploadError {
  const message = errorMessage(answer.body, `the server answered ${answer.status}`);
  if (answer.status === 401 || answer.status === 403) return new UploadError(EXIT.auth, message, answer.status);
  if (answer.status === 429) return new UploadError(EXIT.unavailable, message, answer.status);
  if (answer.status >= 400 && answer.status < 500) return new UploadError(EXIT.refused, message, answer.status);
  if (answer.status === 507) return new UploadError(EXIT.refused, message, answer.status);
  return new UploadError(EXIT.unavailable, message, answer.status);
}

function requestModule(url: URL) {
  return url.protocol === 'https:' ? https : http;
}

function readAnswer(res: http.IncomingMessage): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    res.on('data', (c: Buffer) => chunks.push(c));
    res.on('error', reject);
    res.on('end', () => {
      const text = Buffer.concat(chunks).toString('utf8');
      let body: unknown = text;
      try {
        body = JSON.parse(text);
      } catch {
        // not JSON: keep the text
      }
      resolve({ status: res.statusCode ?? 0, body });
    });
  });
}

function unreachable(err: unknown, base: string): UploadError {
  return new UploadError(EXIT.unavailable, `cannot reach ${base}: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
}

/**
 * Streams `file` as multipart/form-data (field "file") to POST {baseUrl}/api/runs with the token.
 * 201 (new) and 200 (duplicate) resolve; anything else rejects with an UploadError.
 */
export async function uploadRunFile(options: {
  baseUrl: string;
  token: string;
  file: string;
  /** the desk's name for the model (form field "model"), when the file's own is unhelpful */
  model?: string;
  onProgress?: (sent: number, total: number) => void;
}): Promise<UploadResult> {
  const { baseUrl, token, file, onProgress } = options;
  const size = (await fs.promises.stat(file)).size;
  const boundary = `----liftwise-${randomBytes(12).toString('hex')}`;
  const safeName = path.basename(file).replace(/["\r\n\\]/g, '_');
  // The model field goes first: the server reads text fields that arrive before the file.
  const modelPart = options.model ? `--${boundary}\r\nContent-Disposition: form-data; name="model"\r\n\r\n${options.model}\r\n` : '';
  const head = Buffer.from(`${modelPart}--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${safeName}"\r\nContent-Type: application/octet-stream\r\n\r\n`);
  const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
  const url = new URL('/api/runs', baseUrl);
  const answer = await new Promise<Answer>((resolve, reject) => {
    const req = requestModule(url).request(url, {
      method: 'POST',
      headers: {
        Authorization: `Bearer ${token}`,
        Accept: 'application/json',
        'Content-Type': `multipart/form-data; boundary=${boundary}`,
        'Content-Length': head.length + size + tail.length,
      },
    });
    let answered = false;
    req.on('response', (res) => {
      answered = true;
      readAnswer(res).then(resolve, reject);
    });
    // A server that refuses early (401, 413) may close before the whole body is sent: its answer counts.
    req.on('error', (err) => {
      if (!answered) reject(unreachable(err, baseUrl));
    });
    req.write(head);
    let sent = 0;
    const stream = fs.createReadStream(file, { highWaterMark: 1 << 20 });
    stream.on('data', (chunk) => {
      sent += chunk.length;
      onProgress?.(sent, size);
    });
    stream.on('error', (err) => {
      req.destroy(err);
      reject(new UploadError(EXIT.usage, `cannot read ${file}: ${(err as NodeJS.ErrnoException).code ?? err.message}`));
    });
    stream.on('end', () => req.end(tail));
    stream.pipe(req, { end: false });
  });
  if (answer.status !== 200 && answer.status !== 201) throw refusal(answer);
  return answer.body as UploadResult;
}

/** GET {baseUrl}{path} with the token, JSON answer. */
export async function getJson(baseUrl: string, token: string, pathAndQuery: string): Promise<Answer> {
  const url = new URL(pathAndQuery, baseUrl);
  return new Promise<Answer>((resolve, reject) => {
    const req = requestModule(url).request(url, { method: 'GET', headers: { Authorization: `Bearer ${token}`, Accept: 'application/json' } });
    req.on('response', (res) => readAnswer(res).then(resolve, reject));
    req.on('error', (err) => reject(unreachable(err, baseUrl)));
    req.end();
  });
}

/** Polls the run until it is ready or rejected; a passing outage of the server is waited out. */
export async function waitForRun(baseUrl: string, token: string, runId: string, timeoutMs: number, intervalMs = 2000): Promise<{ state: string; message: string | null }> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    let answer: Answer | null = null;
    try {
      answer = await getJson(baseUrl, token, `/api/runs/${runId}`);
    } catch (err) {
      if (!(err instanceof UploadError) || err.exitCode !== EXIT.unavailable) throw err;
    }
    if (answer && answer.status === 200) {
      const run = (answer.body as { run: { state: string; message: string | null } }).run;
      if (run.state === 'ready' || run.state === 'rejected') return run;
    } else if (answer && answer.status < 500 && answer.status !== 429) throw refusal(answer);
    if (Date.now() > until) throw new UploadError(EXIT.unavailable, `run ${runId} was not ready within ${Math.round(timeoutMs / 1000)} s`);
    await new Promise((r) => setTimeout(r, intervalMs));
  }
}

function progressPrinter(): ((sent: number, total: number) => void) | undefined {
  if (!process.stderr.isTTY) return undefined;
  let last = -1;
  return (sent, total) => {
    const pct = total ? Math.floor((100 * sent) / total) : 100;
    if (pct === last) return;
    last = pct;
    process.stderr.write(`\ruploading ${(sent / 1e6).toFixed(1)} of ${(total / 1e6).toFixed(1)} MB (${pct}%)${sent >= total ? '\n' : ''}`);
  };
}

export async function run(argv: string[]): Promise<number> {
  let args: Args;
  let token: string;
  try {
    args = parseArgs(argv);
    token = readToken(args.tokenFile);
    if (!fs.statSync(args.file, { throwIfNoEntry: false })?.isFile()) throw new UsageError(`${args.file} is not a file`);
  } catch (err) {
    if (err instanceof UsageError) {
      console.error(`upload: ${err.message}`);
      console.error('usage: npm run liftwise -- upload FILE --url URL [--token-file F] [--wait] [--timeout SECONDS]');
      return EXIT.usage;
    }
    throw err;
  }
  try {
    const result = await uploadRunFile({ baseUrl: args.url, token, file: args.file, onProgress: progressPrinter() });
    console.log(`${result.run.id}\t${result.duplicate ? 'duplicate' : 'new'}`);
    if (!args.wait) return EXIT.ok;
    const done = await waitForRun(args.url, token, result.run.id, args.timeoutS * 1000);
    if (done.state === 'ready') {
      console.log(`${result.run.id}\tready`);
      return EXIT.ok;
    }
    const message = (done.message ?? 'no reason given').replace(/[\t\r\n]+/g, ' ');
    console.log(`${result.run.id}\trejected\t${message}`);
    console.error(`upload: the run was rejected: ${message}`);
    return EXIT.rejected;
  } catch (err) {
    if (err instanceof UploadError) {
      console.error(`upload: ${err.status ? `${err.status}: ` : ''}${err.message}`);
      return err.exitCode;
    }
    console.error(`upload: ${(err as Error).message}`);
    return EXIT.failure;
  }
}
