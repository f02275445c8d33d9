/** The admin feature's HTTP layer: role mapping, regions, calibration sets. */
import { queryOptions } from '@tanstack/react-query';
import { roleMappingsSchema, type RoleMapping } from '@shared/api/auth.ts';
import type { CalibrationParameters } from '@shared/calibration.ts';
import type { RegionGeometry, RegionIssue, RegionProperties } from '@shared/regions.ts';
import { ApiError, apiFetch } from '@/lib/api.ts';

export const adminKeys = {
  all: ['admin'] as const,
  roleMappings: () => [...adminKeys.all, 'role-mappings'] as const,
};

export const roleMappingsQuery = queryOptions({
  queryKey: adminKeys.roleMappings(),
  queryFn: async () => roleMappingsSchema.parse(await apiFetch('/api/admin/role-mappings')).mappings,
});

export async function saveRoleMappings(mappings: RoleMapping[]): Promise<RoleMapping[]> {
  const body = await apiFetch('/api/admin/role-mappings', { method: 'PUT', body: JSON.stringify({ mappings }) });
  return roleMappingsSchema.parse(body).mappings;
}

// ---------------------------------------------------------------------------------------------
// Regions (GET/PUT /api/regions) and calibration sets (GET/POST /api/calibration-sets).
// ---------------------------------------------------------------------------------------------

export interface RegionRow {
  id: string;
  name: string;
  kind: 'hydro' | 'solar';
  properties: RegionProperties;
  geometry: RegionGeometry;
  /** km2 */
  areaKm2: number;
}

export interface CalibrationSetRow {
  version: number;
  name: string;
  note: string | null;
  basedOn: number | null;
  parameters: CalibrationParameters;
  createdBy: string | null;
  createdAt: string;
}

export const regionKeys = { all: ['regions'] as const };
export const calibrationKeys = { all: ['calibration-sets'] as const };

export const regionsQuery = queryOptions({
  queryKey: regionKeys.all,
  queryFn: async () => (await apiFetch<{ regions: RegionRow[] }>('/api/regions')).regions,
});

export const calibrationSetsQuery = queryOptions({
  queryKey: calibrationKeys.all,
  queryFn: async () => (await apiFetch<{ sets: CalibrationSetRow[] }>('/api/calibration-sets')).sets,
});

/** A refusal of an upload, with the server's per-feature problems when it gave them. */
export class RegionsRefused extends Error {
  constructor(message: string, readonly issues: RegionIssue[]) {
    super(message);
    this.name = 'RegionsRefused';
  }
}

export async function saveRegions(collection: unknown): Promise<RegionRow[]> {
  try {
    return (await apiFetch<{ regions: RegionRow[] }>('/api/regions', { method: 'PUT', body: JSON.stringify(collection) })).regions;
  } catch (err) {
    if (err instanceof ApiError && err.status === 422) {
      const issues = ((err.details as { issues?: RegionIssue[] } | undefined)?.issues) ?? [];
      throw new RegionsRefused(err.message, issues);
    }
    throw err;
  }
}

export interface NewCalibrationSetInput {
  basedOn: number;
  name?: string;
  note?: string;
  parameters: Partial<CalibrationParameters>;
}

export async function createCalibrationSet(input: NewCalibrationSetInput): Promise<CalibrationSetRow> {
  return (await apiFetch<{ set: CalibrationSetRow }>('/api/calibration-sets', { method: 'POST', body: JSON.stringify(input) })).set;
}
