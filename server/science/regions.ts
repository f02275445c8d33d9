/**
 * Regions on the grid (SCIENCE.md section 6): area weights of grid cells per catchment or solar
 * zone, the area-weighted regional mean, and each region's model parameters with the
 * calibration set filling the optional ones. The GeoJSON contract itself is shared/regions.ts.
 */
import type { CalibrationParameters } from '@shared/calibration.ts';
import type { HydroRegionProperties, RegionGeometry, SolarRegionProperties } from '@shared/regions.ts';
import type { CatchmentParameters } from './hydro.ts';
import type { SolarZoneParameters } from './solar.ts';

export { validateRegions } from '@shared/regions.ts';

/** Earth radius, m (SCIENCE.md section 2: a = 6.371e6 m, the mean radius). */
export const EARTH_RADIUS_M = 6.371e6;
const RAD = Math.PI / 180;

export class RegionGridError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RegionGridError';
  }
}

export interface RegionWeights {
  regionId: string;
  /** flat [lat][lon] indices (j * nlon + i) of the cells touched by the region */
  cells: Int32Array;
  /** area of each listed cell inside the region, m2 (cell area x inside fraction) */
  areaM2: Float64Array;
  /** sum of areaM2: the region's area as the grid sees it, m2 */
  totalAreaM2: number;
  /** centre of the inside sub-sample points, degrees (for the solar position of a zone) */
  centroidLatDeg: number;
  centroidLonDeg: number;
}

/** Cell edges from cell centres: midpoints inside, half a spacing outside the end centres. */
export function cellEdges(centres: ArrayLike<number>, clampTo?: [number, number]): Float64Array {
  const n = centres.length;
  if (n < 2) throw new RegionGridError(`a grid axis needs at least 2 points, got ${n}`);
  for (let i = 1; i < n; i++) {
    if (!(centres[i] > centres[i - 1])) throw new RegionGridError(`grid axis must ascend (canonical grid), but point ${i} is ${centres[i]} after ${centres[i - 1]}`);
  }
  const edges = new Float64Array(n + 1);
  for (let i = 1; i < n; i++) edges[i] = 0.5 * (centres[i - 1] + centres[i]);
  edges[0] = centres[0] - 0.5 * (centres[1] - centres[0]);
  edges[n] = centres[n - 1] + 0.5 * (centres[n - 1] - centres[n - 2]);
  if (clampTo) for (let i = 0; i <= n; i++) edges[i] = Math.min(clampTo[1], Math.max(clampTo[0], edges[i]));
  return edges;
}

/**
 * Exact area of a latitude-longitude cell on the sphere, m2:
 * R^2 dlon (sin lat2 - sin lat1), angles in degrees (Archimedes' hat-box theorem).
 */
export function sphericalCellArea(lat1Deg: number, lat2Deg: number, dlonDeg: number, radiusM = EARTH_RADIUS_M): number {
  return radiusM * radiusM * Math.abs(dlonDeg * RAD) * Math.abs(Math.sin(lat2Deg * RAD) - Math.sin(lat1Deg * RAD));
}

function polygonsOf(geometry: RegionGeometry): number[][][][] {
  return geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates;
}

/** Even-odd point-in-polygon test over all rings of one polygon (holes included), lon/lat degrees. */
export function pointInPolygon(lon: number, lat: number, polygon: number[][][]): boolean {
  let inside = false;
  for (const ring of polygon) {
    for (let a = 0, b = ring.length - 1; a < ring.length; b = a++) {
      const [xa, ya] = ring[a];
      const [xb, yb] = ring[b];
      if ((ya > lat) !== (yb > lat) && lon < ((xb - xa) * (lat - ya)) / (yb - ya) + xa) inside = !inside;
    }
  }
  return inside;
}

function normaliseLon(lon: number): number {
  return ((((lon + 180) % 360) + 360) % 360) - 180;
}

function lonInsideGrid(lon: number, west: number, east: number): boolean {
  if (east - west >= 360) return true;
  return [lon - 360, lon, lon + 360].some((l) => l >= west && l <= east);
}

/**
 * Grid-cell weights of one region: for each cell, its exact spherical area times the fraction
 * of the cell inside the polygon, the fraction estimated on samples x samples points placed at
 * the centres of equal-area sub-cells (equal steps in longitude and in sin(latitude)), so each
 * sample stands for the same area. A region with any vertex outside the grid is refused.
 */
