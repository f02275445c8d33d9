/**
 * The regions GeoJSON contract: hydro catchments and solar zones with their plant parameters,
 * written by hand by the desk and uploaded by an admin. Shared by the client (upload preview)
 * and the server (region weights).
 *
 * A FeatureCollection (RFC 7946, WGS84 longitude/latitude degrees) of Polygon or MultiPolygon
 * features. Every feature's `properties`:
 *   id (string, unique), name (string), kind ("hydro" | "solar"), description (optional text)
 * kind "hydro":
 *   headM > 0 (m), efficiency 0..1, runoffCoefficient 0..1, recessionDays > 0 (d);
 *   optional snowDdfMmPerDayK (mm d-1 K-1), meltThresholdC (degC)
 * kind "solar":
 *   capacityMw > 0, tiltDeg 0..90, azimuthDeg 0..360 (180 = facing south), lossesPct 0..100;
 *   optional gammaPerK (K-1), albedo (0..1), noctC (degC)
 * Optional values left out take the active calibration set's value (defaults in
 * shared/calibration.ts: snowDdfMmPerDayK 3.5, meltThresholdC 0, gammaPerK -0.004, albedo 0.2,
 * noctC 45). Unknown property names are refused so that a typo cannot pass silently.
 */
import { z } from 'zod';

const baseProperties = {
  id: z.string().trim().min(1, 'must be a non-empty string'),
  name: z.string().trim().min(1, 'must be a non-empty string'),
  description: z.string().max(2000).optional(),
};

export const hydroPropertiesSchema = z.strictObject({
  ...baseProperties,
  kind: z.literal('hydro'),
  headM: z.number().gt(0, 'must be > 0 m'),
  efficiency: z.number().min(0).max(1),
  runoffCoefficient: z.number().min(0).max(1),
  recessionDays: z.number().gt(0, 'must be > 0 days'),
  snowDdfMmPerDayK: z.number().min(0).max(20).optional(),
  meltThresholdC: z.number().min(-10).max(10).optional(),
});

export const solarPropertiesSchema = z.strictObject({
  ...baseProperties,
  kind: z.literal('solar'),
  capacityMw: z.number().gt(0, 'must be > 0 MW'),
  tiltDeg: z.number().min(0).max(90),
  azimuthDeg: z.number().min(0).max(360),
  lossesPct: z.number().min(0).max(100),
  gammaPerK: z.number().min(-0.02).max(0).optional(),
  albedo: z.number().min(0).max(1).optional(),
  noctC: z.number().min(20).max(70).optional(),
});

export const regionPropertiesSchema = z.discriminatedUnion('kind', [hydroPropertiesSchema, solarPropertiesSchema]);

export type HydroRegionProperties = z.infer<typeof hydroPropertiesSchema>;
export type SolarRegionProperties = z.infer<typeof solarPropertiesSchema>;
export type RegionProperties = z.infer<typeof regionPropertiesSchema>;

const position = z.array(z.number()).min(2).max(3);
const ring = z.array(position);
export const polygonGeometrySchema = z.object({ type: z.literal('Polygon'), coordinates: z.array(ring) });
export const multiPolygonGeometrySchema = z.object({ type: z.literal('MultiPolygon'), coordinates: z.array(z.array(ring)) });
export const regionGeometrySchema = z.discriminatedUnion('type', [polygonGeometrySchema, multiPolygonGeometrySchema]);
export type RegionGeometry = z.infer<typeof regionGeometrySchema>;

export const regionFeatureSchema = z.object({
  type: z.literal('Feature'),
  properties: regionPropertiesSchema,
  geometry: regionGeometrySchema,
});
export type RegionFeature = z.infer<typeof regionFeatureSchema>;

export const regionCollectionSchema = z.object({
  type: z.literal('FeatureCollection'),
  features: z.array(regionFeatureSchema),
});
export type RegionCollection = z.infer<typeof regionCollectionSchema>;

export interface RegionIssue {
  /** index of the feature in `features`, null for the file as a whole */
  featureIndex: number | null;
  /** the feature's id when it has one */
  id: string | null;
  /** one readable sentence: where and what */
  message: string;
}

export type RegionValidation =
  | { ok: true; collection: RegionCollection }
  | { ok: false; issues: RegionIssue[] };

