import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type Client, type TestApp } from './support.ts';

let met: Client;

async function upload(client: Client, bytes: Uint8Array<ArrayBuffer> | string, fileName = 'run.grib2'): Promise<Response> {
  const form = new FormData();
  form.append('file', new Blob([bytes]), fileName);
  return client.fetch('/api/runs', { method: 'POST', body: form });
}

async function waitForState(id: string, states: string[], timeoutMs = 20_000) {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const res = await met.fetch(`/api/runs/${id}`);
    const { run } = await res.json();
    if (states.includes(run.state)) return run;
    if (Date.now() > until) throw new Error(`run ${id} stayed in state ${run.state}`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

function storedFiles(t: TestApp): string[] {
  const walk = (dir: string): string[] =>
    fs.existsSync(dir) ? fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? walk(path.join(dir, e.name)) : [path.join(dir, e.name)])) : [];
  return walk(t.config.storageDir);
}

describe('POST /api/runs', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ UPLOAD_LIMIT_BYTES: '4096' });
    met = await signIn(t, 'meteorologist');
  });
  afterAll(async () => {
    await t.close();
  });

  it('refuses a file that is no model run, with a plain message, and keeps nothing', async () => {
    const res = await upload(met, 'this is a text file, not a forecast\n', 'looks-like.grib2');
    expect(res.status).toBe(422);
    const body = await res.json();
    expect(body.error.code).toBe('not_a_model_run');
    expect(body.error.message).toMatch(/not a GRIB2, NetCDF-3 or NetCDF-4 file/);
    expect(storedFiles(t)).toEqual([]);
  });

  it('refuses a file over the size limit while streaming, and keeps nothing', async () => {
    const big = new Uint8Array(10_000);
    big.set([0x47, 0x52, 0x49, 0x42]);
    const res = await upload(met, big);
    expect(res.status).toBe(413);
    expect((await res.json()).error.message).toMatch(/larger than the upload limit/);
    expect(storedFiles(t)).toEqual([]);
  });

  it('refuses a request without a file part', async () => {
    const form = new FormData();
    form.append('note', 'no file here');
    const res = await met.fetch('/api/runs', { method: 'POST', body: form });
    expect(res.status).toBe(400);
    expect((await res.json()).error.message).toMatch(/field named "file"/);
  });

  it('stores a file under its SHA-256, answers a second upload with the same run, and records the state', async () => {
    const bytes = new Uint8Array(600);
    bytes.set([0x47, 0x52, 0x49, 0x42, 0, 0, 0, 2]); // "GRIB", edition 2, body truncated on purpose
    const first = await upload(met, bytes, '../../etc/passwd');
    expect(first.status).toBe(201);
    const a = await first.json();
    expect(a.duplicate).toBe(false);
    expect(a.run.checksum).toMatch(/^[0-9a-f]{64}$/);
    expect(a.run.fileName).toBe('passwd');
    expect(a.run.sizeBytes).toBe(600);
    const files = storedFiles(t);
    expect(files).toEqual([path.join(t.config.storageDir, 'runs', `${a.run.checksum}.bin`)]);

    const second = await upload(met, bytes, 'again.grib2');
    expect(second.status).toBe(200);
    const b = await second.json();
    expect(b).toMatchObject({ duplicate: true, run: { id: a.run.id } });

    // A truncated GRIB2 file is read by the queue worker and rejected with a message naming the problem.
    const run = await waitForState(a.run.id, ['rejected', 'ready']);
    expect(run.state).toBe('rejected');
    expect(run.message).toMatch(/section 0/);

    const list = await (await met.fetch('/api/runs')).json();
    expect(list.runs.map((r: { id: string }) => r.id)).toContain(a.run.id);
  });

  it('takes the desk\'s model name from an optional form field, and refuses a malformed one', async () => {
    const bytes = new Uint8Array(300);
    bytes.set([0x47, 0x52, 0x49, 0x42, 0, 0, 0, 2, 7]);
    const named = new FormData();
    named.append('model', 'NVM');
    named.append('file', new Blob([bytes]), 'named.grib2');
    const res = await met.fetch('/api/runs', { method: 'POST', body: named });
    expect(res.status).toBe(201);
    expect((await res.json()).run.model).toBe('NVM');
    const bad = new FormData();
    bad.append('model', '<script>');
    bad.append('file', new Blob([bytes.slice(0, 200)]), 'bad.grib2');
    const refused = await met.fetch('/api/runs', { method: 'POST', body: bad });
    expect(refused.status).toBe(400);
  });

  it('answers an unknown run id with 404 and a malformed one with 400', async () => {
    expect((await met.fetch('/api/runs/6f1c2a52-2d1e-4c35-9a53-0d3c1c8b7e10')).status).toBe(404);
    expect((await met.fetch('/api/runs/not-a-uuid')).status).toBe(400);
  });

  it('a trader may list runs but not upload (403); signed out gets 401', async () => {
    const trader = await signIn(t, 'trader');
    expect((await trader.fetch('/api/runs')).status).toBe(200);
    const res = await upload(trader, 'GRIB');
    expect(res.status).toBe(403);
    expect((await fetch(`${t.baseUrl}/api/runs`)).status).toBe(401);
  });

  it('every upload is audited', async () => {
    const res = await fetch(`${t.baseUrl}/api/audit?action=run.upload`);
    expect(res.status).toBe(401);
    const risk = await signIn(t, 'risk');
    const audit = await (await risk.fetch('/api/audit?action=run.upload')).json();
    expect(JSON.stringify(audit)).toContain('run.upload');
  });
});
