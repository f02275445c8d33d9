/**
 * The shared signal computation (server/services/signals.ts) on synthetic fields: what must be
 * zero is zero, what must scale scales, regions outside the grid are skipped with a warning,
 * and a 21-step, 21-member run at 41 x 23 is computed quickly.
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_CALIBRATION_PARAMETERS } from '@shared/calibration.ts';
import { IngestError, type CanonicalVariable, type RunInfo } from '../../../server/ingest/canonical.ts';
import { computeMemberSignals, weightsForGrid, type MemberFieldSource, type SignalRegion } from '../../../server/services/signals.ts';
import { geometryAreaKm2 } from '../../../server/services/regions.ts';
import { calibrationFromJson, regionsFromGeojson } from '../../../server/cli/commands/signals.ts';

const LEVELS = [100000, 92500, 85000, 70000, 60000, 50000, 40000, 30000];

function axes(nlat: number, nlon: number) {
  return {
    lat: Float64Array.from({ length: nlat }, (_, j) => 50 + j),
    lon: Float64Array.from({ length: nlon }, (_, i) => -6 + i),
    levels: Float64Array.from(LEVELS),
  };
}

function info(nlat: number, nlon: number, steps: number[], withModel = true): RunInfo {
  const variables = ['z', 't', 'r', ...(withModel ? ['tp', 'tcc'] : [])].map((name) => ({ name: name as CanonicalVariable, sourceName: name, levels: [] }));
  return { format: 'grib2', model: 'test', referenceTime: '2026-06-21T00:00:00Z', steps, members: [0], isEnsemble: false, axes: axes(nlat, nlon), variables };
}

/** Uniform fields: T from a 288 K surface with 6.5 K/km, RH and omega given, tp growing 1 mm/h. */
function source(run: RunInfo, rhPct: number, omegaPaS: number): MemberFieldSource {
  const plane = run.axes.lat.length * run.axes.lon.length;
  const n = LEVELS.length * plane;
  return {
    info: run,
    member: 0,
    async readField(name, step) {
      if (name === 't') return Float32Array.from({ length: n }, (_, i) => 288 * (LEVELS[Math.floor(i / plane)] / 1e5) ** 0.19);
      if (name === 'r') return new Float32Array(n).fill(rhPct);
      if (name === 'tp') return new Float32Array(plane).fill(step);
      if (name === 'tcc') return new Float32Array(plane).fill(0.5);
      throw new Error(`no ${name}`);
    },
    async readOmega() {
      return new Float32Array(n).fill(omegaPaS);
    },
  };
}

const box = (id: string, kind: 'hydro' | 'solar', lon: number, lat: number, d: number): SignalRegion => ({
  id,
  properties: kind === 'hydro'
    ? { id, name: id, kind, headM: 300, efficiency: 0.9, runoffCoefficient: 0.7, recessionDays: 20 }
    : { id, name: id, kind, capacityMw: 100, tiltDeg: 30, azimuthDeg: 180, lossesPct: 14 },
  geometry: { type: 'Polygon', coordinates: [[[lon, lat], [lon + d, lat], [lon + d, lat + d], [lon, lat + d], [lon, lat]]] },
});

const REGIONS = [box('h1', 'hydro', 2, 55, 4), box('s1', 'solar', 8, 52, 3), box('far', 'hydro', 60, 55, 2)];
const STEPS = [0, 6, 12, 18, 24];

