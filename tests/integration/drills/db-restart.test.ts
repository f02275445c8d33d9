/**
 * Fault drill: PostgreSQL restarted while signed-in people are reading. Requests during the
 * outage fail cleanly (a JSON 5xx answer, the server keeps running), requests afterwards
 * succeed without restarting the server (the pool opens fresh connections), and an upload that
 * was acknowledged (201) before the restart is still there. Restarts the test cluster that
 * `npm test` starts (scripts/db.mjs stop, then start), in a separate process so that this
 * process, which is the server, keeps answering during the outage.
 */
import { spawn } from 'node:child_process';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type Client, type TestApp } from '../support.ts';

function gribLike(seed: number): Uint8Array<ArrayBuffer> {
  const bytes = new Uint8Array(800);
  bytes.set([0x47, 0x52, 0x49, 0x42, 0, 0, 0, 2]);
  new DataView(bytes.buffer).setFloat64(300, Date.now() + process.pid * 1000 + seed);
  return bytes;
}

async function upload(client: Client, seed: number): Promise<Response> {
  const form = new FormData();
  form.append('file', new Blob([gribLike(seed)]), `drill-${seed}.grib2`);
  return client.fetch('/api/runs', { method: 'POST', body: form });
}

const root = path.resolve(import.meta.dirname, '../../..');

/** Stops and starts the test cluster from another process; resolves when it accepts connections again. */
function restartTestCluster(): Promise<void> {
  const script = "const db = await import('./scripts/db.mjs'); await db.stop('test'); await db.start('test');";
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--input-type=module', '-e', script], { cwd: root, env: process.env, stdio: ['ignore', 'ignore', 'pipe'] });
    let err = '';
    child.stderr.on('data', (c) => (err += c));
    child.on('exit', (code) => (code === 0 ? resolve() : reject(new Error(`restarting the test cluster failed: ${err}`))));
  });
}

interface Outcome {
  status: number | 'network';
  json: boolean;
  code?: string;
}

describe('fault drill: PostgreSQL restarted during requests', () => {
  let t: TestApp;
  let met: Client;
  beforeAll(async () => {
    t = await startTestApp({}, { workers: false });
    met = await signIn(t, 'meteorologist');
  });
  afterAll(async () => {
    await t.close();
  });

  it('fails cleanly during the outage, recovers without a server restart, and keeps what it acknowledged', async () => {
    const before = await upload(met, 1);
    expect(before.status).toBe(201);
    const acknowledged = ((await before.json()) as { run: { id: string } }).run.id;

    const outcomes: Outcome[] = [];
    let stop = false;
    const looper = async () => {
      while (!stop) {
        try {
          const res = await met.fetch('/api/runs');
          const text = await res.text();
          let code: string | undefined;
          let json = false;
          try {
            code = (JSON.parse(text) as { error?: { code?: string } }).error?.code;
            json = true;
          } catch {
            json = false;
          }
          outcomes.push({ status: res.status, json, code });
        } catch (err) {
          const cause = (err as Error & { cause?: { code?: string; message?: string } }).cause;
          outcomes.push({ status: 'network', json: false, code: cause?.code ?? cause?.message ?? (err as Error).message });
        }
      }
    };
    const loops = Array.from({ length: 4 }, looper);
    await new Promise((r) => setTimeout(r, 300));
    const restartedAt = outcomes.length;
    await restartTestCluster();
    await new Promise((r) => setTimeout(r, 1500));
    stop = true;
    await Promise.all(loops);

    const failures = outcomes.filter((o) => o.status !== 200);
    // The server never dropped a connection or crashed: every request got an answer.
    expect(outcomes.filter((o) => o.status === 'network')).toEqual([]);
    // Every failure is a JSON 5xx, never an HTML page, a hang, or a 401: a request whose session
    // could not be loaded must not end the session (express-session's unset: 'destroy' deletes it
    // at the end of such a request, signing the person out once the database is back).
    for (const f of failures) {
      expect(f.json, JSON.stringify(f)).toBe(true);
      expect(f.status as number, JSON.stringify(failures)).toBeGreaterThanOrEqual(500);
    }
    expect(outcomes.slice(0, restartedAt).every((o) => o.status === 200)).toBe(true);
    // The outage was really hit (otherwise this drill proves nothing).
    expect(failures.length).toBeGreaterThan(0);
    // Recovered without a restart of the server: the last requests succeeded.
    expect(outcomes.slice(-8).every((o) => o.status === 200), JSON.stringify(outcomes.slice(-8))).toBe(true);

    const list = (await (await met.fetch('/api/runs')).json()) as { runs: { id: string }[] };
    expect(list.runs.map((r) => r.id)).toContain(acknowledged);
    expect((await met.fetch('/api/me')).status).toBe(200);
    // Writes work again too: the session store, the audit chain and the queue reconnected.
    const after = await upload(met, 2);
    expect(after.status, await after.clone().text()).toBe(201);
  }, 60_000);
});
