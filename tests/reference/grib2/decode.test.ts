/**
 * Our GRIB2 decoder against ecCodes, point by point.
 * Source of every expected value: the reference tool ecCodes grib_get_data.
 * Reference tool: ecCodes grib_get_data (Debian libeccodes-tools); files written in the test
 * run by ecCodes' own encoder (python3-eccodes) from its sample regular_ll_pl_grib2 /
 * regular_ll_sfc_grib2, one file per packing / scanning mode / product template.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { IngestError, STANDARD_GRAVITY } from '../../../server/ingest/canonical.ts';
import { openGrib2 } from '../../../server/ingest/grib2/index.ts';
import { comparePlane, eccodesMissing, gribGetData, tempDir, writeGribFiles, type FileSpec, type Key, type MessageSpec } from './eccodes.ts';

const missing = eccodesMissing();
const dir = missing ? '' : tempDir();
const file = (name: string) => path.join(dir, `${name}.grib2`);
afterAll(() => {
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

interface Grid {
  ni: number;
  nj: number;
  la1: number;
  lo1: number;
  la2: number;
  lo2: number;
  di: number;
  dj: number;
  scan?: Key[];
}

// 12 x 7 points, north to south, longitudes from 340 wrapping through 0 to 24
const BASE: Grid = { ni: 12, nj: 7, la1: 60, lo1: 340, la2: 48, lo2: 24, di: 4, dj: 2 };

function gridKeys(g: Grid): Key[] {
  return [
    ...(g.scan ?? []),
    ['Ni', g.ni],
    ['Nj', g.nj],
    ['latitudeOfFirstGridPointInDegrees', g.la1],
    ['longitudeOfFirstGridPointInDegrees', g.lo1],
    ['latitudeOfLastGridPointInDegrees', g.la2],
    ['longitudeOfLastGridPointInDegrees', g.lo2],
    ['iDirectionIncrementInDegrees', g.di],
    ['jDirectionIncrementInDegrees', g.dj],
  ];
}

/** Distinct values in scan order, so that any orientation slip changes the comparison. */
function values(n: number, seed = 0): number[] {
  return Array.from({ length: n }, (_, k) => 250 + 0.37 * k + 5 * Math.sin(k * 0.9 + seed));
}

function tMessage(g: Grid, after: Key[], extra: Partial<MessageSpec> = {}, level = 850): MessageSpec {
  return {
    keys: [...gridKeys(g), ['discipline', 0], ['parameterCategory', 0], ['parameterNumber', 0], ['typeOfFirstFixedSurface', 100], ['level', level]],
    values: values(g.ni * g.nj, level),
    after,
    ...extra,
  };
}

const PACKINGS: { name: string; after: Key[]; template: number; relTol?: number }[] = [
  { name: 'simple-16', after: [['bitsPerValue', 16]], template: 0 },
  { name: 'simple-12', after: [['bitsPerValue', 12]], template: 0 },
  { name: 'simple-24', after: [['bitsPerValue', 24]], template: 0 },
  { name: 'simple-30', after: [['bitsPerValue', 30]], template: 0 },
  { name: 'complex-16', after: [['packingType', 'grid_complex'], ['bitsPerValue', 16]], template: 2 },
  { name: 'complex-24', after: [['packingType', 'grid_complex'], ['bitsPerValue', 24]], template: 2 },
  { name: 'spatial-16', after: [['packingType', 'grid_complex_spatial_differencing'], ['bitsPerValue', 16]], template: 3 },
  { name: 'spatial-11', after: [['packingType', 'grid_complex_spatial_differencing'], ['bitsPerValue', 11]], template: 3 },
  { name: 'ieee-32', after: [['packingType', 'grid_ieee'], ['precision', 1]], template: 4 },
  { name: 'ieee-64', after: [['packingType', 'grid_ieee'], ['precision', 2]], template: 4, relTol: 1e-7 },
  { name: 'jpeg-16', after: [['packingType', 'grid_jpeg'], ['bitsPerValue', 16]], template: 40 },
  { name: 'jpeg-10', after: [['packingType', 'grid_jpeg'], ['bitsPerValue', 10]], template: 40 },
];

const SCANS: { name: string; grid: Grid }[] = [
  { name: 'j-positive', grid: { ...BASE, la1: 48, la2: 60, scan: [['jScansPositively', 1]] } },
  { name: 'i-negative', grid: { ...BASE, lo1: 24, lo2: 340, scan: [['iScansNegatively', 1]] } },
  { name: 'i-negative-j-positive', grid: { ...BASE, la1: 48, la2: 60, lo1: 24, lo2: 340, scan: [['iScansNegatively', 1], ['jScansPositively', 1]] } },
  { name: 'j-consecutive', grid: { ...BASE, scan: [['jPointsAreConsecutive', 1]] } },
  { name: 'boustrophedon', grid: { ...BASE, scan: [['alternativeRowScanning', 1]] } },
  { name: 'global-0-360', grid: { ni: 36, nj: 19, la1: 90, lo1: 0, la2: -90, lo2: 350, di: 10, dj: 10 } },
  { name: 'lon-negative', grid: { ni: 9, nj: 5, la1: 70, lo1: -40, la2: 62, lo2: 0, di: 5, dj: 2 } },
];

