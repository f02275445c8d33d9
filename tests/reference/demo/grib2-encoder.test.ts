/**
 * The demo GRIB2 encoder checked against ecCodes, an independent GRIB2 implementation.
 * Reference tool: ecCodes grib_ls and grib_get_data (Debian package libeccodes-tools).
 * Layout of templates 3.0, 4.0, 4.1, 4.8, 4.11, 5.0, 5.2 (source: WMO Manual on Codes,
 * FM 92 GRIB edition 2).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  encodeGrib2Message, timeFromIso, type Grib2Grid, type Grib2Packing, type Grib2Product,
} from '../../../scripts/demo/grib2-encoder.ts';

function run(tool: string, args: string[]): string {
  const r = spawnSync(tool, args, { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (r.error) throw new Error(`${tool} is not available (${r.error.message}): apt-get install -y libeccodes-tools`);
  if (r.status !== 0) throw new Error(`${tool} ${args.join(' ')} failed: ${r.stderr}`);
  return r.stdout;
}

// An irregular 9 x 7 grid crossing the Greenwich meridian (first longitude -2, written as 358).
const grid: Grib2Grid = { ni: 9, nj: 7, lat1: 61, lon1: -2, lat2: 58, lon2: 2, di: 0.5, dj: 0.5, scanningMode: 0 };
const n = grid.ni * grid.nj; // 63 values: not a multiple of the complex-packing group size
const referenceTime = timeFromIso('2026-12-01T00:00:00Z');

function field(seed: number, base: number, amp: number): Float64Array {
  return Float64Array.from({ length: n }, (_, i) => base + amp * Math.sin(i * 0.37 + seed) + amp * 0.3 * Math.cos(i * 1.91 * seed));
}

interface Case {
  label: string;
  product: Grib2Product;
  packing: Grib2Packing;
  values: Float64Array;
  expect: { shortName: string; level: number; stepRange: string; number: number | 'not_found'; typeOfLevel: string };
}

const simple = (d: number): Grib2Packing => ({ type: 'simple', decimalScale: d, bitsPerValue: 16 });
const complex = (d: number, groupSize = 32): Grib2Packing => ({ type: 'complex', decimalScale: d, bitsPerValue: 16, groupSize });

const cases: Case[] = [
  { label: 'geopotential 0/3/4, 500 hPa, template 4.0, simple',
    product: { discipline: 0, category: 3, number: 4, levelType: 100, levelValue: 50000, stepHours: 6 },
    packing: simple(1), values: field(1, 54000, 900),
    expect: { shortName: 'z', level: 500, stepRange: '6', number: 'not_found', typeOfLevel: 'isobaricInhPa' } },
  { label: 'geopotential height 0/3/5, 850 hPa, complex',
    product: { discipline: 0, category: 3, number: 5, levelType: 100, levelValue: 85000, stepHours: 12 },
    packing: complex(2), values: field(2, 1400, 60),
    expect: { shortName: 'gh', level: 850, stepRange: '12', number: 'not_found', typeOfLevel: 'isobaricInhPa' } },
  { label: 'temperature 0/0/0, member 7 of 20, template 4.1, complex with groups of 8',
    product: { discipline: 0, category: 0, number: 0, levelType: 100, levelValue: 70000, stepHours: 24, ensemble: { member: 7, total: 20 } },
    packing: complex(2, 8), values: field(3, 262, 8),
    expect: { shortName: 't', level: 700, stepRange: '24', number: 7, typeOfLevel: 'isobaricInhPa' } },
  { label: 'relative humidity 0/1/1, simple',
    product: { discipline: 0, category: 1, number: 1, levelType: 100, levelValue: 92500, stepHours: 0 },
    packing: simple(1), values: field(4, 70, 25),
    expect: { shortName: 'r', level: 925, stepRange: '0', number: 'not_found', typeOfLevel: 'isobaricInhPa' } },
  { label: 'u wind 0/2/2 with negative values, control member 0, simple',
    product: { discipline: 0, category: 2, number: 2, levelType: 100, levelValue: 25000, stepHours: 48, ensemble: { member: 0, total: 20 } },
    packing: simple(2), values: field(5, 10, 30),
    expect: { shortName: 'u', level: 250, stepRange: '48', number: 0, typeOfLevel: 'isobaricInhPa' } },
  { label: 'v wind 0/2/3, complex',
    product: { discipline: 0, category: 2, number: 3, levelType: 100, levelValue: 30000, stepHours: 120 },
    packing: complex(2), values: field(6, -3, 25),
    expect: { shortName: 'v', level: 300, stepRange: '120', number: 'not_found', typeOfLevel: 'isobaricInhPa' } },
  { label: 'vertical velocity 0/2/8, complex',
    product: { discipline: 0, category: 2, number: 8, levelType: 100, levelValue: 60000, stepHours: 18 },
    packing: complex(3), values: field(7, -0.1, 0.6),
    expect: { shortName: 'w', level: 600, stepRange: '18', number: 'not_found', typeOfLevel: 'isobaricInhPa' } },
  { label: 'total cloud cover 0/6/1, surface to top of atmosphere, simple',
    product: { discipline: 0, category: 6, number: 1, levelType: 1, secondLevelType: 8, levelValue: 0, stepHours: 30 },
    packing: simple(1), values: field(8, 50, 50).map((x) => Math.min(100, Math.max(0, x))),
    expect: { shortName: 'tcc', level: 0, stepRange: '30', number: 'not_found', typeOfLevel: 'entireAtmosphere' } },
  // Group widths that differ from group to group, so the width block (13 groups) ends inside an
  // octet: exercises the octet alignment between the blocks of template 5.2's section 7.
  { label: 'relative humidity with mixed smooth and rough parts, complex with groups of 5',
    product: { discipline: 0, category: 1, number: 1, levelType: 100, levelValue: 40000, stepHours: 66 },
    packing: complex(1, 5), values: Float64Array.from({ length: n }, (_, i) => (i < 20 ? 40 + i * 0.01 : 50 + 45 * Math.sin(i * i * 0.7))),
    expect: { shortName: 'r', level: 400, stepRange: '66', number: 'not_found', typeOfLevel: 'isobaricInhPa' } },
];

// Total precipitation 0/1/8 has no short name in ecCodes 2.28's WMO tables (it reports
// "unknown"), so those messages are checked through their numeric keys instead.
const precipitation: Case[] = [
  { label: 'total precipitation 0/1/8, accumulation 0-36 h, template 4.8, simple',
    product: { discipline: 0, category: 1, number: 8, levelType: 1, levelValue: 0, stepHours: 36, accumulatedFromHours: 0 },
    packing: simple(2), values: field(9, 12, 10).map((x) => Math.max(0, x)),
    expect: { shortName: 'unknown', level: 0, stepRange: '0-36', number: 'not_found', typeOfLevel: 'surface' } },
  { label: 'total precipitation, member 19 of 20, template 4.11, complex',
    product: { discipline: 0, category: 1, number: 8, levelType: 1, levelValue: 0, stepHours: 6, accumulatedFromHours: 0, ensemble: { member: 19, total: 20 } },
    packing: complex(2), values: field(10, 3, 4).map((x) => Math.max(0, x)),
    expect: { shortName: 'unknown', level: 0, stepRange: '0-6', number: 19, typeOfLevel: 'surface' } },
  { label: 'constant field (no precipitation yet at step 0), complex: zero-width groups',
    product: { discipline: 0, category: 1, number: 8, levelType: 1, levelValue: 0, stepHours: 0, accumulatedFromHours: 0 },
    packing: complex(2), values: new Float64Array(n),
    expect: { shortName: 'unknown', level: 0, stepRange: '0', number: 'not_found', typeOfLevel: 'surface' } },
];

const all = [...cases, ...precipitation];
let dir = '';
let file = '';
let keys: Array<Record<string, string | number>> = [];

beforeAll(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
  file = path.join(dir, 'cases.grib2');
  fs.writeFileSync(file, Buffer.concat(all.map((c) => encodeGrib2Message({ referenceTime, grid, product: c.product, packing: c.packing }, c.values))));
  const fields = 'shortName,level,typeOfLevel,stepRange,number,packingType,binaryScaleFactor,decimalScaleFactor,' +
    'discipline,parameterCategory,parameterNumber,typeOfStatisticalProcessing,productDefinitionTemplateNumber,' +
    'dataDate,dataTime,Ni,Nj,numberOfForecastsInEnsemble';
  keys = (JSON.parse(run('grib_ls', ['-j', '-p', fields, file])) as { messages: Array<Record<string, string | number>> }).messages;
});

afterAll(() => {
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

/** grib_get_data output: "lat lon value" per point, in the message's scanning order. */
function decoded(index: number): Array<[number, number, number]> {
  const out = run('grib_get_data', ['-F', '%.12g', '-w', `count=${index + 1}`, file]);
  return out.trim().split('\n').slice(1).map((line) => line.trim().split(/\s+/).map(Number) as [number, number, number]);
}

