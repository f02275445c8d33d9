/**
 * Region weights against an outside area computation.
 * Reference tool: @turf/area (spherical polygon area, radius 6371008.8 m; source of its method:
 * Chamberlain and Duquette (2007), "Some algorithms for polygons on a sphere"). Our weights use the
 * exact spherical cell area with a = 6.371e6 m (SCIENCE.md); the radii differ by 0.0003 %.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { area } from '@turf/area';
import { describe, expect, it } from 'vitest';
import { validateRegions } from '../../../shared/regions.ts';
import { regionWeights } from '../../../server/science/regions.ts';

function axis(from: number, to: number, step: number): Float64Array {
  const n = Math.round((to - from) / step) + 1;
  return Float64Array.from({ length: n }, (_, i) => from + i * step);
}

describe('region weights sum to the polygon area (reference tool: @turf/area)', () => {
  const file = fileURLToPath(new URL('../../../docs/regions-example.geojson', import.meta.url));
  const parsed = validateRegions(JSON.parse(readFileSync(file, 'utf8')));
  if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join('\n'));

  for (const [label, step, tolerance] of [['0.25 deg', 0.25, 0.01], ['0.1 deg', 0.1, 0.005]] as const) {
    it(`within ${tolerance * 100} % for every Nordvale region on a ${label} grid`, () => {
      const lat = axis(55, 67, step);
      const lon = axis(3, 27, step);
      for (const f of parsed.collection.features) {
        const w = regionWeights(f.properties.id, f.geometry, lat, lon);
        const turf = area({ type: 'Feature', properties: {}, geometry: f.geometry });
        expect(Math.abs(w.totalAreaM2 / turf - 1), f.properties.id).toBeLessThan(tolerance);
      }
    });
  }

  it('within 1 % for a large MultiPolygon with a hole on a 0.5 deg grid', () => {
    const geometry = {
      type: 'MultiPolygon' as const,
      coordinates: [
        [[[5, 57], [12, 56.5], [14, 60], [9.5, 63], [5, 61], [5, 57]], [[8, 59], [8, 60], [10, 60], [10, 59], [8, 59]]],
        [[[16, 62], [24, 62.5], [25, 65.5], [18, 65], [16, 62]]],
      ],
    };
    const w = regionWeights('multi', geometry, axis(55, 67, 0.5), axis(3, 27, 0.5));
    const turf = area({ type: 'Feature', properties: {}, geometry });
    expect(Math.abs(w.totalAreaM2 / turf - 1)).toBeLessThan(0.01);
  });
});
