/**
 * NetCDF-3 reader against the netCDF tools: files written by ncgen (CDF-1 with `-k nc3`, CDF-2
 * with `-k nc6`), every canonical value compared with `ncdump -v VAR -p 9,17`
 * (reference tool: netCDF ncdump, Debian netcdf-bin) after the expected orientation change.
 * Source of every expected value: the stored values ncdump prints, unpacked with the CF rules.
 */
import fs from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { tempDir, writeNetcdf, type NcKind } from '../../unit/ingest/netcdf/cdl.ts';
import { checkCase, classicCase, permutedCase } from './cases.ts';

const dir = tempDir();
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

describe.each([
  ['nc3', 1],
  ['nc6', 2],
] as [NcKind, number][])('ncgen -k %s (CDF-%i)', (kind, version) => {
  it('N->S latitudes, 340..20 longitudes, hPa top first, packed gh with holes, record variables, members match ncdump (reference tool: netCDF ncdump)', async () => {
    const file = writeNetcdf(classicCase().spec, dir, `classic-${kind}`, kind);
    expect([...fs.readFileSync(file).subarray(0, 4)]).toEqual([0x43, 0x44, 0x46, version]);
    const { compared, missing } = await checkCase(classicCase(), file);
    expect(compared).toBeGreaterThan(800);
    expect(missing).toBeGreaterThan(20);
  });

  it('permuted dimensions, global 0..360 longitudes, days since + forecast_reference_time match ncdump (reference tool: netCDF ncdump)', async () => {
    const file = writeNetcdf(permutedCase().spec, dir, `permuted-${kind}`, kind);
    const { compared, missing } = await checkCase(permutedCase(), file);
    expect(compared).toBeGreaterThan(150);
    expect(missing).toBeGreaterThan(5);
  });
});
