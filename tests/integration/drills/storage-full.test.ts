/**
 * Fault drill: the storage folder fills up during an upload. The upload is answered 507 with a
 * clear message, and nothing is half-written: no file in the storage folder, no run row.
 * As root, the storage folder is a 1 MB tmpfs (a real ENOSPC from the kernel); otherwise the
 * write stream is replaced by one that fails with ENOSPC after 1 MB, the same error code.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { signIn, startTestApp, type Client, type TestApp } from '../support.ts';

const QUOTA = 1 << 20;

function mountSmallTmpfs(dir: string): boolean {
  if (process.getuid?.() !== 0) return false;
  return spawnSync('mount', ['-t', 'tmpfs', '-o', `size=${QUOTA}`, 'tmpfs', dir], { stdio: 'ignore' }).status === 0;
}

/** Without a mount: write streams into `dir` fail with ENOSPC once the quota is used up. */
function shimQuota(dir: string): void {
  const real = fs.createWriteStream;
  vi.spyOn(fs, 'createWriteStream').mockImplementation(((file: fs.PathLike, options?: unknown) => {
    if (!String(file).startsWith(dir)) return real(file, options as never);
    const target = real(file, options as never);
    let used = 0;
    return new Writable({
      write(chunk: Buffer, _enc, done) {
        used += chunk.length;
        if (used > QUOTA) return done(Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' }));
        target.write(chunk, done);
      },
      final(done) {
        target.end(done);
      },
      destroy(err, done) {
        target.destroy();
        done(err);
      },
    }) as unknown as fs.WriteStream;
  }) as typeof fs.createWriteStream);
}

function filesUnder(dir: string): string[] {
  if (!fs.existsSync(dir)) return [];
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? filesUnder(path.join(dir, e.name)) : [path.join(dir, e.name)]));
}

describe('fault drill: storage full during an upload', () => {
  const storage = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-quota-'));
  let mounted = false;
  let t: TestApp;
  let met: Client;

  beforeAll(async () => {
    mounted = mountSmallTmpfs(storage);
    if (!mounted) shimQuota(storage);
    t = await startTestApp({ STORAGE_DIR: storage }, { workers: false });
    met = await signIn(t, 'meteorologist');
  });
  afterAll(async () => {
    await t.close();
    vi.restoreAllMocks();
    if (mounted) spawnSync('umount', [storage], { stdio: 'ignore' });
    fs.rmSync(storage, { recursive: true, force: true });
  });

  it('answers 507 with a clear message and leaves neither a file nor a run row', async () => {
    const big = new Uint8Array(3 * QUOTA);
    big.set([0x47, 0x52, 0x49, 0x42, 0, 0, 0, 2]);
    new DataView(big.buffer).setFloat64(64, Date.now() + process.pid);
    const checksum = createHash('sha256').update(big).digest('hex');
    const form = new FormData();
    form.append('file', new Blob([big]), 'too-big-for-the-disk.grib2');
    const res = await met.fetch('/api/runs', { method: 'POST', body: form });
    expect(res.status).toBe(507);
    const body = (await res.json()) as { error: { code: string; message: string } };
    expect(body.error.code).toBe('storage_full');
    expect(body.error.message).toMatch(/no room left for this file\. Nothing was stored/);
    expect(filesUnder(storage)).toEqual([]);
    const rows = await t.db.pool.query('SELECT id FROM runs WHERE checksum = $1', [checksum]);
    expect(rows.rowCount).toBe(0);

    // The server is fine afterwards: a file that fits is accepted.
    const small = new Uint8Array(1000);
    small.set([0x47, 0x52, 0x49, 0x42, 0, 0, 0, 2]);
    new DataView(small.buffer).setFloat64(64, Date.now() + process.pid + 1);
    const ok = new FormData();
    ok.append('file', new Blob([small]), 'fits.grib2');
    const accepted = await met.fetch('/api/runs', { method: 'POST', body: ok });
    expect(accepted.status).toBe(201);
    expect(filesUnder(storage)).toHaveLength(1);
  });
});
