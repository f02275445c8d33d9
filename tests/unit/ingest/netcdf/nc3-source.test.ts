// ncdump -p 9,17 prints floats to 9 significant digits, doubles to 17: compare to 1e-7 relative.
/**
 * The classic-format slab reader on its own: whole variables and random hyperslabs compared with
 * the stored values printed by ncdump (reference tool: netCDF ncdump), including the record
 * layout where a lone record variable is packed without padding between records.
 */
import fs from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { Nc3Source } from '../../../../server/ingest/netcdf/nc3.ts';
import { ncdumpValues, seeded, tempDir, writeNetcdf, type DatasetSpec, type NcKind } from './cdl.ts';
import { smallRun } from './fixtures.ts';

const dir = tempDir();
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

/** row-major slice of a flat array */
function slice(values: (number | null)[], shape: number[], start: number[], count: number[]): (number | null)[] {
  const out: (number | null)[] = [];
  const idx = new Array<number>(shape.length).fill(0);
  const total = count.reduce((a, b) => a * b, 1);
  for (let n = 0; n < total; n++) {
    let flat = 0;
    for (let d = 0; d < shape.length; d++) flat = flat * shape[d] + start[d] + idx[d];
    out.push(values[flat]);
    for (let d = shape.length - 1; d >= 0; d--) {
      if (++idx[d] < count[d]) break;
      idx[d] = 0;
    }
  }
  return out;
}

const loneRecord: DatasetSpec = {
  dims: { time: { unlimited: 3 }, x: 3 },
  vars: [
    { name: 'b', type: 'byte', dims: ['x'], values: [1, -2, 3] },
    { name: 's', type: 'short', dims: ['time', 'x'], values: [1, 2, 3, 4, 5, 6, 7, 8, 9] },
  ],
};

describe.each(['nc3', 'nc6'] as NcKind[])('Nc3Source (%s)', (kind) => {
  it('reads every variable whole as ncdump prints it', async () => {
    for (const [label, spec] of [['run', smallRun()], ['lone', loneRecord]] as const) {
      const file = writeNetcdf(spec, dir, `${label}-${kind}`, kind);
      const src = await Nc3Source.open(file);
      try {
        for (const v of src.variables.values()) {
          const ours = Array.from(await src.read(v, v.shape.map(() => 0), v.shape.slice()), Number);
          const want = ncdumpValues(file, v.name);
          expect(ours.length, v.name).toBe(want.length);
          ours.forEach((x, i) => expect(Math.abs(x - (want[i] as number)), `${v.name}[${i}]`).toBeLessThanOrEqual(1e-7 * Math.max(1, Math.abs(x))));
        }
      } finally {
        await src.close();
      }
    }
  });

  it('reads 60 random hyperslabs of record and non-record variables like ncdump slices', async () => {
    const file = writeNetcdf(smallRun(), dir, `slabs-${kind}`, kind);
    const src = await Nc3Source.open(file);
    const rand = seeded(31);
    try {
      for (const name of ['gh', 'u', 'lon']) {
        const v = src.variables.get(name)!;
        const all = ncdumpValues(file, name);
        for (let trial = 0; trial < 20; trial++) {
          const start = v.shape.map((n) => Math.floor(rand() * n));
          const count = v.shape.map((n, d) => 1 + Math.floor(rand() * (n - start[d])));
          const ours = Array.from(await src.read(v, start, count), Number);
          const want = slice(all, v.shape, start, count) as number[];
          expect(ours.length).toBe(want.length);
          ours.forEach((x, i) => expect(Math.abs(x - want[i]), `${name} start ${start} count ${count} [${i}]`).toBeLessThanOrEqual(1e-7 * Math.max(1, Math.abs(x))));
        }
      }
      await expect(src.read(src.variables.get('gh')!, [0, 0, 0, 0, 0], [3, 1, 1, 1, 1])).rejects.toThrow(/outside dimension time/);
    } finally {
      await src.close();
    }
  });

  it('a streaming file (numrecs 0xFFFFFFFF) takes its record count from the file size', async () => {
    const file = writeNetcdf(smallRun(), dir, `stream-${kind}`, kind);
    const bytes = fs.readFileSync(file);
    bytes.writeUInt32BE(0xffffffff, 4);
    fs.writeFileSync(file, bytes);
    const src = await Nc3Source.open(file);
    try {
      expect(src.dims.get('time')).toBe(2);
      const t = src.variables.get('t')!;
      expect(t.shape).toEqual([2, 2, 3, 3, 4]);
      const last = Array.from(await src.read(t, [1, 1, 2, 2, 3], [1, 1, 1, 1, 1]), Number);
      expect(last[0]).toBeCloseTo(ncdumpValues(writeNetcdf(smallRun(), dir, `stream-ref-${kind}`, kind), 't').at(-1) as number, 4);
    } finally {
      await src.close();
    }
  });
});
