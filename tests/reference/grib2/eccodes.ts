/**
 * Source of the expected values in the GRIB2 reference tests: ecCodes.
 * Test helpers around the reference tool, ecCodes (Debian libeccodes-tools and
 * python3-eccodes): write GRIB2 files with ecCodes' encoder, read points back with
 * grib_get_data, and compare with our decoder's canonical fields.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { GridAxes } from '../../../server/ingest/canonical.ts';

const here = path.dirname(fileURLToPath(import.meta.url));
const SYSTEM_PYTHON = '/usr/bin/python3'; // python3-eccodes lives in Debian's interpreter, not the pyenv one on PATH

/** Why ecCodes cannot be used here, or null when grib_get_data and python3-eccodes work. */
export function eccodesMissing(): string | null {
  const tool = spawnSync('grib_get_data', ['-V'], { encoding: 'utf8' });
  if (tool.error) return 'grib_get_data not found: apt-get install -y libeccodes-tools';
  const py = spawnSync(SYSTEM_PYTHON, ['-c', 'import eccodes, numpy'], { encoding: 'utf8' });
  if (py.status !== 0) return 'python3-eccodes not importable by /usr/bin/python3: apt-get install -y python3-eccodes python3-numpy';
  return null;
}

export function tempDir(): string {
  return fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
}

export type Key = [string, string | number];
export interface MessageSpec {
  sample?: string;
  /** grid and product keys, set before the values */
  keys: Key[];
  values: number[];
  /** value standing for "missing" in `values`; turns the bitmap on */
  missing?: number;
  /** packing keys, set after the values (the values are then encoded again) */
  after?: Key[];
}

export interface FileSpec {
  out: string;
  messages: MessageSpec[];
}

function toJson(files: FileSpec[]): string {
  return JSON.stringify({
    files: files.map((f) => ({
      out: f.out,
      messages: f.messages.map((m) => ({
        ...m,
        // JSON has one number type: mark keys that ecCodes must set as doubles
        keys: m.keys.map(([k, v]) => [k, typeof v === 'number' && k.endsWith('InDegrees') ? { double: v } : v]),
      })),
    })),
  });
}

/**
 * Writes files with ecCodes' encoder in one Python process. Returns, per file, the
 * packingType ecCodes reports for each message, or the failure ("FAILED ...").
 */
export function writeGribFiles(files: FileSpec[]): { status: number | null; lines: string[]; stderr: string } {
  const r = spawnSync(SYSTEM_PYTHON, [path.join(here, 'write_grib.py')], { input: toJson(files), encoding: 'utf8' });
  return { status: r.status, lines: r.stdout.trim().split('\n'), stderr: r.stderr };
}

export function writeGrib(file: string, messages: MessageSpec[]): string[] {
  const out = execFileSync(SYSTEM_PYTHON, [path.join(here, 'write_grib.py')], { input: toJson([{ out: file, messages }]), encoding: 'utf8' });
  const lines = out.trim().split('\n');
  if (lines.some((l) => l.startsWith('FAILED'))) throw new Error(`ecCodes could not write ${file}: ${lines.join('; ')}`);
  return lines;
}

export interface RefPoint {
  lat: number;
  lon: number;
  value: number;
}

/** grib_get_data output, one array of points per field (missing printed as NaN). */
export function gribGetData(file: string): RefPoint[][] {
  const out = execFileSync('grib_get_data', ['-m', 'nan', '-F', '%.12e', '-L', '%.8f %.8f', file], { encoding: 'utf8', maxBuffer: 1 << 28 });
  const fields: RefPoint[][] = [];
  for (const line of out.split('\n')) {
    const t = line.trim();
    if (!t) continue;
    if (t.startsWith('Latitude')) {
      fields.push([]);
      continue;
    }
    const [lat, lon, value] = t.split(/\s+/);
    fields[fields.length - 1].push({ lat: Number(lat), lon: Number(lon), value: value === 'nan' ? NaN : Number(value) });
  }
  return fields;
}

/**
 * Compares a canonical [lat][lon] plane with ecCodes' points, located by their coordinates.
 * Returns the number of points compared; throws with the first mismatch.
 */
export function comparePlane(plane: Float32Array, axes: GridAxes, ref: RefPoint[], relTol = 2e-7, absTol = 1e-9): number {
  const { lat, lon } = axes;
  const dlat = lat.length > 1 ? lat[1] - lat[0] : 1;
  const dlon = lon.length > 1 ? lon[1] - lon[0] : 1;
  if (ref.length !== lat.length * lon.length) throw new Error(`ecCodes gives ${ref.length} points, our grid has ${lat.length * lon.length}`);
  const seen = new Uint8Array(plane.length);
  for (const p of ref) {
    const j = Math.round((p.lat - lat[0]) / dlat);
    const i = Math.round((((p.lon - lon[0]) % 360) + 360) % 360 / dlon);
    if (j < 0 || j >= lat.length || i < 0 || i >= lon.length || Math.abs(lat[j] - p.lat) > 1e-5) {
      throw new Error(`ecCodes point (${p.lat}, ${p.lon}) is not on our axes`);
    }
    const k = j * lon.length + i;
    seen[k]++;
    const ours = plane[k];
    if (Number.isNaN(p.value) || Number.isNaN(ours)) {
      if (!(Number.isNaN(p.value) && Number.isNaN(ours))) throw new Error(`(${p.lat}, ${p.lon}): ours ${ours}, ecCodes ${p.value} (missing mismatch)`);
      continue;
    }
    if (Math.abs(ours - p.value) > relTol * Math.abs(p.value) + absTol) {
      throw new Error(`(${p.lat}, ${p.lon}): ours ${ours}, ecCodes ${p.value}`);
    }
  }
  if (seen.some((s) => s !== 1)) throw new Error('ecCodes points do not cover our grid one to one');
  return ref.length;
}