const MISSING = 9999;
function withHoles(v: number[]): number[] {
  return v.map((x, k) => (k % 7 === 3 || (k >= 20 && k < 31) ? MISSING : x));
}

const specs: FileSpec[] = [];
if (!missing) {
  for (const p of PACKINGS) specs.push({ out: file(p.name), messages: [tMessage(BASE, p.after)] });
  for (const s of SCANS) specs.push({ out: file(s.name), messages: [tMessage(s.grid, [['bitsPerValue', 16]])] });
  for (const p of ['grid_simple', 'grid_complex', 'grid_complex_spatial_differencing', 'grid_jpeg']) {
    const m = tMessage(BASE, [['packingType', p], ['bitsPerValue', 16]]);
    specs.push({ out: file(`bitmap-${p}`), messages: [{ ...m, values: withHoles(m.values), missing: MISSING }] });
  }
  specs.push({ out: file('ccsds'), messages: [tMessage(BASE, [['packingType', 'grid_ccsds'], ['bitsPerValue', 16]])] });
  specs.push({ out: file('jpeg-24'), messages: [tMessage(BASE, [['packingType', 'grid_jpeg'], ['bitsPerValue', 24]])] });
  // an ensemble: members 0 (control) to 3 of template 4.1, three levels each
  const ens: MessageSpec[] = [];
  for (const member of [0, 1, 2, 3]) {
    for (const level of [850, 500, 1000]) {
      const m = tMessage(BASE, [['bitsPerValue', 16]], {}, level);
      m.keys.push(['productDefinitionTemplateNumber', 1], ['typeOfEnsembleForecast', member === 0 ? 1 : 3], ['perturbationNumber', member], ['numberOfForecastsInEnsemble', 4]);
      m.values = values(BASE.ni * BASE.nj, level + member * 10);
      ens.push(m);
    }
  }
  specs.push({ out: file('ensemble'), messages: ens });
  // accumulations: tp over 0-6 and 6-12 h (4.8), geopotential height, cloud cover in %
  const sfc = (extra: Key[], v: number[]): MessageSpec => ({ sample: 'regular_ll_sfc_grib2', keys: [...gridKeys(BASE), ...extra], values: v, after: [['bitsPerValue', 16]] });
  const tpKeys = (range: string): Key[] => [['discipline', 0], ['productDefinitionTemplateNumber', 8], ['parameterCategory', 1], ['parameterNumber', 8], ['typeOfFirstFixedSurface', 1], ['typeOfStatisticalProcessing', 1], ['stepRange', range]];
  const n = BASE.ni * BASE.nj;
  specs.push({
    out: file('surface'),
    messages: [
      sfc(tpKeys('0-6'), values(n, 1).map((x) => (x - 240) / 10)),
      sfc(tpKeys('6-12'), values(n, 2).map((x) => (x - 240) / 5)),
      sfc([['discipline', 0], ['parameterCategory', 6], ['parameterNumber', 1], ['typeOfFirstFixedSurface', 1], ['stepRange', '6']], values(n, 3).map((x) => (x - 240) * 2)),
      { ...tMessage(BASE, [['bitsPerValue', 16]], {}, 500), keys: [...gridKeys(BASE), ['discipline', 0], ['parameterCategory', 3], ['parameterNumber', 5], ['typeOfFirstFixedSurface', 100], ['level', 500], ['stepRange', '6']], values: values(n, 4).map((x) => x * 20) },
    ],
  });
  // ensemble accumulation, template 4.11
  specs.push({
    out: file('ens-accum'),
    messages: [1, 2].map((member) => sfc([...tpKeys('0-24'), ['productDefinitionTemplateNumber', 11], ['perturbationNumber', member], ['numberOfForecastsInEnsemble', 2], ['stepRange', '0-24']], values(n, member).map((x) => (x - 240) / 3))),
  });
}

