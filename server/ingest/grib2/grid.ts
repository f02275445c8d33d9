/**
 * From grid template 3.0 to the canonical axes (lat south->north, lon west->east starting in
 * [-180, 180)), and the reordering of a field from the file's scanning mode (Flag table 3.4,
 * octet 72: bit 1 i negative, bit 2 j positive, bit 3 j consecutive, bit 4 boustrophedon).
 */
import { IngestError } from '../canonical.ts';
import type { GridDef } from './templates.ts';

export interface CanonicalGrid {
  lat: Float64Array;
  lon: Float64Array;
}

const SCAN_I_NEGATIVE = 0x80;
const SCAN_J_POSITIVE = 0x40;
const SCAN_J_CONSECUTIVE = 0x20;
const SCAN_BOUSTROPHEDON = 0x10;

const clean = (x: number) => Math.round(x * 1e9) / 1e9;
const mod360 = (x: number) => ((x % 360) + 360) % 360;

export function canonicalAxes(g: GridDef): CanonicalGrid {
  const where = 'grid template 3.0';
  const iNeg = (g.scanMode & SCAN_I_NEGATIVE) !== 0;
  // span from the first to the last point along i, in the scanning direction
  const span = iNeg ? mod360(g.lo1 - g.lo2) : mod360(g.lo2 - g.lo1);
  const dlon = g.ni > 1 ? span / (g.ni - 1) : Number.isFinite(g.di) ? g.di : 0;
  if (g.ni > 1 && !(dlon > 0)) throw new IngestError(where, `first and last longitudes (${g.lo1}, ${g.lo2}) give no spacing for ${g.ni} points`);
  if (dlon * (g.ni - 1) > 360 + 1e-6) throw new IngestError(where, 'longitudes span more than 360 degrees');
  let west = iNeg ? g.lo1 - span : g.lo1;
  west = mod360(west + 180) - 180;
  const lon = new Float64Array(g.ni);
  for (let i = 0; i < g.ni; i++) lon[i] = clean(west + i * dlon);

  if (Math.abs(g.la1) > 90 + 1e-6 || Math.abs(g.la2) > 90 + 1e-6) {
    throw new IngestError(where, `latitudes ${g.la1} and ${g.la2} lie outside -90..90`);
  }
  const south = Math.min(g.la1, g.la2);
  const dlat = g.nj > 1 ? Math.abs(g.la2 - g.la1) / (g.nj - 1) : 0;
  if (g.nj > 1 && !(dlat > 0)) throw new IngestError(where, `first and last latitudes are equal for ${g.nj} rows`);
  const jPos = (g.scanMode & SCAN_J_POSITIVE) !== 0;
  if (g.nj > 1 && (jPos ? g.la2 < g.la1 : g.la2 > g.la1)) {
    throw new IngestError(where, `scanning mode says j ${jPos ? 'north' : 'south'}ward but La1 = ${g.la1}, La2 = ${g.la2}`);
  }
  const lat = new Float64Array(g.nj);
  for (let j = 0; j < g.nj; j++) lat[j] = clean(south + j * dlat);
  return { lat, lon };
}

export function sameGrid(a: CanonicalGrid, b: CanonicalGrid): boolean {
  if (a.lat.length !== b.lat.length || a.lon.length !== b.lon.length) return false;
  const eps = 1e-5;
  const close = (x: Float64Array, y: Float64Array) => Math.abs(x[0] - y[0]) < eps && Math.abs(x[x.length - 1] - y[y.length - 1]) < eps;
  return close(a.lat, b.lat) && close(a.lon, b.lon);
}

/** Reorders `scan` (the file's point order) into canonical [lat][lon] order. */
export function toCanonical(scan: Float32Array, g: GridDef): Float32Array {
  const { ni, nj, scanMode } = g;
  const out = new Float32Array(ni * nj);
  const iNeg = (scanMode & SCAN_I_NEGATIVE) !== 0;
  const jPos = (scanMode & SCAN_J_POSITIVE) !== 0;
  const jCons = (scanMode & SCAN_J_CONSECUTIVE) !== 0;
  const boustro = (scanMode & SCAN_BOUSTROPHEDON) !== 0;
  if (!jCons && !boustro && !iNeg) {
    // the common cases: whole rows copy over, flipped in j when the file runs north to south
    for (let r = 0; r < nj; r++) {
      const j = jPos ? r : nj - 1 - r;
      out.set(scan.subarray(r * ni, (r + 1) * ni), j * ni);
    }
    return out;
  }
  let n = 0;
  if (!jCons) {
    for (let r = 0; r < nj; r++) {
      const j = jPos ? r : nj - 1 - r;
      const rev = iNeg !== (boustro && (r & 1) === 1);
      const base = j * ni;
      for (let c = 0; c < ni; c++) out[base + (rev ? ni - 1 - c : c)] = scan[n++];
    }
  } else {
    for (let c = 0; c < ni; c++) {
      const i = iNeg ? ni - 1 - c : c;
      const rev = !jPos !== (boustro && (c & 1) === 1);
      for (let r = 0; r < nj; r++) out[(rev ? nj - 1 - r : r) * ni + i] = scan[n++];
    }
  }
  return out;
}
