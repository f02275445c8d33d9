/**
 * CF axis handling on its own: longitude/latitude orientation, pressure units and time units
 * (CF Metadata Conventions sections 4.1-4.4; the expected orderings follow the canonical grid
 * contract in server/ingest/canonical.ts).
 */
import fs from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { IngestError, openRun } from '../../../../server/ingest/index.ts';
import { levelsInPa, mapLatitude, mapLongitude, parseTimeUnits } from '../../../../server/ingest/netcdf/cf-axes.ts';
import { raw, tempDir, writeNetcdf } from './cdl.ts';
import { smallRun } from './fixtures.ts';

const f64 = (xs: number[]) => Float64Array.from(xs);

describe('mapLongitude', () => {
  it.each([
    ['across the seam, 340..20', [340, 350, 0, 10, 20], [-20, -10, 0, 10, 20], [0, 1, 2, 3, 4]],
    ['sorted with a gap, 0..20 then 340..350', [0, 10, 20, 340, 350], [-20, -10, 0, 10, 20], [3, 4, 0, 1, 2]],
    ['descending', [20, 10, 0, 350, 340], [-20, -10, 0, 10, 20], [4, 3, 2, 1, 0]],
    ['global 0..270, rotated to start at -180', [0, 90, 180, 270], [-180, -90, 0, 90], [2, 3, 0, 1]],
    ['global -180..90 kept', [-180, -90, 0, 90], [-180, -90, 0, 90], [0, 1, 2, 3]],
    ['regional east of 180 keeps going past 180', [170, 180, 190], [170, 180, 190], [0, 1, 2]],
    ['regional 200..220 starts in [-180, 180)', [200, 210, 220], [-160, -150, -140], [0, 1, 2]],
  ])('%s', (_label, input, values, index) => {
    const m = mapLongitude('lon', f64(input));
    expect(Array.from(m.values)).toEqual(values);
    expect(Array.from(m.index)).toEqual(index);
  });

  it('refuses irregular spacing and overlapping axes, naming the axis', () => {
    expect(() => mapLongitude('x_lon', f64([0, 10, 25, 30]))).toThrow(/axis x_lon: irregular longitude spacing/);
    expect(() => mapLongitude('lon', f64([0, 90, 180, 270, 360]))).toThrow(/axis lon: longitudes overlap/);
  });
});

describe('mapLatitude', () => {
  it('flips north-to-south and keeps south-to-north', () => {
    expect(Array.from(mapLatitude('lat', f64([60, 50, 40])).index)).toEqual([2, 1, 0]);
    expect(Array.from(mapLatitude('lat', f64([40, 50, 60])).index)).toEqual([0, 1, 2]);
  });

  it('refuses Gaussian-like spacing and latitudes beyond the poles', () => {
    // unequal steps (35, 34.6, 35.1, 34.9 degrees), as on a Gaussian grid; values made up for the test
    expect(() => mapLatitude('lat', f64([70, 35, 0.4, -34.7, -69.6]))).toThrow(/irregular latitude spacing/);
    expect(() => mapLatitude('lat', f64([80, 90, 100]))).toThrow(/outside -90..90/);
  });
});

describe('levelsInPa', () => {
  it.each([
    ['hPa', [500, 850], [50000, 85000]],
    ['millibar', [500], [50000]],
    ['mbar', [500], [50000]],
    ['Pa', [50000], [50000]],
  ])('%s', (units, input, pa) => {
    expect(Array.from(levelsInPa('plev', { name: 'plev', dims: ['plev'], shape: [input.length], type: 'float', attrs: new Map([['units', units]]) }, f64(input)))).toEqual(pa);
  });

  it('refuses non-pressure units', () => {
    expect(() => levelsInPa('lev', { name: 'lev', dims: ['lev'], shape: [2], type: 'float', attrs: new Map([['units', 'm']]) }, f64([10, 20]))).toThrow(/axis lev: units "m" are not a pressure/);
  });
});

describe('parseTimeUnits', () => {
  it.each([
    ['hours since 2026-12-01 00:00:00', 1, Date.UTC(2026, 11, 1)],
    ['hours since 2026-12-01', 1, Date.UTC(2026, 11, 1)],
    ['days since 2026-11-30 12:00', 24, Date.UTC(2026, 10, 30, 12)],
    ['minutes since 2026-12-01T06:00:00Z', 1 / 60, Date.UTC(2026, 11, 1, 6)],
    ['seconds since 1970-01-01 00:00:00.0 UTC', 1 / 3600, 0],
    ['hours since 2026-12-01 02:00:00 +02:00', 1, Date.UTC(2026, 11, 1)],
  ])('%s', (units, hours, epochMs) => {
    expect(parseTimeUnits('time', units, '')).toEqual({ hours, epochMs });
  });

  it('refuses other forms with an IngestError naming the variable', () => {
    expect(() => parseTimeUnits('variable time', 'fortnights since 2026-12-01', '')).toThrow(IngestError);
    expect(() => parseTimeUnits('variable time', 'hours since yesterday', '')).toThrow(/variable time: time units "hours since yesterday"/);
  });
});

