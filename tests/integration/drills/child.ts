/** Starting and killing app-child.ts processes for the fault drills. */
import { spawn, type ChildProcess } from 'node:child_process';
import net from 'node:net';
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '../../..');

export interface AppChild {
  process: ChildProcess;
  baseUrl: string;
  /** everything the child wrote on stderr, for failure messages */
  stderr(): string;
  exited: Promise<number | null>;
}

/** Starts the app as a child process on `port` and resolves once it listens. */
export function startAppChild(env: Record<string, string>, port: number, timeoutMs = 60_000): Promise<AppChild> {
  const baseUrl = `http://127.0.0.1:${port}`;
  // tsx as a loader in the same process (not its CLI, which runs the script in a grandchild that a
  // SIGKILL of the CLI would leave running).
  const child = spawn(process.execPath, ['--import', 'tsx', 'tests/integration/drills/app-child.ts'], {
    cwd: root,
    env: {
      PATH: process.env.PATH ?? '',
      NODE_ENV: 'test',
      LOG_LEVEL: 'silent',
      SERVE_CLIENT: 'false',
      HOST: '127.0.0.1',
      PORT: String(port),
      PUBLIC_URL: baseUrl,
      AUTH_RATE_LIMIT_PER_MINUTE: '10000',
      ...env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let err = '';
  child.stderr!.on('data', (c) => (err = (err + c).slice(-4000)));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`app child did not start within ${timeoutMs} ms: ${err}`)), timeoutMs);
    child.stdout!.on('data', (c: Buffer) => {
      if (c.toString().includes('ready ')) {
        clearTimeout(timer);
        resolve({ process: child, baseUrl, stderr: () => err, exited });
      }
    });
    void exited.then((code) => {
      clearTimeout(timer);
      reject(new Error(`app child exited with ${code} before listening: ${err}`));
    });
  });
}

export function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = net.createServer().listen(0, '127.0.0.1', () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}
