import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { DEFAULT_CALIBRATION_PARAMETERS } from '../../../../shared/calibration.ts';
import { findRingSelfIntersection, validateRegions, type RegionGeometry } from '../../../../shared/regions.ts';
import {
  catchmentParameters, cellEdges, EARTH_RADIUS_M, pointInPolygon, regionalMean, regionWeights, solarZoneParameters,
  sphericalCellArea,
} from '../../../../server/science/regions.ts';

const examplePath = fileURLToPath(new URL('../../../../docs/regions-example.geojson', import.meta.url));

function axis(from: number, to: number, step: number): Float64Array {
  const n = Math.round((to - from) / step) + 1;
  return Float64Array.from({ length: n }, (_, i) => from + i * step);
}

function rectangle(w: number, s: number, e: number, n: number): Extract<RegionGeometry, { type: 'Polygon' }> {
  return { type: 'Polygon', coordinates: [[[w, s], [e, s], [e, n], [w, n], [w, s]]] };
}

describe('sphericalCellArea (exact: R^2 dlon (sin lat2 - sin lat1))', () => {
  it('sums to the sphere 4 pi R^2 over a global 1-degree grid', () => {
    const lat = axis(-89.5, 89.5, 1);
    const lon = axis(0.5, 359.5, 1);
    const edges = cellEdges(lat, [-90, 90]);
    let total = 0;
    for (let j = 0; j < lat.length; j++) total += sphericalCellArea(edges[j], edges[j + 1], 1) * lon.length;
    expect(total / (4 * Math.PI * EARTH_RADIUS_M ** 2)).toBeCloseTo(1, 12);
  });
  it('clips the polar cells of a grid whose end points sit on the poles', () => {
    const edges = cellEdges(axis(-90, 90, 1), [-90, 90]);
    expect(edges[0]).toBe(-90);
    expect(edges[edges.length - 1]).toBe(90);
  });
});

describe('regionWeights', () => {
  const lat = axis(56, 66, 0.25);
  const lon = axis(4, 26, 0.25);

  it('gives whole cells their exact area for a rectangle on cell edges', () => {
    const w = regionWeights('box', rectangle(10.125, 60.125, 11.125, 61.125), lat, lon);
    expect(w.cells.length).toBe(16);
    const exact = sphericalCellArea(60.125, 61.125, 1);
    expect(w.totalAreaM2 / exact).toBeCloseTo(1, 12);
    expect(w.centroidLatDeg).toBeCloseTo(60.625, 1);
    expect(w.centroidLonDeg).toBeCloseTo(10.625, 6);
  });

  it('counts fractions of cells by 5 x 5 sub-sampling', () => {
    // the cell 10.125..10.375 E; sample columns at 10.15, 10.20, 10.25, 10.30, 10.35 E: 3 of 5 inside
    const w = regionWeights('part', rectangle(10.125, 60.125, 10.27, 60.375), lat, lon);
    expect(w.cells.length).toBe(1);
    expect(w.areaM2[0] / sphericalCellArea(60.125, 60.375, 0.25)).toBeCloseTo(0.6, 12);
  });

  it('leaves out a hole', () => {
    const outer = rectangle(10.125, 60.125, 11.125, 61.125).coordinates[0];
    const hole = rectangle(10.375, 60.375, 10.875, 60.875).coordinates[0].slice().reverse();
    const w = regionWeights('ring', { type: 'Polygon', coordinates: [outer, hole] }, lat, lon);
    expect(w.totalAreaM2 / (sphericalCellArea(60.125, 61.125, 1) - sphericalCellArea(60.375, 60.875, 0.5))).toBeCloseTo(1, 12);
    expect(pointInPolygon(10.6, 60.6, [outer, hole])).toBe(false);
    expect(pointInPolygon(10.2, 60.2, [outer, hole])).toBe(true);
  });

  it('refuses a region outside the grid, naming it', () => {
    expect(() => regionWeights('far-away', rectangle(40, 60, 41, 61), lat, lon)).toThrow(/region "far-away" lies outside the grid/);
    expect(() => regionWeights('half-out', rectangle(25, 60, 27, 61), lat, lon)).toThrow(/half-out/);
  });

  it('refuses a grid axis that does not ascend (canonical grid: south to north)', () => {
    expect(() => regionWeights('r', rectangle(10, 60, 11, 61), Float64Array.from(lat).reverse(), lon)).toThrow(/must ascend/);
  });

  it('refuses a region the grid cannot see', () => {
    expect(() => regionWeights('tiny', rectangle(10.01, 60.01, 10.02, 60.02), lat, lon)).toThrow(/tiny.*smaller than the grid/);
  });

  it('accepts a grid in 0..360 longitudes for a region west of Greenwich', () => {
    const glat = axis(40, 60, 1);
    const glon = axis(0, 359, 1);
    const w = regionWeights('west', rectangle(-5.5, 50.5, -3.5, 52.5), glat, glon);
    expect(w.totalAreaM2 / sphericalCellArea(50.5, 52.5, 2)).toBeCloseTo(1, 12);
    expect(w.centroidLonDeg).toBeCloseTo(-4.5, 6);
  });
});