describe('packed unsigned bytes (_Unsigned = "true") and valid_range', () => {
  const dir = tempDir();
  afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

  it('reads cloud cover packed as unsigned bytes, and masks values outside valid_range', async () => {
    const spec = smallRun();
    // 12 points per (time, member): stored -56 means 200 unsigned -> 200 * 0.5 = 100 %
    spec.vars.push({
      name: 'tcc', type: 'byte', dims: ['time', 'member', 'lat', 'lon'],
      attrs: { standard_name: 'cloud_area_fraction', units: '%', _Unsigned: 'true', scale_factor: raw('0.5f') },
      values: Array.from({ length: 48 }, (_, i) => (i === 0 ? -56 : 100)),
    });
    const t = spec.vars.find((v) => v.name === 'u')!;
    t.attrs = { ...t.attrs, valid_range: raw('-20., 20.') };
    const file = writeNetcdf(spec, dir, 'unsigned', 'nc3');
    const reader = await openRun(file);
    try {
      const tcc = await reader.readField('tcc', 0, 0);
      // file point [lat 50][lon 350] is canonical [last row][first column]
      expect(tcc[2 * 4 + 0]).toBeCloseTo(1.0, 6);
      expect(tcc[0]).toBeCloseTo(0.5, 6);
      const u = await reader.readField('u', 0, 0);
      const kept = Array.from(u).filter((x) => !Number.isNaN(x));
      expect(kept.length).toBeGreaterThan(0);
      expect(kept.length).toBeLessThan(u.length);
      expect(kept.every((x) => x >= -20 && x <= 20)).toBe(true);
    } finally {
      await reader.close();
    }
  });
});

describe('a forecast_period (step) axis with a scalar forecast_reference_time', () => {
  const dir = tempDir();
  afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

  it('gives the reference time from the scalar and the steps from the period axis', async () => {
    const n = 3 * 2 * 2 * 2 * 2;
    const field = (base: number) => Array.from({ length: n }, (_, i) => base + i);
    const dims = ['number', 'step', 'isobaricInhPa', 'latitude', 'longitude'];
    const file = writeNetcdf(
      {
        dims: { number: 3, step: 2, isobaricInhPa: 2, latitude: 2, longitude: 2 },
        vars: [
          { name: 'number', type: 'int', dims: ['number'], attrs: { standard_name: 'realization' }, values: [0, 1, 2] },
          { name: 'step', type: 'double', dims: ['step'], attrs: { standard_name: 'forecast_period', units: 'hours' }, values: [24, 48] },
          { name: 'time', type: 'int', dims: [], attrs: { standard_name: 'forecast_reference_time', units: 'seconds since 1970-01-01T00:00:00' }, values: [Date.UTC(2026, 11, 1, 12) / 1000] },
          { name: 'isobaricInhPa', type: 'double', dims: ['isobaricInhPa'], attrs: { units: 'hPa', standard_name: 'air_pressure' }, values: [850, 500] },
          { name: 'latitude', type: 'double', dims: ['latitude'], attrs: { units: 'degrees_north' }, values: [10, 0] },
          { name: 'longitude', type: 'double', dims: ['longitude'], attrs: { units: 'degrees_east' }, values: [0, 5] },
          { name: 'z', type: 'float', dims, attrs: { units: 'm**2 s**-2', standard_name: 'geopotential' }, values: field(1000) },
          { name: 't', type: 'float', dims, attrs: { units: 'K', standard_name: 'air_temperature' }, values: field(250) },
        ],
      },
      dir,
      'period',
      'nc4',
    );
    const reader = await openRun(file);
    try {
      expect(reader.info.referenceTime).toBe('2026-12-01T12:00:00Z');
      expect(reader.info.steps).toEqual([24, 48]);
      expect(reader.info.members).toEqual([0, 1, 2]);
      expect(reader.info.isEnsemble).toBe(true);
      const z = await reader.readField('z', 2, 48);
      // file [number 2][step 1][850 hPa][lat 10][lon 0] = 1000 + ((2*2+1)*2+0)*4 = 1040, at canonical [0][lat 10 = row 1][0]
      expect(z[1 * 2 + 0]).toBe(1040);
    } finally {
      await reader.close();
    }
  });
});
