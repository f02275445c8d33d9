/**
 * The invented Nordvale market: a valid regions file (RFC 7946 GeoJSON polygons: closed,
 * anticlockwise exterior rings, no self-intersection), plant parameters in range, demo people
 * covering every role, subscribers pointing at real region ids.
 */
import { describe, expect, it } from 'vitest';
import type { Position } from 'geojson';
import {
  DEMO_GROUP_ROLES, DEMO_PEOPLE, DEMO_SUBSCRIBERS, NORDVALE_REGIONS, starPolygon,
} from '../../../scripts/demo/market.ts';

/** Proper crossing of segments ab and cd (shared end points do not count). */
function segmentsCross(a: Position, b: Position, c: Position, d: Position): boolean {
  const orient = (p: Position, q: Position, r: Position) => Math.sign((q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0]));
  return orient(a, b, c) * orient(a, b, d) < 0 && orient(c, d, a) * orient(c, d, b) < 0;
}

function selfIntersects(ring: Position[]): boolean {
  const n = ring.length - 1;
  for (let i = 0; i < n; i++) {
    for (let j = i + 2; j < n; j++) {
      if (i === 0 && j === n - 1) continue; // adjacent through the closing point
      if (segmentsCross(ring[i], ring[i + 1], ring[j], ring[j + 1])) return true;
    }
  }
  return false;
}

/** Shoelace formula: positive for anticlockwise rings. */
function signedArea(ring: Position[]): number {
  let s = 0;
  for (let i = 0; i + 1 < ring.length; i++) s += ring[i][0] * ring[i + 1][1] - ring[i + 1][0] * ring[i][1];
  return s / 2;
}

describe('regions (source: RFC 7946 GeoJSON for ring rules)', () => {
  const features = NORDVALE_REGIONS.features;
  const hydro = features.filter((f) => f.properties.kind === 'hydro');
  const solar = features.filter((f) => f.properties.kind === 'solar');

  it('5-6 hydro catchments and 3-4 solar zones with unique ids and names', () => {
    expect(NORDVALE_REGIONS.type).toBe('FeatureCollection');
    expect(hydro.length).toBeGreaterThanOrEqual(5);
    expect(hydro.length).toBeLessThanOrEqual(6);
    expect(solar.length).toBeGreaterThanOrEqual(3);
    expect(solar.length).toBeLessThanOrEqual(4);
    expect(new Set(features.map((f) => f.properties.id)).size).toBe(features.length);
    expect(new Set(features.map((f) => f.properties.name)).size).toBe(features.length);
  });

  it('every ring is closed, simple, anticlockwise and inside 56..66 N, 4..26 E', () => {
    for (const f of features) {
      expect(f.geometry.type).toBe('Polygon');
      const ring = f.geometry.coordinates[0];
      expect(ring.length).toBeGreaterThanOrEqual(4);
      expect(ring[ring.length - 1]).toEqual(ring[0]);
      expect(selfIntersects(ring)).toBe(false);
      expect(signedArea(ring)).toBeGreaterThan(0);
      for (const [lon, lat] of ring) {
        expect(lat).toBeGreaterThanOrEqual(56);
        expect(lat).toBeLessThanOrEqual(66);
        expect(lon).toBeGreaterThanOrEqual(4);
        expect(lon).toBeLessThanOrEqual(26);
      }
    }
  });

  it('the self-intersection check catches a bow-tie', () => {
    expect(selfIntersects([[0, 0], [1, 1], [1, 0], [0, 1], [0, 0]])).toBe(true);
    expect(selfIntersects(starPolygon({ centreLat: 60, centreLon: 10, radiiKm: [50, 20, 60, 30, 55] }))).toBe(false);
  });

  it('hydro catchments lie north/west of the solar zones', () => {
    const meanLat = (fs: typeof features) => fs.reduce((a, f) => a + f.geometry.coordinates[0][0][1], 0) / fs.length;
    expect(meanLat(hydro)).toBeGreaterThan(meanLat(solar) + 2);
  });

  it('hydro plant parameters are in range', () => {
    for (const f of hydro) {
      const p = f.properties;
      if (p.kind !== 'hydro') throw new Error('not hydro');
      expect(p.headM).toBeGreaterThan(0);
      expect(p.efficiency).toBeGreaterThan(0);
      expect(p.efficiency).toBeLessThanOrEqual(1);
      expect(p.runoffCoefficient).toBeGreaterThan(0);
      expect(p.runoffCoefficient).toBeLessThanOrEqual(1);
      expect(p.recessionDays).toBeGreaterThan(0);
      expect(Object.keys(p).sort()).toEqual(['efficiency', 'headM', 'id', 'kind', 'name', 'recessionDays', 'runoffCoefficient']);
    }
  });

  it('solar plant parameters are in range', () => {
    for (const f of solar) {
      const p = f.properties;
      if (p.kind !== 'solar') throw new Error('not solar');
      expect(p.capacityMw).toBeGreaterThan(0);
      expect(p.tiltDeg).toBeGreaterThanOrEqual(0);
      expect(p.tiltDeg).toBeLessThanOrEqual(90);
      expect(p.azimuthDeg).toBeGreaterThanOrEqual(90);
      expect(p.azimuthDeg).toBeLessThanOrEqual(270);
      expect(p.lossesPct).toBeGreaterThanOrEqual(0);
      expect(p.lossesPct).toBeLessThan(50);
      expect(Object.keys(p).sort()).toEqual(['azimuthDeg', 'capacityMw', 'id', 'kind', 'lossesPct', 'name', 'tiltDeg']);
    }
  });
});

describe('people and subscribers', () => {
  it('one person per role plus one with two roles; groups map to the roles', () => {
    const roles = ['meteorologist', 'trader', 'risk', 'admin'] as const;
    for (const role of roles) expect(DEMO_PEOPLE.some((p) => p.roles.length === 1 && p.roles[0] === role)).toBe(true);
    expect(DEMO_PEOPLE.some((p) => p.roles.length === 2)).toBe(true);
    for (const p of DEMO_PEOPLE) expect(p.roles).toEqual(p.groups.map((g) => DEMO_GROUP_ROLES[g]));
  });

  it('e-mail addresses use reserved example domains (RFC 2606) and are unique', () => {
    const all = [...DEMO_PEOPLE.map((p) => p.email), ...DEMO_SUBSCRIBERS.map((s) => s.email)];
    for (const e of all) expect(e).toMatch(/^[a-z0-9.-]+@([a-z0-9-]+\.)*example$/);
    expect(new Set(DEMO_PEOPLE.map((p) => p.email)).size).toBe(DEMO_PEOPLE.length);
  });

  it('subscribers only name existing regions', () => {
    const ids = new Set(NORDVALE_REGIONS.features.map((f) => f.properties.id));
    for (const s of DEMO_SUBSCRIBERS) {
      expect(s.regions.length).toBeGreaterThan(0);
      for (const r of s.regions) expect(ids.has(r)).toBe(true);
    }
  });
});