describe('regionalMean (area-weighted)', () => {
  const lat = axis(56, 66, 0.5);
  const lon = axis(4, 26, 0.5);
  const w = regionWeights('r', rectangle(9.75, 57.75, 14.25, 64.25), lat, lon);
  it('returns a constant field unchanged and skips NaN cells', () => {
    const f = new Float32Array(lat.length * lon.length).fill(7.5);
    expect(regionalMean(f, w)).toBeCloseTo(7.5, 6);
    f[w.cells[0]] = Number.NaN;
    expect(regionalMean(f, w)).toBeCloseTo(7.5, 6);
  });
  it('weights by cell area: the mean of sin(lat) over a band is the area-weighted one', () => {
    const f = new Float32Array(lat.length * lon.length);
    for (let j = 0; j < lat.length; j++) for (let i = 0; i < lon.length; i++) f[j * lon.length + i] = lat[j];
    const plain = [...w.cells].reduce((s, c) => s + lat[Math.floor(c / lon.length)], 0) / w.cells.length;
    expect(regionalMean(f, w)).toBeLessThan(plain); // poleward cells are smaller
    expect(regionalMean(f, w)).toBeGreaterThan(58);
  });
});

describe('the regions contract (shared/regions.ts)', () => {
  it('accepts the Nordvale example file', () => {
    const parsed = validateRegions(JSON.parse(readFileSync(examplePath, 'utf8')));
    if (!parsed.ok) throw new Error(parsed.issues.map((i) => i.message).join('\n'));
    const kinds = parsed.collection.features.map((f) => f.properties.kind);
    expect(kinds.filter((k) => k === 'hydro').length).toBeGreaterThanOrEqual(3);
    expect(kinds.filter((k) => k === 'solar').length).toBeGreaterThanOrEqual(2);
    for (const f of parsed.collection.features) {
      for (const ring of f.geometry.coordinates as number[][][]) for (const [x, y] of ring) {
        expect(x).toBeGreaterThanOrEqual(4); expect(x).toBeLessThanOrEqual(26);
        expect(y).toBeGreaterThanOrEqual(56); expect(y).toBeLessThanOrEqual(66);
      }
    }
  });

  it('reports one message per problem, naming the feature by index and id, for a broken file', () => {
    const good = rectangle(8, 60, 9, 61);
    const broken = {
      type: 'FeatureCollection',
      features: [
        { type: 'Feature', properties: { id: 'h1', name: 'No head', kind: 'hydro', efficiency: 0.9, runoffCoefficient: 0.7, recessionDays: 10 }, geometry: good },
        { type: 'Feature', properties: { id: 'h2', name: 'Bad range', kind: 'hydro', headM: -5, efficiency: 1.4, runoffCoefficient: 0.7, recessionDays: 10 }, geometry: good },
        { type: 'Feature', properties: { id: 's1', name: 'Open ring', kind: 'solar', capacityMw: 50, tiltDeg: 30, azimuthDeg: 180, lossesPct: 14 },
          geometry: { type: 'Polygon', coordinates: [[[8, 60], [9, 60], [9, 61], [8, 61]]] } },
        { type: 'Feature', properties: { id: 's2', name: 'Bow tie', kind: 'solar', capacityMw: 50, tiltDeg: 30, azimuthDeg: 180, lossesPct: 14 },
          geometry: { type: 'Polygon', coordinates: [[[8, 60], [9, 61], [9, 60], [8, 61], [8, 60]]] } },
        { type: 'Feature', properties: { id: 's1', name: 'Duplicate', kind: 'solar', capacityMw: 50, tiltDeg: 95, azimuthDeg: 180, lossesPct: 14 }, geometry: good },
        { type: 'Feature', properties: { id: 'x1', name: 'Empty', kind: 'wind' }, geometry: { type: 'Polygon', coordinates: [] } },
        { type: 'Feature', properties: { id: 's3', name: 'Off the map', kind: 'solar', capacityMw: 5, tiltDeg: 20, azimuthDeg: 180, lossesPct: 10 },
          geometry: { type: 'Polygon', coordinates: [[[8, 60], [200, 60], [9, 95], [8, 60]]] } },
      ],
    };
    const result = validateRegions(broken);
    expect(result.ok).toBe(false);
    if (result.ok) return;
    const text = result.issues.map((i) => i.message);
    const at = (id: string) => text.filter((m) => m.includes(`(id "${id}")`));
    expect(at('h1').some((m) => /feature 0 .*headM: is missing/.test(m))).toBe(true);
    expect(at('h2').some((m) => /headM: must be > 0 m/.test(m))).toBe(true);
    expect(at('h2').some((m) => /efficiency/.test(m))).toBe(true);
    expect(text.some((m) => /feature 2 \(id "s1"\): ring 0 is not closed/.test(m))).toBe(true);
    expect(at('s2').some((m) => /intersects itself/.test(m))).toBe(true);
    expect(text.some((m) => /feature 4 \(id "s1"\): duplicate id, already used by feature 2/.test(m))).toBe(true);
    expect(text.some((m) => /feature 4 .*tiltDeg/.test(m))).toBe(true);
    expect(at('x1').some((m) => /kind/.test(m))).toBe(true);
    expect(at('x1').some((m) => /geometry is empty/.test(m))).toBe(true);
    expect(at('s3').some((m) => /out of range/.test(m))).toBe(true);
    expect(result.issues.every((i) => i.featureIndex !== null)).toBe(true);
  });

  it('refuses something that is not a FeatureCollection, and unknown property names', () => {
    const notCollection = validateRegions({ type: 'Feature' });
    expect(notCollection.ok).toBe(false);
    const typo = validateRegions({ type: 'FeatureCollection', features: [{ type: 'Feature',
      properties: { id: 'a', name: 'A', kind: 'solar', capacityMw: 1, tiltDeg: 1, azimuthDeg: 180, lossesPct: 1, albdo: 0.3 },
      geometry: rectangle(8, 60, 9, 61) }] });
    expect(typo.ok).toBe(false);
    if (!typo.ok) expect(typo.issues[0].message).toMatch(/albdo/);
  });

  it('finds self-intersections with an O(n^2) segment test and accepts simple rings', () => {
    expect(findRingSelfIntersection([[0, 0], [2, 2], [2, 0], [0, 2], [0, 0]])).not.toBeNull();
    expect(findRingSelfIntersection([[0, 0], [2, 0], [2, 2], [1, 0], [0, 2], [0, 0]])).not.toBeNull(); // touches an edge
    expect(findRingSelfIntersection([[0, 0], [2, 0], [2, 2], [1, 1], [0, 2], [0, 0]])).toBeNull(); // concave but simple
    expect(findRingSelfIntersection([[0, 0], [2, 0], [2, 0], [2, 2], [0, 2], [0, 0]])).toBeNull(); // repeated point
  });

  it('fills optional plant values from the calibration set', () => {
    const parsed = validateRegions(JSON.parse(readFileSync(examplePath, 'utf8')));
    if (!parsed.ok) throw new Error('example invalid');
    const solar = parsed.collection.features.find((f) => f.properties.kind === 'solar' && f.properties.albedo === undefined);
    const hydro = parsed.collection.features.find((f) => f.properties.kind === 'hydro' && f.properties.snowDdfMmPerDayK === undefined);
    if (!solar || solar.properties.kind !== 'solar' || !hydro || hydro.properties.kind !== 'hydro') throw new Error('example lacks defaulted features');
    expect(solarZoneParameters(solar.properties, DEFAULT_CALIBRATION_PARAMETERS).albedo).toBe(DEFAULT_CALIBRATION_PARAMETERS.albedo);
    const w = regionWeights(hydro.properties.id, hydro.geometry, axis(56, 66, 0.25), axis(4, 26, 0.25));
    const c = catchmentParameters(hydro.properties, w, DEFAULT_CALIBRATION_PARAMETERS);
    expect(c.snowDdfMmPerDayK).toBe(DEFAULT_CALIBRATION_PARAMETERS.snowDdfMmPerDayK);
    expect(c.areaM2).toBe(w.totalAreaM2);
  });
});
