/**
 * The invented market "Nordvale": regions (hydro catchments and solar zones), demo people and
 * mail subscribers. All names, outlines and plant figures are made up for the demo.
 *
 * Other code imports these constants (the local identity provider, the database seed); the
 * generator also writes them as nordvale-regions.geojson, people.json and subscribers.json.
 */
import type { Feature, FeatureCollection, Polygon, Position } from 'geojson';
import { DEMO_PEOPLE as IDP_PEOPLE } from '../../server/dev/idp/people.ts';

export type Role = 'meteorologist' | 'trader' | 'risk' | 'admin';

export interface HydroProperties {
  id: string;
  name: string;
  kind: 'hydro';
  /** gross head of the catchment's plants, m */
  headM: number;
  /** turbine and generator efficiency, 0..1 */
  efficiency: number;
  /** fraction of precipitation that becomes runoff, 0..1 */
  runoffCoefficient: number;
  /** e-folding time of the linear-reservoir recession, days */
  recessionDays: number;
}

export interface SolarProperties {
  id: string;
  name: string;
  kind: 'solar';
  /** installed capacity, MW (DC) */
  capacityMw: number;
  /** panel tilt from horizontal, degrees */
  tiltDeg: number;
  /** panel azimuth, degrees clockwise from north (180 = south) */
  azimuthDeg: number;
  /** system losses, % */
  lossesPct: number;
}

export type RegionProperties = HydroProperties | SolarProperties;

interface Outline {
  centreLat: number;
  centreLon: number;
  /** vertex distances from the centre, km, at evenly spaced bearings going anticlockwise */
  radiiKm: number[];
}

/**
 * An irregular polygon that is star-shaped around its centre: with one vertex per bearing and
 * bearings strictly increasing, the ring cannot cross itself. Anticlockwise, as RFC 7946 asks
 * for exterior rings; closed (last position = first).
 */
export function starPolygon(o: Outline): Position[] {
  const ring: Position[] = o.radiiKm.map((r, i) => {
    const a = (2 * Math.PI * i) / o.radiiKm.length;
    const dLat = (r * Math.sin(a)) / 111.2;
    const dLon = (r * Math.cos(a)) / (111.2 * Math.cos((o.centreLat * Math.PI) / 180));
    return [Math.round((o.centreLon + dLon) * 1000) / 1000, Math.round((o.centreLat + dLat) * 1000) / 1000];
  });
  ring.push([...ring[0]]);
  return ring;
}

const HYDRO: Array<HydroProperties & Outline> = [
  { id: 'hy-auldren', name: 'Auldren Highlands', kind: 'hydro', headM: 620, efficiency: 0.9, runoffCoefficient: 0.78, recessionDays: 18,
    centreLat: 64.6, centreLon: 13.2, radiiKm: [95, 70, 88, 60, 105, 80, 72, 98, 66] },
  { id: 'hy-brekkaval', name: 'Brekkaval', kind: 'hydro', headM: 410, efficiency: 0.89, runoffCoefficient: 0.72, recessionDays: 12,
    centreLat: 62.9, centreLon: 8.6, radiiKm: [70, 85, 62, 90, 74, 58, 81, 67] },
  { id: 'hy-corrisund', name: 'Corrisund Fjells', kind: 'hydro', headM: 530, efficiency: 0.91, runoffCoefficient: 0.8, recessionDays: 9,
    centreLat: 60.9, centreLon: 5.9, radiiKm: [60, 78, 55, 70, 82, 64, 58, 75, 68, 61] },
  { id: 'hy-dunholm', name: 'Dunholm Ridge', kind: 'hydro', headM: 290, efficiency: 0.88, runoffCoefficient: 0.66, recessionDays: 22,
    centreLat: 63.0, centreLon: 16.4, radiiKm: [80, 66, 92, 71, 60, 88, 75, 69] },
  { id: 'hy-eskvatn', name: 'Eskvatn', kind: 'hydro', headM: 350, efficiency: 0.9, runoffCoefficient: 0.7, recessionDays: 15,
    centreLat: 59.6, centreLon: 7.8, radiiKm: [55, 68, 50, 72, 61, 57, 66, 52, 63] },
  { id: 'hy-felgrim', name: 'Felgrim Reaches', kind: 'hydro', headM: 180, efficiency: 0.87, runoffCoefficient: 0.6, recessionDays: 28,
    centreLat: 64.9, centreLon: 20.1, radiiKm: [90, 102, 84, 96, 78, 100, 88, 93] },
];

