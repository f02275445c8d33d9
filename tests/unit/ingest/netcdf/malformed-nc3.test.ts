/**
 * Damaged classic NetCDF files (CDF-1 and CDF-2, written by ncgen inside the test and then cut or
 * altered): every one must end in an IngestError or a valid read, never another exception or a hang.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sniffFormat } from '../../../../server/ingest/index.ts';
import { seeded, tempDir, writeNetcdf } from './cdl.ts';
import { classicHeaderLength, smallRun } from './fixtures.ts';
import { expectIngestError, outcome } from './harness.ts';

const dir = tempDir();
let cdf1: Buffer;
let cdf2: Buffer;
let headerLength: number;

beforeAll(() => {
  cdf1 = fs.readFileSync(writeNetcdf(smallRun(), dir, 'small', 'nc3'));
  cdf2 = fs.readFileSync(writeNetcdf(smallRun(), dir, 'small', 'nc6'));
  headerLength = classicHeaderLength(smallRun(), cdf1.length);
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

function write(name: string, bytes: Buffer): string {
  const file = path.join(dir, name);
  fs.writeFileSync(file, bytes);
  return file;
}

describe('classic NetCDF, damaged', () => {
  it('the undamaged files read (control)', async () => {
    expect(headerLength).toBeGreaterThan(200);
    expect(headerLength).toBeLessThan(cdf1.length);
    for (const [name, bytes] of [['ok1.nc', cdf1], ['ok2.nc', cdf2]] as const) {
      const o = await outcome(write(name, bytes));
      expect(o.kind).toBe('ok');
      if (o.kind === 'ok') expect(o.fields).toBe(3 * 2 * 2);
    }
  });

  it('truncated anywhere in the header or the data gives IngestError', async () => {
    for (const bytes of [cdf1, cdf2]) {
      const cuts = new Set<number>();
      for (let n = 0; n < headerLength + 8; n += 3) cuts.add(n);
      for (let n = headerLength; n < bytes.length; n += 97) cuts.add(n);
      cuts.add(bytes.length - 1);
      for (const n of cuts) {
        const file = write(`cut-${bytes[3]}-${n}.nc`, bytes.subarray(0, n));
        const o = await outcome(file);
        expect(o.kind, `cut at ${n} of ${bytes.length}`).toBe('ingest-error');
        fs.rmSync(file);
      }
    }
  });

  it('300 seeded random byte changes in the header give IngestError or a valid read', async () => {
    const rand = seeded(1234);
    const kinds = { ok: 0, 'ingest-error': 0 };
    for (let trial = 0; trial < 300; trial++) {
      const bytes = Buffer.from(trial % 2 ? cdf2 : cdf1);
      const flips = 1 + Math.floor(rand() * 3);
      for (let f = 0; f < flips; f++) bytes[4 + Math.floor(rand() * (headerLength - 4))] = Math.floor(rand() * 256);
      const file = write(`flip-${trial}.nc`, bytes);
      kinds[(await outcome(file)).kind]++;
      fs.rmSync(file);
    }
    // both outcomes occur: harmless changes (in attribute text, say) and fatal ones
    expect(kinds.ok).toBeGreaterThan(0);
    expect(kinds['ingest-error']).toBeGreaterThan(0);
  });

  it('an absurd dimension length is refused, naming a variable and "absurd"', async () => {
    const bytes = Buffer.from(cdf1);
    // dimension list: tag, count, then per dimension: name length, name (padded), length
    const at = bytes.indexOf(Buffer.from('lat\0', 'latin1'), 8);
    expect(at).toBeGreaterThan(0);
    bytes.writeUInt32BE(0x7fffffff, at + 4);
    await expectIngestError(write('absurd.nc', bytes), /variable \w+: absurd dimensions/);
  });

  it('CDF-5 magic is refused by the format sniffer with a conversion hint', async () => {
    const bytes = Buffer.from(cdf1);
    bytes[3] = 5;
    await expectIngestError(write('cdf5.nc', bytes), /CDF-5.*nccopy/);
  });

  it('a text file named .nc is refused', async () => {
    await expectIngestError(write('notes.nc', Buffer.from('netcdf is not this\nlat = 1, 2, 3\n')), /not a GRIB2, NetCDF-3 or NetCDF-4 file/);
  });

  it('an empty file is refused', async () => {
    await expectIngestError(write('empty.nc', Buffer.alloc(0)), /empty/);
  });
});

describe('sniffFormat chooses by magic bytes, not by name', () => {
  it('a CDF-1 file named .grib2 is NetCDF-3 and reads', async () => {
    const file = write('model.grib2', cdf1);
    expect(await sniffFormat(file)).toBe('netcdf3');
    expect((await outcome(file)).kind).toBe('ok');
  });

  it('a NetCDF-4 file named .grib2 is NetCDF-4 and reads', async () => {
    const file = writeNetcdf(smallRun(), dir, 'nc4-as-grib', 'nc4');
    const renamed = path.join(dir, 'model4.grib2');
    fs.renameSync(file, renamed);
    expect(await sniffFormat(renamed)).toBe('netcdf4');
    expect((await outcome(renamed)).kind).toBe('ok');
  });

  it('a file starting GRIB named .nc is GRIB2', async () => {
    expect(await sniffFormat(write('grib.nc', Buffer.from('GRIB\0\0\0\x02rest', 'latin1')))).toBe('grib2');
  });
});
