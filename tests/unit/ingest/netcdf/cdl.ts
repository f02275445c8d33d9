/**
 * Test helper: describes a small NetCDF dataset, writes it as CDL text and turns it into a file
 * with the netCDF tools (ncgen, nccopy from Debian's netcdf-bin). Used by the unit tests (to get
 * valid files to damage) and by the reference tests (to compare with ncdump).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

/** a raw CDL literal (typed number such as `-32767s`, `0.5f`) */
export interface Raw {
  cdl: string;
}
export type AttrSpec = string | number | Raw;

export interface VarSpec {
  name: string;
  type: 'byte' | 'short' | 'int' | 'float' | 'double';
  dims: string[];
  attrs?: Record<string, AttrSpec>;
  /** row-major over dims; null is written as the fill value `_` */
  values?: (number | null)[];
}

export interface DatasetSpec {
  /** dimension name -> length; 'unlimited' dimensions get their length from the data */
  dims: Record<string, number | { unlimited: number }>;
  vars: VarSpec[];
  global?: Record<string, AttrSpec>;
}

export const raw = (cdl: string): Raw => ({ cdl });

function attrText(value: AttrSpec): string {
  if (typeof value === 'string') return JSON.stringify(value);
  if (typeof value === 'number') return String(value);
  return value.cdl;
}

export function dimLength(spec: DatasetSpec, dim: string): number {
  const d = spec.dims[dim];
  return typeof d === 'number' ? d : d.unlimited;
}

export function toCdl(spec: DatasetSpec, name = 'liftwise_test'): string {
  const lines = [`netcdf ${name} {`, 'dimensions:'];
  for (const [dim, d] of Object.entries(spec.dims)) lines.push(`  ${dim} = ${typeof d === 'number' ? d : 'UNLIMITED'} ;`);
  lines.push('variables:');
  for (const v of spec.vars) {
    lines.push(v.dims.length ? `  ${v.type} ${v.name}(${v.dims.join(', ')}) ;` : `  ${v.type} ${v.name} ;`);
    for (const [a, value] of Object.entries(v.attrs ?? {})) lines.push(`    ${v.name}:${a} = ${attrText(value)} ;`);
  }
  for (const [a, value] of Object.entries(spec.global ?? {})) lines.push(`  :${a} = ${attrText(value)} ;`);
  lines.push('data:');
  for (const v of spec.vars) {
    if (!v.values) continue;
    const text = v.values.map((x) => (x === null ? '_' : v.type === 'float' || v.type === 'double' ? x.toPrecision(17) : String(Math.round(x))));
    lines.push(`  ${v.name} = ${text.join(', ')} ;`);
  }
  lines.push('}');
  return lines.join('\n');
}

export function tempDir(): string {
  return fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
}

export type NcKind = 'nc3' | 'nc6' | 'nc4' | 'nc4-deflate';

function tool(cmd: string, args: string[]): string {
  try {
    return execFileSync(cmd, args, { encoding: 'utf8', maxBuffer: 256 << 20, stdio: ['ignore', 'pipe', 'pipe'] });
  } catch (e) {
    const err = e as { code?: string; stderr?: string };
    if (err.code === 'ENOENT') throw new Error(`${cmd} is not installed: apt-get install -y netcdf-bin`);
    throw new Error(`${cmd} ${args.join(' ')} failed: ${err.stderr ?? String(e)}`);
  }
}

/** Writes the dataset with ncgen (-k nc3: CDF-1, nc6: CDF-2, nc4) or ncgen + `nccopy -d 5 -k nc4`. */
export function writeNetcdf(spec: DatasetSpec, dir: string, base: string, kind: NcKind): string {
  const cdl = path.join(dir, `${base}.cdl`);
  fs.writeFileSync(cdl, toCdl(spec));
  const out = path.join(dir, `${base}.${kind}.nc`);
  if (kind === 'nc4-deflate') {
    const plain = path.join(dir, `${base}.plain.nc`);
    tool('ncgen', ['-k', 'nc3', '-o', plain, cdl]);
    tool('nccopy', ['-d', '5', '-k', 'nc4', plain, out]);
  } else {
    tool('ncgen', ['-k', kind, '-o', out, cdl]);
  }
  return out;
}

/** The values of one variable as printed by `ncdump -v VAR -p 9,17`; `_` (fill) becomes null. */
export function ncdumpValues(file: string, variable: string): (number | null)[] {
  const text = tool('ncdump', ['-v', variable, '-p', '9,17', file]);
  const data = text.slice(text.indexOf('\ndata:'));
  const m = new RegExp(`\\n\\s*${variable} =([^;]*);`).exec(data);
  if (!m) throw new Error(`ncdump printed no data for ${variable}`);
  return m[1]
    .split(/[,\s]+/)
    .filter(Boolean)
    .map((s) => (s === '_' ? null : Number(s.replace(/(\d)[bsfdlLuU]+$/, '$1'))));
}

/** Small seeded generator (Park-Miller), so every run writes the same files. */
export function seeded(seed: number): () => number {
  let s = seed % 2147483647 || 1;
  return () => {
    s = (s * 48271) % 2147483647;
    return s / 2147483647;
  };
}
