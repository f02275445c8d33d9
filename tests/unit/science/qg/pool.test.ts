/**
 * The omega worker pool (piscina + tsx loader in the workers): solves through the pool equal
 * the direct solve in this thread.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { OmegaPool } from '../../../../server/jobs/omega-pool.ts';
import { diagnose } from '../../../../server/science/qg/index.ts';
import { axes, balancedFields, poly, STANDARD_LEVELS, type WaveSpec } from './analytic.ts';

const rad = Math.PI / 180;
const spec = (phase: number): WaveSpec => ({
  latc: 50,
  u: [10, 6 + phase, 0],
  components: [{ w: poly(-300, -400), shape: (lon, lat) => Math.cos(6 * lon - phase) * Math.exp(-(((lat - 50 * rad) / (10 * rad)) ** 2)) }],
});

// starting two worker threads with the tsx loader takes a few seconds on a loaded machine
describe('OmegaPool', { timeout: 30_000 }, () => {
  const pool = new OmegaPool({ threads: 2 });
  afterAll(() => pool.destroy());

  it('returns, for several (member, step) tasks, exactly the direct diagnosis', async () => {
    const ax = axes(35, 65, -30, 30, 1, STANDARD_LEVELS);
    const inputs = [0, 1, 2, 3].map((m) => ({ member: m, step: 6 * m, ...balancedFields(ax, spec(0.4 * m)) }));
    const direct = inputs.map((x) => diagnose({ axes: ax, z: x.z, t: x.t }));
    const pooled = await Promise.all(inputs.map((x) => pool.run({
      member: x.member, step: x.step, axes: { lat: ax.lat.slice(), lon: ax.lon.slice(), levels: ax.levels.slice() },
      z: Float32Array.from(x.z), t: Float32Array.from(x.t),
    })));
    // the pool gets Float32 copies (as the canonical grid stores them): compare with the same rounding
    const direct32 = inputs.map((x) => diagnose({ axes: ax, z: Float32Array.from(x.z), t: Float32Array.from(x.t) }));
    pooled.forEach((r, m) => {
      expect(r.member).toBe(m);
      expect(r.step).toBe(6 * m);
      expect(r.omega).toBeInstanceOf(Float64Array);
      expect(Array.from(r.omega)).toEqual(Array.from(direct32[m].omega));
      expect(Array.from(r.omegaQVector)).toEqual(Array.from(direct32[m].omegaQVector));
      expect(Array.from(r.sigma)).toEqual(Array.from(direct32[m].sigma));
      expect(r.residual.total).toBeLessThan(1e-10);
      // and Float32 rounding of the inputs changes omega only slightly
      let diff = 0, big = 0;
      for (let n = 0; n < r.omega.length; n++) { diff = Math.max(diff, Math.abs(r.omega[n] - direct[m].omega[n])); big = Math.max(big, Math.abs(direct[m].omega[n])); }
      expect(diff / big).toBeLessThan(1e-2); // float32 keeps ~7 digits of Phi ~ 1e5 m2 s-2
    });
  });

  it('transfers the inputs (they are detached afterwards) and reports refusals from the worker', async () => {
    const ax = axes(35, 65, -30, 30, 1, STANDARD_LEVELS);
    const { z, t } = balancedFields(ax, spec(0));
    const z32 = Float32Array.from(z);
    await pool.run({ member: 0, step: 0, axes: ax, z: z32, t: Float32Array.from(t) });
    expect(z32.byteLength).toBe(0);
    const bad = axes(35, 65, -30, 30, 1, [85000, 50000]);
    const two = balancedFields(bad, spec(0));
    await expect(pool.run({ member: 0, step: 0, axes: bad, z: two.z, t: two.t })).rejects.toThrow(/at least 3 pressure levels/);
  });
});
