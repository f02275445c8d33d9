/**
 * The active region set (hydro catchments and solar zones): replaced as a whole by an admin's
 * GeoJSON upload, read by everyone and by the signals deriver.
 *
 * Rows are never deleted: signal rows of earlier runs point at them. A replacement marks the
 * regions left out of the new file inactive and upserts the others as active, in one
 * transaction with its audit row.
 */
import { asc, eq, notInArray } from 'drizzle-orm';
import { validateRegions, type RegionGeometry, type RegionProperties } from '@shared/regions.ts';
import type { Database } from '../db/client.ts';
import { regions } from '../db/schema.ts';
import { unprocessable } from '../errors.ts';
import { EARTH_RADIUS_M } from '../science/regions.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';

export interface RegionView {
  id: string;
  name: string;
  kind: 'hydro' | 'solar';
  properties: RegionProperties;
  geometry: RegionGeometry;
  /** area on the sphere, km2 */
  areaKm2: number;
}

const RAD = Math.PI / 180;

/**
 * Area of one ring on the sphere, m2 (absolute value), by the line-integral formula
 * A = R^2 / 2 * sum (lon2 - lon1)(sin lat1 + sin lat2) (Chamberlain and Duquette 2007,
 * "Some algorithms for polygons on a sphere", JPL).
 */
export function ringAreaM2(ring: number[][]): number {
  let sum = 0;
  for (let i = 0; i + 1 < ring.length; i++) {
    const [lon1, lat1] = ring[i];
    const [lon2, lat2] = ring[i + 1];
    sum += (lon2 - lon1) * RAD * (Math.sin(lat1 * RAD) + Math.sin(lat2 * RAD));
  }
  return Math.abs((sum * EARTH_RADIUS_M * EARTH_RADIUS_M) / 2);
}

/** Polygon area: outer ring minus holes, summed over the polygons, km2. */
export function geometryAreaKm2(geometry: RegionGeometry): number {
  const polygons = geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates;
  let m2 = 0;
  for (const poly of polygons) poly.forEach((ring, k) => { m2 += (k === 0 ? 1 : -1) * ringAreaM2(ring); });
  return m2 / 1e6;
}

/** Validates a parsed GeoJSON value, throwing a 422 AppError with one message per problem. */
export function parseRegionUpload(body: unknown): { id: string; properties: RegionProperties; geometry: RegionGeometry }[] {
  const result = validateRegions(body);
  if (!result.ok) {
    throw unprocessable(`The regions file has ${result.issues.length} problem(s); nothing was changed.`, { issues: result.issues });
  }
  return result.collection.features.map((f) => ({ id: f.properties.id.trim(), properties: f.properties, geometry: f.geometry }));
}

function view(row: typeof regions.$inferSelect): RegionView {
  return {
    id: row.id,
    name: row.name,
    kind: row.kind as RegionView['kind'],
    properties: row.properties as RegionProperties,
    geometry: row.geometry as RegionGeometry,
    areaKm2: row.areaKm2,
  };
}

export async function listActiveRegions(db: Database): Promise<RegionView[]> {
  const rows = await db.select().from(regions).where(eq(regions.active, true)).orderBy(asc(regions.kind), asc(regions.id));
  return rows.map(view);
}

/** Replaces the active region set in one transaction with its audit row. */
export async function replaceRegions(
  db: Database, body: unknown, userId: string | null, audit: Omit<AuditEventInput, 'action' | 'detail'>,
): Promise<RegionView[]> {
  const features = parseRegionUpload(body);
  const ids = features.map((f) => f.id);
  await db.transaction(async (tx) => {
    const before = await tx.select({ id: regions.id }).from(regions).where(eq(regions.active, true));
    const deactivate = ids.length ? notInArray(regions.id, ids) : undefined;
    await tx.update(regions).set({ active: false, updatedBy: userId, updatedAt: new Date() }).where(deactivate);
    for (const f of features) {
      const values = {
        id: f.id,
        name: f.properties.name.trim(),
        kind: f.properties.kind,
        properties: { ...f.properties, id: f.id },
        geometry: f.geometry,
        areaKm2: geometryAreaKm2(f.geometry),
        active: true,
        updatedBy: userId,
        updatedAt: new Date(),
      };
      await tx.insert(regions).values(values).onConflictDoUpdate({ target: regions.id, set: values });
    }
    const previous = new Set(before.map((r) => r.id));
    await recordAudit(tx, {
      ...audit,
      action: 'regions.replace',
      objectType: 'region_set',
      detail: {
        count: ids.length,
        added: ids.filter((id) => !previous.has(id)),
        removed: [...previous].filter((id) => !ids.includes(id)),
        kept: ids.filter((id) => previous.has(id)),
      },
    });
  });
  return listActiveRegions(db);
}