const SOLAR: Array<SolarProperties & Outline> = [
  { id: 'so-sunmere', name: 'Sunmere Plain', kind: 'solar', capacityMw: 640, tiltDeg: 38, azimuthDeg: 180, lossesPct: 14,
    centreLat: 57.3, centreLon: 12.6, radiiKm: [60, 45, 55, 40, 62, 50, 47] },
  { id: 'so-larkfield', name: 'Larkfield South', kind: 'solar', capacityMw: 420, tiltDeg: 35, azimuthDeg: 175, lossesPct: 12,
    centreLat: 56.9, centreLon: 17.8, radiiKm: [48, 58, 42, 55, 46, 52, 60, 44] },
  { id: 'so-gildenvale', name: 'Gildenvale', kind: 'solar', capacityMw: 280, tiltDeg: 40, azimuthDeg: 190, lossesPct: 15,
    centreLat: 58.2, centreLon: 22.4, radiiKm: [52, 40, 47, 58, 43, 50] },
  { id: 'so-ambrin', name: 'Ambrin Coast', kind: 'solar', capacityMw: 350, tiltDeg: 32, azimuthDeg: 185, lossesPct: 13,
    centreLat: 56.8, centreLon: 8.9, radiiKm: [45, 55, 40, 50, 57, 42, 48, 53] },
];

function toFeature(r: RegionProperties & Outline): Feature<Polygon, RegionProperties> {
  const { centreLat, centreLon, radiiKm, ...properties } = r;
  return {
    type: 'Feature',
    id: properties.id,
    properties: properties as RegionProperties,
    geometry: { type: 'Polygon', coordinates: [starPolygon({ centreLat, centreLon, radiiKm })] },
  };
}

export const NORDVALE_REGIONS: FeatureCollection<Polygon, RegionProperties> = {
  type: 'FeatureCollection',
  features: [...HYDRO, ...SOLAR].map(toFeature),
};

export interface DemoPerson {
  id: string;
  name: string;
  email: string;
  /** groups the identity provider asserts */
  groups: string[];
  /** the roles those groups map to (DEMO_GROUP_ROLES) */
  roles: Role[];
}

/** Identity-provider group to Liftwise role: the default mapping an admin can change. */
export const DEMO_GROUP_ROLES: Record<string, Role> = {
  'lw-meteorologists': 'meteorologist',
  'lw-traders': 'trader',
  'lw-risk': 'risk',
  'lw-admins': 'admin',
};

export const DEMO_DOMAIN = 'nordvale.example';

/** The demo people are the local identity provider's (server/dev/idp/people.ts): one list for both. */
export const DEMO_PEOPLE: DemoPerson[] = IDP_PEOPLE.map((p) => ({
  id: p.email.split('@')[0],
  name: p.name,
  email: p.email,
  groups: [...p.groups],
  roles: p.groups.map((g) => DEMO_GROUP_ROLES[g]),
}));

export interface DemoSubscriber {
  email: string;
  name: string;
  /** region ids (NORDVALE_REGIONS feature ids) the subscriber wants in the morning mail */
  regions: string[];
}

export const DEMO_SUBSCRIBERS: DemoSubscriber[] = [
  { email: `desk@${DEMO_DOMAIN}`, name: 'Nordvale trading desk', regions: [...HYDRO, ...SOLAR].map((r) => r.id) },
  { email: `hydro-ops@${DEMO_DOMAIN}`, name: 'Hydro operations', regions: HYDRO.map((r) => r.id) },
  { email: `solar-ops@${DEMO_DOMAIN}`, name: 'Solar operations', regions: SOLAR.map((r) => r.id) },
  { email: 'analyst@partner.example', name: 'Partner analyst', regions: ['hy-auldren', 'hy-corrisund', 'so-sunmere'] },
];