function issuePath(path: readonly PropertyKey[]): string {
  return path.map((p) => (typeof p === 'number' ? `[${p}]` : String(p))).join('.').replace(/\.\[/g, '[');
}

/** Polygon rings of a geometry, as [lon, lat] lists, with a label for messages. */
function ringsOf(geometry: RegionGeometry): { label: string; ring: number[][] }[] {
  const polygons = geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates;
  const out: { label: string; ring: number[][] }[] = [];
  polygons.forEach((poly, p) => poly.forEach((r, k) => {
    const label = geometry.type === 'Polygon' ? `ring ${k}` : `polygon ${p} ring ${k}`;
    out.push({ label, ring: r });
  }));
  return out;
}

function orientation(a: number[], b: number[], c: number[]): number {
  const v = (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
  return v > 0 ? 1 : v < 0 ? -1 : 0;
}

function onSegment(a: number[], b: number[], c: number[]): boolean {
  return Math.min(a[0], b[0]) <= c[0] && c[0] <= Math.max(a[0], b[0]) && Math.min(a[1], b[1]) <= c[1] && c[1] <= Math.max(a[1], b[1]);
}

/** Whether segments ab and cd share a point (proper crossing, touching or collinear overlap). */
export function segmentsIntersect(a: number[], b: number[], c: number[], d: number[]): boolean {
  const o1 = orientation(a, b, c);
  const o2 = orientation(a, b, d);
  const o3 = orientation(c, d, a);
  const o4 = orientation(c, d, b);
  if (o1 !== o2 && o3 !== o4) return true;
  return (o1 === 0 && onSegment(a, b, c)) || (o2 === 0 && onSegment(a, b, d))
    || (o3 === 0 && onSegment(c, d, a)) || (o4 === 0 && onSegment(c, d, b));
}

/**
 * First pair of non-adjacent edges of a closed ring that touch or cross, or null.
 * O(n^2) pairwise test, enough for hand-drawn regions. Repeated consecutive points are
 * dropped first (they are zero-length edges, harmless but they would touch their neighbours).
 */
export function findRingSelfIntersection(ringCoords: number[][]): [number, number] | null {
  const pts = ringCoords.filter((p, i) => i === 0 || p[0] !== ringCoords[i - 1][0] || p[1] !== ringCoords[i - 1][1]);
  const m = pts.length - 1; // edges of the closed ring
  for (let i = 0; i < m; i++) {
    for (let j = i + 2; j < m; j++) {
      if (i === 0 && j === m - 1) continue; // first and last edge share the closing point
      if (segmentsIntersect(pts[i], pts[i + 1], pts[j], pts[j + 1])) return [i, j];
    }
  }
  return null;
}

/** Geometry problems of one feature, each as a short phrase. */
export function geometryProblems(geometry: RegionGeometry): string[] {
  const problems: string[] = [];
  const rings = ringsOf(geometry);
  if (rings.length === 0 || (geometry.type === 'MultiPolygon' && geometry.coordinates.some((p) => p.length === 0))) {
    problems.push('geometry is empty (no rings)');
  }
  for (const { label, ring } of rings) {
    if (ring.length === 0) { problems.push(`${label} is empty`); continue; }
    const bad = ring.findIndex((p) => !Number.isFinite(p[0]) || !Number.isFinite(p[1]) || p[0] < -180 || p[0] > 180 || p[1] < -90 || p[1] > 90);
    if (bad >= 0) {
      problems.push(`${label} position ${bad} [${ring[bad].slice(0, 2).join(', ')}] is out of range (longitude -180..180, latitude -90..90)`);
      continue;
    }
    const first = ring[0];
    const last = ring[ring.length - 1];
    if (first[0] !== last[0] || first[1] !== last[1]) {
      problems.push(`${label} is not closed: first position [${first.slice(0, 2).join(', ')}] differs from last [${last.slice(0, 2).join(', ')}]`);
      continue;
    }
    if (ring.length < 4) { problems.push(`${label} has ${ring.length} positions; a closed ring needs at least 4`); continue; }
    const crossing = findRingSelfIntersection(ring);
    if (crossing) problems.push(`${label} intersects itself (edges ${crossing[0]} and ${crossing[1]})`);
  }
  return problems;
}

/** zod's message, with a plainer wording for the commonest hand-editing slip. */
function issueMessage(issue: z.core.$ZodIssue): string {
  if (issue.code === 'invalid_type' && /received undefined$/.test(issue.message)) return `is missing (expected ${issue.expected})`;
  return issue.message;
}

function describe(index: number, id: string | null): string {
  return id ? `feature ${index} (id "${id}")` : `feature ${index}`;
}

/**
 * Validates a parsed GeoJSON value against the contract. Returns every problem, one message
 * per problem, each naming the feature by index and id: missing or out-of-range parameters,
 * empty geometry, unclosed or self-intersecting rings, coordinates out of range, duplicate ids.
 */
export function validateRegions(input: unknown): RegionValidation {
  const top = z.object({ type: z.literal('FeatureCollection'), features: z.array(z.unknown()) }).safeParse(input);
  if (!top.success) {
    return { ok: false, issues: [{ featureIndex: null, id: null, message: 'the file must be a GeoJSON FeatureCollection with a "features" array' }] };
  }
  const issues: RegionIssue[] = [];
  const firstIndexOfId = new Map<string, number>();
  top.data.features.forEach((raw, index) => {
    const rawObj = (raw ?? {}) as { properties?: { id?: unknown } };
    const id = typeof rawObj.properties?.id === 'string' && rawObj.properties.id.trim() ? rawObj.properties.id.trim() : null;
    const where = describe(index, id);
    const feature = (raw ?? {}) as { type?: unknown; properties?: unknown; geometry?: unknown };
    const report = (message: string) => issues.push({ featureIndex: index, id, message: `${where}: ${message}` });
    if (feature.type !== 'Feature') report('type must be "Feature"');
    const properties = regionPropertiesSchema.safeParse(feature.properties);
    if (!properties.success) {
      for (const issue of properties.error.issues) {
        report(`properties${issue.path.length ? '.' + issuePath(issue.path) : ''}: ${issueMessage(issue)}`);
      }
    }
    const geometry = regionGeometrySchema.safeParse(feature.geometry);
    if (!geometry.success) {
      for (const issue of geometry.error.issues) {
        report(`geometry${issue.path.length ? '.' + issuePath(issue.path) : ''}: ${issueMessage(issue)}`);
      }
    } else {
      for (const problem of geometryProblems(geometry.data)) report(problem);
    }
    if (id !== null) {
      const first = firstIndexOfId.get(id);
      if (first !== undefined) issues.push({ featureIndex: index, id, message: `${where}: duplicate id, already used by feature ${first}` });
      else firstIndexOfId.set(id, index);
    }
  });
  if (issues.length > 0) return { ok: false, issues };
  return { ok: true, collection: regionCollectionSchema.parse(input) };
}
