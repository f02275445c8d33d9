/**
 * Damaged NetCDF-4 (HDF5) files and HDF5 files that are not model runs: every one must end in
 * an IngestError or a valid read, never another exception or a hang.
 */
import fs from 'node:fs';
import path from 'node:path';
import h5wasm from 'h5wasm/node';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seeded, tempDir, writeNetcdf } from './cdl.ts';
import { smallRun } from './fixtures.ts';
import { expectIngestError, outcome } from './harness.ts';

const dir = tempDir();
let nc4: Buffer;
let deflated: Buffer;

beforeAll(() => {
  nc4 = fs.readFileSync(writeNetcdf(smallRun(), dir, 'small', 'nc4'));
  deflated = fs.readFileSync(writeNetcdf(smallRun(), dir, 'small', 'nc4-deflate'));
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function write(name: string, bytes: Buffer): string {
  const file = path.join(dir, name);
  fs.writeFileSync(file, bytes);
  return file;
}

describe('NetCDF-4, damaged', () => {
  it('the undamaged files read (control)', async () => {
    for (const [name, bytes] of [['ok.nc', nc4], ['okz.nc', deflated]] as const) {
      const o = await outcome(write(name, bytes));
      expect(o.kind).toBe('ok');
      if (o.kind === 'ok') expect(o.fields).toBe(3 * 2 * 2);
    }
  });

  it('truncated at many points gives IngestError', async () => {
    for (const bytes of [nc4, deflated]) {
      const cuts = [8, 16, 48, 96, 200, 512, 1024, 2048];
      for (let n = 2048; n < bytes.length; n += Math.max(1, Math.floor(bytes.length / 40))) cuts.push(n);
      cuts.push(bytes.length - 1);
      for (const n of cuts.filter((x) => x < bytes.length)) {
        const file = write(`cut-${n}.nc`, bytes.subarray(0, n));
        const o = await outcome(file);
        expect(o.kind, `cut at ${n} of ${bytes.length}`).toBe('ingest-error');
        fs.rmSync(file);
      }
    }
  });

  it('120 seeded random byte changes give IngestError or a valid read', async () => {
    const rand = seeded(77);
    const kinds = { ok: 0, 'ingest-error': 0 };
    for (let trial = 0; trial < 120; trial++) {
      const bytes = Buffer.from(trial % 2 ? deflated : nc4);
      // past the 8-byte signature, over the superblock, object headers and data
      const at = 8 + Math.floor(rand() * (bytes.length - 8));
      bytes[at] = Math.floor(rand() * 256);
      const file = write(`flip-${trial}.nc`, bytes);
      kinds[(await outcome(file)).kind]++;
      fs.rmSync(file);
    }
    expect(kinds.ok + kinds['ingest-error']).toBe(120);
    expect(kinds['ingest-error']).toBeGreaterThan(0);
  });

  it('an HDF5 file that is not NetCDF (no dimension scales, no CF metadata) is refused', async () => {
    await h5wasm.ready;
    const file = path.join(dir, 'plain.h5');
    const f = new h5wasm.File(file, 'w');
    f.create_dataset({ name: 'temperature', data: new Float32Array(24), shape: [2, 3, 4] });
    f.create_dataset({ name: 'counts', data: new Int32Array([1, 2, 3]) });
    f.close();
    await expectIngestError(file, /variable t: missing temperature|variable z: missing geopotential/);
  });

  it('a NetCDF-4 file without the needed variables names what is missing', async () => {
    const spec = smallRun();
    spec.vars = spec.vars.filter((v) => v.name !== 'gh');
    await expectIngestError(writeNetcdf(spec, dir, 'no-z', 'nc4'), /variable z: missing geopotential/);
  });
});