describe.skipIf(missing !== null)('GRIB2 decoder vs reference tool: ecCodes grib_get_data', () => {
  beforeAll(() => {
    const r = writeGribFiles(specs);
    if (r.status !== 0) throw new Error(`ecCodes writer failed: ${r.stderr}`);
    const failed = r.lines.filter((l) => l.startsWith('FAILED'));
    if (failed.length) throw new Error(`ecCodes could not write: ${failed.join('; ')}`);
  });

  async function compareFile(name: string, relTol = 2e-7): Promise<number> {
    const ref = gribGetData(file(name));
    const reader = await openGrib2(file(name));
    try {
      let points = 0;
      const plane = reader.info.axes.lat.length * reader.info.axes.lon.length;
      for (const [k, f] of reader.fields.entries()) points += comparePlane(await reader.decode(f), reader.info.axes, ref[k], relTol);
      expect(reader.fields.length).toBe(ref.length);
      expect(points).toBe(plane * ref.length);
      return points;
    } finally {
      await reader.close();
    }
  }

  for (const p of PACKINGS) {
    it(`${p.name}: template 5.${p.template} matches ecCodes point by point`, async () => {
      const reader = await openGrib2(file(p.name));
      expect(reader.fields[0].packing.template).toBe(p.template);
      await reader.close();
      expect(await compareFile(p.name, p.relTol)).toBe(84);
    });
  }

  it('grid_png written by ecCodes (skipped when this build cannot write it)', async (ctx) => {
    const out = file('png-eccodes');
    const r = writeGribFiles([{ out, messages: [tMessage(BASE, [['packingType', 'grid_png'], ['bitsPerValue', 16]])] }]);
    if (r.status !== 0 || r.lines.some((l) => l.startsWith('FAILED'))) {
      const why = (r.stderr.trim().split('\n').find((l) => l.includes('assert')) ?? r.stderr.trim() ?? r.lines.join(' ')).slice(0, 200);
      console.warn(`skip: ecCodes cannot write grid_png here (${why}); PNG is covered by crafted.test.ts`);
      ctx.skip(`ecCodes cannot write grid_png in this build: ${why}`);
      return;
    }
    expect(await compareFile('png-eccodes')).toBe(84);
  });

  it('spatial differencing orders 1 and 2 written by ecCodes (skipped when it writes order 0 instead)', async (ctx) => {
    const out = file('spatial-order2');
    writeGribFiles([{ out, messages: [tMessage(BASE, [['packingType', 'grid_complex_spatial_differencing'], ['bitsPerValue', 16], ['orderOfSpatialDifferencing', 2]])] }]);
    const reader = await openGrib2(out);
    const order = reader.fields[0].packing.spatialOrder;
    await reader.close();
    if (order === 0) {
      console.warn('skip: this ecCodes build writes template 5.3 with spatial differencing order 0 even when asked for 2; orders 1 and 2 are covered by crafted.test.ts');
      ctx.skip('ecCodes writes 5.3 with order 0 here');
      return;
    }
    expect(await compareFile('spatial-order2')).toBe(84);
  });

  it('the 5.3 files ecCodes writes use spatial differencing order 0 (the variant without extra descriptors)', async () => {
    const reader = await openGrib2(file('spatial-16'));
    expect(reader.fields[0].packing.spatialOrder).toBe(0);
    await reader.close();
  });

  for (const s of SCANS.filter((x) => x.name !== 'boustrophedon')) {
    it(`scanning ${s.name}: canonical orientation, values match ecCodes`, async () => {
      await compareFile(s.name);
      const reader = await openGrib2(file(s.name));
      const { lat, lon } = reader.info.axes;
      expect(lat[1]).toBeGreaterThan(lat[0]);
      expect(lon[1]).toBeGreaterThan(lon[0]);
      expect(lon[0]).toBeGreaterThanOrEqual(-180);
      expect(lon[0]).toBeLessThan(180);
      await reader.close();
    });
  }

  it('scanning boustrophedon (flag bit 4): odd rows run east to west', async () => {
    // ecCodes 2.28 writes the values in plain row order with the flag set and reads them back
    // the same way (its round trip ignores the flag). WMO Flag table 3.4 bit 4 says adjacent
    // rows alternate direction, so the reference is ecCodes' output with odd rows reversed.
    const ref = gribGetData(file('boustrophedon'))[0];
    const ni = BASE.ni;
    const flipped = ref.map((p, k) => {
      const r = Math.floor(k / ni);
      const c = k % ni;
      return r % 2 === 1 ? { ...p, value: ref[r * ni + (ni - 1 - c)].value } : p;
    });
    const reader = await openGrib2(file('boustrophedon'));
    expect(reader.fields[0].grid.scanMode).toBe(0x10);
    expect(comparePlane(await reader.readField('t', 0, 0), reader.info.axes, flipped)).toBe(84);
    await reader.close();
  });

  it('inspect --dump prints what grib_get_data prints (longitudes in -180..180, missing as nan)', () => {
    const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
    const name = 'bitmap-grid_complex_spatial_differencing';
    const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(root, 'server/cli/liftwise.ts'), 'inspect', file(name), '--dump', 't:850:0'], { cwd: root, encoding: 'utf8' });
    expect(r.stderr).toBe('');
    const lines = r.stdout.trim().split('\n');
    const ref = gribGetData(file(name))[0];
    expect(lines).toHaveLength(ref.length);
    // grib_get_data walks the file's scan order, north to south and west to east here: the dump's order
    ref.forEach((p, k) => {
      const [lat, lon, value] = lines[k].split(' ');
      expect(Number(lat)).toBeCloseTo(p.lat, 6);
      expect(Number(lon)).toBeCloseTo(p.lon >= 180 ? p.lon - 360 : p.lon, 6);
      if (Number.isNaN(p.value)) expect(value).toBe('nan');
      else expect(Math.abs(Number(value) - p.value)).toBeLessThanOrEqual(2e-7 * Math.abs(p.value));
    });
  }, 30_000);

  it('longitudes starting at 340 become -20 .. 24, contiguous', async () => {
    const reader = await openGrib2(file('simple-16'));
    expect(Array.from(reader.info.axes.lon)).toEqual([-20, -16, -12, -8, -4, 0, 4, 8, 12, 16, 20, 24]);
    expect(Array.from(reader.info.axes.lat)).toEqual([48, 50, 52, 54, 56, 58, 60]);
    await reader.close();
  });

  for (const p of ['grid_simple', 'grid_complex', 'grid_complex_spatial_differencing', 'grid_jpeg']) {
    it(`bitmap with missing values (${p}): NaN exactly where ecCodes reports missing`, async () => {
      await compareFile(`bitmap-${p}`);
      const reader = await openGrib2(file(`bitmap-${p}`));
      const field = await reader.readField('t', 0, 0);
      expect(field.filter(Number.isNaN).length).toBe(withHoles(values(84)).filter((x) => x === MISSING).length);
      await reader.close();
    });
  }

  it('CCSDS (5.42) is refused with the repacking command', async () => {
    const err = await openGrib2(file('ccsds')).then(
      () => null,
      (e: unknown) => e,
    );
    expect(err).toBeInstanceOf(IngestError);
    expect(String((err as Error).message)).toMatch(/5\.42.*grib_set -r -s packingType=grid_simple in\.grib2 out\.grib2/);
  });

  it('JPEG 2000 with 24 bits per value is refused clearly (the wasm decoder stops at 16 bits)', async () => {
    const reader = await openGrib2(file('jpeg-24'));
    await expect(reader.readField('t', 0, 0)).rejects.toThrow(/5\.40.*24 bits/);
    await reader.close();
  });

  it('ensemble members (4.1): members, levels bottom to top, each member matches ecCodes', async () => {
    await compareFile('ensemble');
    const reader = await openGrib2(file('ensemble'));
    expect(reader.info.isEnsemble).toBe(true);
    expect(reader.info.members).toEqual([0, 1, 2, 3]);
    expect(Array.from(reader.info.axes.levels)).toEqual([100000, 85000, 50000]);
    const ref = gribGetData(file('ensemble'));
    const f = await reader.readField('t', 2, 0);
    // message order: member 2's 850 hPa field is message 2*3 + 0
    comparePlane(f.subarray(84, 168), reader.info.axes, ref[6]);
    comparePlane(f.subarray(0, 84), reader.info.axes, ref[8]);
    await reader.close();
  });

  it('accumulation (4.8): tp at 12 h is the 0-6 plus the 6-12 accumulation; gh becomes z; tcc % becomes a fraction', async () => {
    const ref = gribGetData(file('surface'));
    const reader = await openGrib2(file('surface'));
    expect(reader.info.steps).toEqual([6, 12]);
    const { axes } = reader.info;
    comparePlane(await reader.readField('tp', 0, 6), axes, ref[0]);
    const sum = ref[0].map((p, k) => ({ ...p, value: p.value + ref[1][k].value }));
    comparePlane(await reader.readField('tp', 0, 12), axes, sum, 1e-6);
    comparePlane(await reader.readField('tcc', 0, 6), axes, ref[2].map((p) => ({ ...p, value: p.value / 100 })));
    const z = await reader.readField('z', 0, 6);
    comparePlane(z, axes, ref[3].map((p) => ({ ...p, value: p.value * STANDARD_GRAVITY })), 1e-6);
    await reader.close();
  });

  it('ensemble accumulation (4.11): member numbers and the 0-24 h interval', async () => {
    const ref = gribGetData(file('ens-accum'));
    const reader = await openGrib2(file('ens-accum'));
    expect(reader.info.members).toEqual([1, 2]);
    expect(reader.info.steps).toEqual([24]);
    comparePlane(await reader.readField('tp', 2, 24), reader.info.axes, ref[1]);
    await reader.close();
  });
});
