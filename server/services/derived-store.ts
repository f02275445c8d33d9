/**
 * Compact Float32 storage of the diagnosed omega fields, beside the uploaded file:
 *   <storage>/derived/<runId>/<member>/s<step>.omega
 * where <member> is the member number or "mean" (ensemble mean). Each file holds the four parts
 * one after the other, each nlev * nlat * nlon little-endian Float32 in the canonical [level][lat][lon]
 * order: total, vorticity part, thickness part, Q-vector form. Writes go through a temporary file
 * and a rename, so a file is either whole or absent (a job that dies mid-write leaves nothing).
 */
import fs from 'node:fs';
import path from 'node:path';

export const OMEGA_PARTS = ['total', 'vorticity', 'thickness', 'qvector'] as const;
export type OmegaPart = (typeof OMEGA_PARTS)[number];
export type MemberKey = number | 'mean';

export function omegaFilePath(storageDir: string, runId: string, member: MemberKey, step: number): string {
  if (!/^[0-9a-f-]{36}$/.test(runId)) throw new Error('invalid run id');
  return path.join(storageDir, 'derived', runId, String(member), `s${step}.omega`);
}

export async function writeOmegaParts(
  storageDir: string,
  runId: string,
  member: MemberKey,
  step: number,
  parts: Record<OmegaPart, ArrayLike<number>>,
): Promise<void> {
  const n = parts.total.length;
  const out = new Float32Array(n * OMEGA_PARTS.length);
  OMEGA_PARTS.forEach((name, p) => {
    const src = parts[name];
    if (src.length !== n) throw new Error(`omega part ${name} has ${src.length} values, expected ${n}`);
    for (let i = 0; i < n; i++) out[p * n + i] = src[i];
  });
  const file = omegaFilePath(storageDir, runId, member, step);
  await fs.promises.mkdir(path.dirname(file), { recursive: true });
  const tmp = `${file}.${process.pid}.tmp`;
  await fs.promises.writeFile(tmp, new Uint8Array(out.buffer));
  await fs.promises.rename(tmp, file);
}

export function hasOmega(storageDir: string, runId: string, member: MemberKey, step: number): boolean {
  return fs.existsSync(omegaFilePath(storageDir, runId, member, step));
}

/** One part of one step: nlev * nlat * nlon values, read by position (only that part leaves the disk). */
export async function readOmegaPart(storageDir: string, runId: string, member: MemberKey, step: number, part: OmegaPart): Promise<Float32Array> {
  const file = omegaFilePath(storageDir, runId, member, step);
  const handle = await fs.promises.open(file, 'r');
  try {
    const { size } = await handle.stat();
    const partBytes = size / OMEGA_PARTS.length;
    const buf = new Uint8Array(partBytes);
    await handle.read(buf, 0, partBytes, partBytes * OMEGA_PARTS.indexOf(part));
    return new Float32Array(buf.buffer);
  } finally {
    await handle.close();
  }
}

export async function removeDerived(storageDir: string, runId: string): Promise<void> {
  await fs.promises.rm(path.join(storageDir, 'derived', runId), { recursive: true, force: true });
}

/** Bytes of derived storage a run uses (the README states it per run). */
export async function derivedBytes(storageDir: string, runId: string): Promise<number> {
  let total = 0;
  const walk = async (dir: string): Promise<void> => {
    for (const entry of await fs.promises.readdir(dir, { withFileTypes: true }).catch(() => [])) {
      const p = path.join(dir, entry.name);
      if (entry.isDirectory()) await walk(p);
      else total += (await fs.promises.stat(p)).size;
    }
  };
  await walk(path.join(storageDir, 'derived', runId));
  return total;
}
