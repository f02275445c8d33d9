/**
 * The `diagnose` command on an in-memory RunReader (the file readers are separate): JSON
 * contract, step/member selection, refusals and the --dump order (same as the inspect command).
 */
import { describe, expect, it, vi } from 'vitest';
import type { CanonicalVariable, RunReader } from '../../../../server/ingest/canonical.ts';
import { diagnoseReader, dumpOmega, run, textReport, UsageError } from '../../../../server/cli/commands/diagnose.ts';
import { diagnose, QgInputError } from '../../../../server/science/qg/index.ts';
import { axes, balancedFields, poly, STANDARD_LEVELS, type WaveSpec } from './analytic.ts';

const rad = Math.PI / 180;
const spec = (phase: number): WaveSpec => ({
  latc: 50,
  u: [10, 6, 0],
  components: [{ w: poly(-300, -400), shape: (lon, lat) => Math.cos(6 * lon - phase) * Math.exp(-(((lat - 50 * rad) / (10 * rad)) ** 2)) }],
});

function fakeReader(opts: { lon0?: number; variables?: CanonicalVariable[] } = {}): RunReader & { reads: string[] } {
  const ax = axes(35, 65, opts.lon0 ?? -30, (opts.lon0 ?? -30) + 60, 1, STANDARD_LEVELS);
  const variables = opts.variables ?? ['z', 't', 'w'];
  const reads: string[] = [];
  return {
    reads,
    info: {
      format: 'grib2', model: 'test-model', referenceTime: '2026-12-01T00:00:00Z', steps: [0, 6, 12], members: [0, 1], isEnsemble: true,
      axes: ax,
      variables: variables.map((name) => ({ name, sourceName: name, levels: STANDARD_LEVELS })),
    },
    async readField(name, member, step) {
      reads.push(`${name}:${member}:${step}`);
      const f = balancedFields(ax, spec(0.1 * step + member));
      if (name === 'w') {
        const d = diagnose({ axes: ax, z: f.z, t: f.t });
        return Float32Array.from(d.omega, (v, n) => v + 0.001 * Math.sin(n));
      }
      return Float32Array.from(name === 'z' ? f.z : f.t);
    },
    async close() {},
  };
}

describe('diagnoseReader', () => {
  it('follows the JSON contract: levels in hPa, f0, sigma per level, one entry per step with residual, solveMs and omega stats', async () => {
    const report = await diagnoseReader(fakeReader());
    const json = JSON.parse(JSON.stringify(report));
    expect(json.levels).toEqual(STANDARD_LEVELS.map((p) => p / 100));
    expect(json.f0).toBeCloseTo(2 * 7.292e-5 * Math.sin(50 * rad), 12);
    expect(json.sigma).toHaveLength(12);
    expect(json.sigma[5]).toBeGreaterThan(1e-6);
    expect(json.steps.map((s: { step: number }) => s.step)).toEqual([0, 6, 12]);
    for (const s of json.steps) {
      expect(s.residual).toBeLessThan(1e-10);
      expect(s.solveMs).toBeGreaterThan(0);
      expect(s.omega).toHaveLength(12);
      for (const o of s.omega) expect(o.min <= o.mean && o.mean <= o.max).toBe(true);
      expect(s.omega[0]).toEqual({ level: 1000, min: 0, mean: 0, max: 0 });
      expect(s.omega[5].min).toBeLessThan(0);
      // the file's omega is omega_QG plus small noise: high correlation inside, null on the Dirichlet levels
      expect(s.modelCorrelation[0]).toBeNull();
      expect(s.modelCorrelation[5]).toBeGreaterThan(0.9);
      expect(s.qVectorCorrelation[5]).toBeGreaterThan(0.95);
    }
    expect(json.member).toBe(0);
  });

  it('diagnoses only the requested step and member, and refuses unknown ones', async () => {
    const reader = fakeReader();
    const report = await diagnoseReader(reader, { steps: [6], member: 1 });
    expect(report.steps.map((s) => s.step)).toEqual([6]);
    expect(report.member).toBe(1);
    expect(reader.reads).toEqual(['z:1:6', 't:1:6', 'w:1:6']);
    await expect(diagnoseReader(fakeReader(), { steps: [7] })).rejects.toThrow(UsageError);
    await expect(diagnoseReader(fakeReader(), { member: 5 })).rejects.toThrow(/member 5 is not in this file/);
  });

  it('refuses a file without temperature, and works without the model omega (no correlation)', async () => {
    await expect(diagnoseReader(fakeReader({ variables: ['z', 'w'] }))).rejects.toThrow(QgInputError);
    const report = await diagnoseReader(fakeReader({ variables: ['z', 't'] }), { steps: [0] });
    expect(report.steps[0].modelCorrelation).toBeNull();
    const text = textReport(report);
    expect(text).toMatch(/step \+0 h: residual/);
    expect(text).toMatch(/Pa s-1/);
    expect(text).toMatch(/m2 Pa-2 s-2/);
  });
});

describe('--dump omega:LEVEL_HPA:STEP_H', () => {
  it('prints lat lon value north to south, west to east, longitudes wrapped to -180..180, values of omega_QG', async () => {
    const reader = fakeReader({ lon0: 160 });
    const body = await dumpOmega(reader, { levelHpa: 500, step: 12 });
    const lines = body.split('\n');
    const ax = reader.info.axes;
    expect(lines).toHaveLength(ax.lat.length * ax.lon.length);
    expect(lines[0].split(' ').slice(0, 2)).toEqual(['65', '160']);
    expect(lines[19].split(' ')[1]).toBe('179');
    expect(lines[20].split(' ')[1]).toBe('-180');
    expect(lines[21].split(' ')[1]).toBe('-179');
    expect(lines[lines.length - 1].split(' ').slice(0, 2)).toEqual(['35', '-140']);
    const f = balancedFields(ax, spec(1.2));
    const d = diagnose({ axes: ax, z: Float32Array.from(f.z), t: Float32Array.from(f.t) });
    const k = STANDARD_LEVELS.indexOf(50000), j = ax.lat.length - 1 - 10, i = 15;
    const value = Number(lines[10 * ax.lon.length + i].split(' ')[2]);
    expect(value).toBeCloseTo(d.omega[(k * ax.lat.length + j) * ax.lon.length + i], 6);
    await expect(dumpOmega(fakeReader(), { levelHpa: 550, step: 0 })).rejects.toThrow(/no level 550 hPa/);
  });
});

describe('run(argv)', () => {
  it('exits 2 on a usage error and 1 when the file cannot be read', async () => {
    const err = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
    try {
      expect(await run([])).toBe(2);
      expect(await run(['a.grib2', '--dump', 'z:500:0'])).toBe(2);
      expect(await run(['does-not-exist.grib2'])).toBe(1);
    } finally {
      err.mockRestore();
    }
  });
});