describe('computeMemberSignals', () => {
  it('no ascent: no precipitation and no inflow; descent with dry air: no cloud; the model columns come from tp and tcc', async () => {
    const { rows, warnings } = await computeMemberSignals(source(info(12, 30, STEPS), 50, 0.2), REGIONS, DEFAULT_CALIBRATION_PARAMETERS);
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(/"far".*outside the grid/);
    expect(rows.map((r) => `${r.regionId} ${r.day} ${r.hoursCovered}`)).toEqual(['h1 2026-06-21 24', 's1 2026-06-21 24']);
    for (const r of rows) {
      expect(r.precipMm).toBe(0);
      expect(r.cloudPct).toBe(0);
      expect(r.modelPrecipMm).toBeCloseTo(24, 4); // tp grows 1 mm per hour
      expect(r.modelCloudPct).toBeCloseTo(50, 4);
    }
    expect(rows[0].inflowGwh).toBe(0);
    // Clear midsummer day at 52-55 N: GHI of a clear day is 7-8 kWh/m2 (common practice, from memory);
    // Haurwitz clear sky sits in that range.
    expect(rows[1].ghiKwhM2!).toBeGreaterThan(6);
    expect(rows[1].ghiKwhM2!).toBeLessThan(9);
    expect(rows[1].solarGwh!).toBeGreaterThan(0);
  });

  it('saturated ascent: precipitation scales with the efficiency, full cloud, warm air gives rain, inflow follows', async () => {
    const run = info(12, 30, STEPS);
    const a = await computeMemberSignals(source(run, 100, -0.3), REGIONS, DEFAULT_CALIBRATION_PARAMETERS);
    const b = await computeMemberSignals(source(run, 100, -0.3), REGIONS, { ...DEFAULT_CALIBRATION_PARAMETERS, precipEfficiency: 0.4 });
    const h1 = a.rows.find((r) => r.regionId === 'h1')!;
    expect(h1.precipMm!).toBeGreaterThan(1);
    expect(b.rows.find((r) => r.regionId === 'h1')!.precipMm! / h1.precipMm!).toBeCloseTo(0.5, 5);
    expect(h1.cloudPct).toBeCloseTo(100, 4);
    expect(h1.snowShare).toBe(0);
    expect(h1.inflowGwh!).toBeGreaterThan(0);
    const s1 = a.rows.find((r) => r.regionId === 's1')!;
    const clear = (await computeMemberSignals(source(run, 50, 0.2), REGIONS, DEFAULT_CALIBRATION_PARAMETERS)).rows.find((r) => r.regionId === 's1')!;
    // Kasten and Czeplak (1980): overcast (N = 1) leaves 25 % of clear-sky GHI.
    expect(s1.ghiKwhM2! / clear.ghiKwhM2!).toBeCloseTo(0.25, 3);
  });

  it('files without tp and tcc give null model columns', async () => {
    const { rows } = await computeMemberSignals(source(info(12, 30, STEPS, false), 90, -0.1), REGIONS.slice(0, 1), DEFAULT_CALIBRATION_PARAMETERS);
    expect(rows[0].modelPrecipMm).toBeNull();
    expect(rows[0].modelCloudPct).toBeNull();
  });

  it('a file without humidity gives no rows and says why; a column without 850 hPa splits rain and snow at the lowest level', async () => {
    const dry = info(12, 30, STEPS);
    dry.variables = dry.variables.filter((v) => v.name !== 'r');
    const none = await computeMemberSignals(source(dry, 90, -0.1), REGIONS.slice(0, 1), DEFAULT_CALIBRATION_PARAMETERS);
    expect(none.rows).toEqual([]);
    expect(none.warnings).toEqual([expect.stringMatching(/no temperature and humidity/)]);

    const high = info(12, 30, STEPS);
    high.axes = { ...high.axes, levels: Float64Array.from(LEVELS.slice(3)) }; // 700..300 hPa
    const src = source(high, 95, -0.2);
    const plane = 12 * 30;
    const n = (LEVELS.length - 3) * plane;
    // A cold column (-10 degC at every level): all snow by the lowest-level ramp.
    src.readField = async (name, step) => (name === 't' ? new Float32Array(n).fill(263.15) : name === 'r' ? new Float32Array(n).fill(95) : new Float32Array(plane).fill(step));
    src.readOmega = async () => new Float32Array(n).fill(-0.2);
    const cold = await computeMemberSignals(src, REGIONS.slice(0, 1), DEFAULT_CALIBRATION_PARAMETERS);
    expect(cold.warnings).toEqual([expect.stringMatching(/850 hPa is outside the levels/)]);
    expect(cold.rows[0].precipMm!).toBeGreaterThan(0);
    expect(cold.rows[0].snowShare).toBeCloseTo(1, 6);
  });

  it('tp missing at step 0 counts as 0 (running total since the reference time); tcc missing at a step empties the model cloud', async () => {
    const src = source(info(12, 30, STEPS), 50, 0.2);
    const read = src.readField.bind(src);
    src.readField = async (name, step) => {
      if ((name === 'tp' && step === 0) || (name === 'tcc' && step === 12)) throw new IngestError(name, `no field for member 0 at step ${step} h`);
      return read(name, step);
    };
    const { rows } = await computeMemberSignals(src, REGIONS.slice(0, 1), DEFAULT_CALIBRATION_PARAMETERS);
    expect(rows[0].modelPrecipMm).toBeCloseTo(24, 4);
    expect(rows[0].modelCloudPct).toBeNull();
    expect(rows[0].cloudPct).toBe(0);
  });

  it('weights are computed once per grid and region set', () => {
    const a = weightsForGrid(axes(12, 30), REGIONS);
    expect(weightsForGrid(axes(12, 30), [...REGIONS].reverse())).toBe(a);
    expect(weightsForGrid(axes(13, 30), REGIONS)).not.toBe(a);
  });

  it('21 steps x 21 members at 41 x 23 with 11 regions takes well under a minute', async () => {
    const steps = Array.from({ length: 21 }, (_, i) => i * 6);
    const run = info(23, 41, steps);
    const regions = Array.from({ length: 11 }, (_, k) => box(`r${k}`, k % 2 ? 'solar' : 'hydro', -4 + 3 * k, 51 + (k % 5) * 3, 2.5));
    const started = performance.now();
    for (let m = 0; m < 21; m++) await computeMemberSignals(source(run, 92, -0.2), regions, DEFAULT_CALIBRATION_PARAMETERS);
    const ms = performance.now() - started;
    console.log(`signals of 21 members x 21 steps at 41 x 23, 11 regions: ${ms.toFixed(0)} ms`);
    expect(ms).toBeLessThan(20_000);
  });
});

describe('regions and calibration input of the signals command', () => {
  it('the repository example regions file validates, and its areas are positive', async () => {
    const { readFileSync } = await import('node:fs');
    const regions = regionsFromGeojson(JSON.parse(readFileSync(new URL('../../../docs/regions-example.geojson', import.meta.url), 'utf8')));
    expect(regions.length).toBeGreaterThan(3);
    for (const r of regions) expect(geometryAreaKm2(r.geometry)).toBeGreaterThan(100);
  });

  it('a 1 x 1 degree box at the equator is about 12,364 km2 (R = 6371 km; R^2 (pi/180) sin(1 deg), spherical geometry)', () => {
    expect(geometryAreaKm2(box('e', 'hydro', 0, 0, 1).geometry)).toBeCloseTo(6371 ** 2 * (Math.PI / 180) * Math.sin(Math.PI / 180), 0);
  });

  it('a partial calibration file keeps the defaults for the rest; a broken one names the parameter', () => {
    expect(calibrationFromJson({ precipEfficiency: 0.5 })).toEqual({ ...DEFAULT_CALIBRATION_PARAMETERS, precipEfficiency: 0.5 });
    expect(calibrationFromJson({ version: 3, name: 'x', parameters: { noctC: 48 } }).noctC).toBe(48);
    expect(() => calibrationFromJson({ precipEfficiency: 2 })).toThrow(/precipEfficiency/);
  });
});