describe('GRIB2 encoder against ecCodes (reference tool: ecCodes grib_ls / grib_get_data)', () => {
  it('ecCodes reads every message', () => {
    expect(keys).toHaveLength(all.length);
  });

  all.forEach((c, index) => {
    it(`${c.label}: keys`, () => {
      const k = keys[index];
      expect(k.shortName).toBe(c.expect.shortName);
      expect(k.level).toBe(c.expect.level);
      expect(k.typeOfLevel).toBe(c.expect.typeOfLevel);
      expect(String(k.stepRange)).toBe(c.expect.stepRange);
      expect(k.number).toBe(c.expect.number);
      expect(k.packingType).toBe(c.packing.type === 'simple' ? 'grid_simple' : 'grid_complex');
      expect([k.discipline, k.parameterCategory, k.parameterNumber]).toEqual([c.product.discipline, c.product.category, c.product.number]);
      expect(k.dataDate).toBe(20261201);
      expect(k.dataTime).toBe(0);
      expect([k.Ni, k.Nj]).toEqual([grid.ni, grid.nj]);
      const template = (c.product.ensemble ? 1 : 0) + (c.product.accumulatedFromHours !== undefined ? (c.product.ensemble ? 10 : 8) : 0);
      expect(k.productDefinitionTemplateNumber).toBe(template);
      if (c.product.accumulatedFromHours !== undefined) expect(k.typeOfStatisticalProcessing).toBe(1);
      if (c.product.ensemble) expect(k.numberOfForecastsInEnsemble).toBe(c.product.ensemble.total);
      expect(k.decimalScaleFactor).toBe(c.packing.decimalScale);
    });

    it(`${c.label}: values and coordinates point by point`, () => {
      const points = decoded(index);
      expect(points).toHaveLength(n);
      const k = keys[index];
      // Packing error is at most half a packing step, 2^E / 10^D / 2 (WMO Y * 10^D = R + X * 2^E),
      // plus float32 rounding of the reference value R.
      const step = 2 ** Number(k.binaryScaleFactor) / 10 ** Number(k.decimalScaleFactor);
      let maxAbs = 0;
      for (const v of c.values) maxAbs = Math.max(maxAbs, Math.abs(v));
      const tolerance = step / 2 + maxAbs * 2 ** -23 + 1e-12;
      points.forEach(([lat, lon, value], p) => {
        const j = Math.floor(p / grid.ni);
        const i = p % grid.ni;
        expect(lat).toBeCloseTo(grid.lat1 - j * grid.dj, 6);
        // ecCodes may print a longitude as -2 or 358: compare on the circle
        const dLon = (((lon - (grid.lon1 + i * grid.di)) % 360) + 540) % 360 - 180;
        expect(Math.abs(dLon)).toBeLessThan(1e-6);
        expect(Math.abs(value - c.values[p])).toBeLessThanOrEqual(tolerance);
      });
      // 16 bits over the field's range: the step must be far below the field's spread.
      if (maxAbs > 0) expect(step).toBeLessThan((Math.max(...c.values) - Math.min(...c.values) + 1e-9) / 2 ** 14);
    });
  });

  it('rejects a value count that does not match the grid', () => {
    expect(() => encodeGrib2Message({ referenceTime, grid, product: cases[0].product, packing: simple(1) }, new Float64Array(n - 1)))
      .toThrow(/63|62/);
  });

  it('rejects non-finite values (no bitmap support)', () => {
    const bad = field(1, 0, 1);
    bad[5] = Number.NaN;
    expect(() => encodeGrib2Message({ referenceTime, grid, product: cases[0].product, packing: complex(1) }, bad)).toThrow(/value 5/);
  });
});