export function regionWeights(
  regionId: string, geometry: RegionGeometry, latCentres: ArrayLike<number>, lonCentres: ArrayLike<number>, samples = 5,
): RegionWeights {
  const latEdges = cellEdges(latCentres, [-90, 90]);
  const lonEdges = cellEdges(lonCentres);
  const nlat = latCentres.length;
  const nlon = lonCentres.length;
  const [south, north, west, east] = [latEdges[0], latEdges[nlat], lonEdges[0], lonEdges[nlon]];
  const polygons = polygonsOf(geometry);
  let minLat = Infinity, maxLat = -Infinity, minLon = Infinity, maxLon = -Infinity;
  for (const poly of polygons) for (const [lon, lat] of poly[0] ?? []) {
    if (lat < south || lat > north || !lonInsideGrid(lon, west, east)) {
      throw new RegionGridError(`region "${regionId}" lies outside the grid: vertex [${lon}, ${lat}] is beyond the grid's extent (lat ${south.toFixed(2)}..${north.toFixed(2)}, lon ${west.toFixed(2)}..${east.toFixed(2)})`);
    }
    minLat = Math.min(minLat, lat); maxLat = Math.max(maxLat, lat);
    minLon = Math.min(minLon, lon); maxLon = Math.max(maxLon, lon);
  }
  if (!Number.isFinite(minLat)) throw new RegionGridError(`region "${regionId}" has an empty geometry`);

  const cells: number[] = [];
  const areas: number[] = [];
  let cx = 0, cy = 0, cz = 0;
  for (let j = 0; j < nlat; j++) {
    const lat1 = latEdges[j], lat2 = latEdges[j + 1];
    if (Math.max(lat1, lat2) < minLat || Math.min(lat1, lat2) > maxLat) continue;
    const s1 = Math.sin(lat1 * RAD), s2 = Math.sin(lat2 * RAD);
    for (let i = 0; i < nlon; i++) {
      const lon1 = lonEdges[i], lon2 = lonEdges[i + 1];
      const centre = normaliseLon(0.5 * (lon1 + lon2));
      const half = 0.5 * Math.abs(lon2 - lon1);
      if (centre + half < minLon || centre - half > maxLon) continue;
      let inside = 0;
      for (let a = 0; a < samples; a++) {
        const lat = Math.asin(s1 + ((a + 0.5) / samples) * (s2 - s1)) / RAD;
        for (let b = 0; b < samples; b++) {
          const lon = normaliseLon(lon1 + ((b + 0.5) / samples) * (lon2 - lon1));
          if (!polygons.some((poly) => pointInPolygon(lon, lat, poly))) continue;
          inside++;
          cx += Math.cos(lat * RAD) * Math.cos(lon * RAD);
          cy += Math.cos(lat * RAD) * Math.sin(lon * RAD);
          cz += Math.sin(lat * RAD);
        }
      }
      if (inside === 0) continue;
      cells.push(j * nlon + i);
      areas.push(sphericalCellArea(lat1, lat2, lon2 - lon1) * (inside / (samples * samples)));
    }
  }
  if (cells.length === 0) {
    throw new RegionGridError(`region "${regionId}" is smaller than the grid can see: no sub-sample point of any cell falls inside it`);
  }
  const totalAreaM2 = areas.reduce((s, a) => s + a, 0);
  return {
    regionId, cells: Int32Array.from(cells), areaM2: Float64Array.from(areas), totalAreaM2,
    centroidLatDeg: Math.atan2(cz, Math.hypot(cx, cy)) / RAD,
    centroidLonDeg: Math.atan2(cy, cx) / RAD,
  };
}

/**
 * Area-weighted regional mean of a [lat][lon] field: sum(w f) / sum(w) over the region's cells,
 * leaving out NaN cells (and renormalising); NaN when every cell is NaN.
 */
export function regionalMean(field: ArrayLike<number>, weights: RegionWeights): number {
  let sum = 0, wsum = 0;
  for (let n = 0; n < weights.cells.length; n++) {
    const v = field[weights.cells[n]];
    if (Number.isNaN(v)) continue;
    sum += v * weights.areaM2[n];
    wsum += weights.areaM2[n];
  }
  return wsum > 0 ? sum / wsum : Number.NaN;
}

/** A catchment's model parameters; optional contract values fall back to the calibration set. */
export function catchmentParameters(props: HydroRegionProperties, weights: RegionWeights, cal: CalibrationParameters): CatchmentParameters {
  return {
    areaM2: weights.totalAreaM2,
    headM: props.headM,
    efficiency: props.efficiency,
    runoffCoefficient: props.runoffCoefficient,
    recessionDays: props.recessionDays,
    snowDdfMmPerDayK: props.snowDdfMmPerDayK ?? cal.snowDdfMmPerDayK,
    meltThresholdC: props.meltThresholdC ?? cal.meltThresholdC,
  };
}

/** A solar zone's model parameters; optional contract values fall back to the calibration set. */
export function solarZoneParameters(props: SolarRegionProperties, cal: CalibrationParameters): SolarZoneParameters {
  return {
    capacityMw: props.capacityMw,
    tiltDeg: props.tiltDeg,
    azimuthDeg: props.azimuthDeg,
    lossesPct: props.lossesPct,
    gammaPerK: props.gammaPerK ?? cal.gammaPerK,
    albedo: props.albedo ?? cal.albedo,
    noctC: props.noctC ?? cal.noctC,
    solarConstantWm2: cal.solarConstantWm2,
    cloudAttenuationA: cal.cloudAttenuationA,
    cloudAttenuationB: cal.cloudAttenuationB,
  };
}
