/**
 * Malformed-input corpus for the GRIB2 reader, generated here from a hand-built valid file
 * (build.ts). Every damaged file must give an IngestError (or, for harmless byte flips, a
 * valid decode): never another exception type, never a hang.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { IngestError, openRun, type CanonicalVariable } from '../../../../server/ingest/index.ts';
import { openGrib2 } from '../../../../server/ingest/grib2/index.ts';
import { encodeComplex, encodePng } from '../../../reference/grib2/craft.ts';
import { NI, NJ, fieldSections, message, ramp, sec1, sec3, sec4, sec5, sec6, sec7, sectionBoundaries, validFile, type BuiltField } from './build.ts';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));
let counter = 0;
function write(bytes: Uint8Array | string, ext = '.grib2'): string {
  const p = path.join(dir, `f${counter++}${ext}`);
  fs.writeFileSync(p, bytes);
  return p;
}

type Outcome = { ok: true } | { ok: false; error: unknown };

/** Opens and decodes everything, bounded in time; resolves with what happened. */
async function exercise(file: string, ms = 2000): Promise<Outcome> {
  const work = (async (): Promise<Outcome> => {
    try {
      const reader = await openRun(file);
      try {
        for (const v of reader.info.variables) {
          for (const m of reader.info.members) for (const s of reader.info.steps) await reader.readField(v.name as CanonicalVariable, m, s);
        }
      } finally {
        await reader.close();
      }
      return { ok: true };
    } catch (error) {
      return { ok: false, error };
    }
  })();
  const timer = new Promise<Outcome>((_, reject) => setTimeout(() => reject(new Error(`hang: ${file} took more than ${ms} ms`)), ms));
  return Promise.race([work, timer]);
}

async function expectIngestError(bytes: Uint8Array | string, pattern?: RegExp, ext = '.grib2'): Promise<string> {
  const out = await exercise(write(bytes, ext));
  if (out.ok) throw new Error('expected an IngestError, the file was accepted');
  if (!(out.error instanceof IngestError)) throw new Error(`expected an IngestError, got ${String(out.error)}`);
  if (pattern) expect(out.error.message).toMatch(pattern);
  return out.error.message;
}

const VALID = validFile();

function patch(bytes: Uint8Array, at: number, values: number[]): Uint8Array {
  const out = bytes.slice();
  out.set(values, at);
  return out;
}
const be32 = (v: number) => [(v >>> 24) & 0xff, (v >>> 16) & 0xff, (v >>> 8) & 0xff, v & 0xff];

describe('GRIB2 malformed-input corpus', () => {
  it('the undamaged corpus file decodes (so the damage below is what fails)', async () => {
    const reader = await openGrib2(write(VALID));
    expect(reader.info.variables.map((v) => v.name)).toEqual(['z', 't', 'tcc']);
    const t = await reader.readField('t', 0, 0);
    // canonical: south to north, so the file's first row (60 N) is the last canonical row
    expect(t[(NJ - 1) * NI + 0]).toBe(200 + ramp(1)[0]);
    expect(Number.isNaN(t[NI * NJ + (NJ - 1) * NI + 1])).toBe(true); // 500 hPa bitmap hole at scan index 1
    await reader.close();
  });

  it('empty file', async () => {
    await expectIngestError(new Uint8Array(0), /empty/);
    await expect(openGrib2(write(new Uint8Array(0)))).rejects.toBeInstanceOf(IngestError);
  });

  it('a text file named .grib2', async () => {
    await expectIngestError('this is not a GRIB file\nat all\n', /not a GRIB2, NetCDF-3 or NetCDF-4 file/);
    await expect(openGrib2(write('GRIB? no, just text pretending'))).rejects.toBeInstanceOf(IngestError);
  });

  it('truncation at every section boundary, and at every octet', async () => {
    const cuts = new Set([...sectionBoundaries(VALID), ...sectionBoundaries(VALID).map((b) => b + 3)]);
    for (let n = 1; n < VALID.length; n++) cuts.add(n);
    const messageEnds = new Set<number>();
    for (let pos = 0; pos < VALID.length; ) {
      pos += (VALID[pos + 12] << 24) | (VALID[pos + 13] << 16) | (VALID[pos + 14] << 8) | VALID[pos + 15];
      messageEnds.add(pos);
    }
    for (const n of cuts) {
      if (n <= 0 || n >= VALID.length) continue;
      if (messageEnds.has(n)) {
        // a cut between whole messages leaves a shorter valid file
        expect((await exercise(write(VALID.subarray(0, n)))).ok).toBe(true);
      } else {
        await expectIngestError(VALID.subarray(0, n));
      }
    }
  });

  it('wrong section lengths (shorter, longer, zero, below the header, beyond everything)', async () => {
    const starts = sectionBoundaries(VALID.subarray(0, (VALID[12] << 24) | (VALID[13] << 16) | (VALID[14] << 8) | VALID[15]));
    for (const s of starts.slice(1, -1)) {
      const len = ((VALID[s] << 24) | (VALID[s + 1] << 16) | (VALID[s + 2] << 8) | VALID[s + 3]) >>> 0;
      for (const wrong of [len - 1, len + 1, 0, 4, 0xffffffff]) {
        const msg = await expectIngestError(patch(VALID, s, be32(wrong)));
        expect(msg).toMatch(/section|message|template/);
      }
    }
  });

  it('section numbers out of order or unknown', async () => {
    const s = sectionBoundaries(VALID);
    await expectIngestError(patch(VALID, s[3] + 4, [6]), /out of order/); // section 4 renumbered 6
    await expectIngestError(patch(VALID, s[1] + 4, [3]), /out of order/); // section 1 renumbered 3
    await expectIngestError(patch(VALID, s[2] + 4, [9]), /unknown section number 9/);
  });

  it('declared lengths beyond the end of the file', async () => {
    await expectIngestError(patch(VALID, 8, [0, 0, 0, 0, ...be32(VALID.length + 100)]), /truncated|runs past|end marker/);
    await expectIngestError(patch(VALID, 8, [0, 0, 0x10, 0, 0, 0, 0, 0]), /truncated/);
  });

  it('edition other than 2', async () => {
    await expectIngestError(patch(VALID, 7, [1]), /edition 1 .*grib_set -s edition=2/);
    await expectIngestError(patch(VALID, 7, [3]), /edition 3/);
  });

  const t: BuiltField = { category: 0, number: 0, levelType: 100, levelPa: 85000, xs: ramp(1) };

  it('unknown or refused templates name the template', async () => {
    await expectIngestError(message([sec1(), sec3(1), ...fieldSections(t)]), /grid template 3\.1.*rotated/);
    await expectIngestError(message([sec1(), sec3(40), ...fieldSections(t)]), /grid template 3\.40.*Gaussian/);
    await expectIngestError(message([sec1(), sec3(999), ...fieldSections(t)]), /grid template 3\.999/);
    await expectIngestError(message([sec1(), sec3(), sec4(t, 2), sec5(24, 12), sec6(), sec7(t.xs, 12)]), /product template 4\.2/);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(24, 12, 42), sec6(), sec7(t.xs, 12)]), /5\.42.*grib_set -r -s packingType=grid_simple/);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(24, 12, 99), sec6(), sec7(t.xs, 12)]), /template 5\.99/);
  });

  it('bitmaps with wrong counts', async () => {
    const fewer = t.xs.map((_, k) => k % 2 === 0); // 12 points present, 24 values packed
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(24, 12), sec6(fewer), sec7(t.xs, 12)]), /more values than points|bitmap marks/);
    const more = t.xs.map(() => true);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(20, 12), sec6(more), sec7(t.xs.slice(0, 20), 12)]), /bitmap marks 24 points present, section 5 declares 20/);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(24, 12), [0, 0, 0, 7, 6, 0, 0xff], sec7(t.xs, 12)]), /bitmap holds 8 bits for 24 grid points/);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(24, 12), [0, 0, 0, 6, 6, 254], sec7(t.xs, 12)]), /previously defined bitmap/);
  });

  it('absurd sizes', async () => {
    const huge = sec3();
    huge.splice(30, 4, ...be32(100000));
    huge.splice(34, 4, ...be32(100000));
    await expectIngestError(message([sec1(), huge, ...fieldSections(t)]), /does not match|absurd/);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(4_000_000_000, 12), sec6(), sec7(t.xs, 12)]), /absurd number of values/);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(24, 40), sec6(), sec7(t.xs, 12)]), /40 bits per value/);
    await expectIngestError(message([sec1(), sec3(), sec4(t), sec5(24, 16), sec6(), sec7(t.xs, 12)]), /need 48 octets, section 7 holds 36/);
  });

  /** complex packing with spatial differencing and missing values, and PNG, for the flips */
  function packedFile(): Uint8Array {
    const scale = Uint8Array.of(0x43, 0x48, 0, 0, 0, 0, 0, 0); // R = 200, E = D = 0
    const xs = ramp(5).map((x, k) => (k % 7 === 3 ? null : x));
    const c = encodeComplex(xs, scale, { template: 3, order: 2, extraOctets: 2, management: 1, groupLength: 5 });
    const png = encodePng(ramp(6), NI, NJ, 16, scale);
    const r: BuiltField = { category: 1, number: 1, levelType: 100, levelPa: 70000, xs: [] };
    const u: BuiltField = { category: 2, number: 2, levelType: 100, levelPa: 70000, xs: [] };
    return Uint8Array.from([
      ...message([sec1(), sec3(), sec4(r), Array.from(c.sec5), sec6(), Array.from(c.sec7)]),
      ...message([sec1(), sec3(), sec4(u), Array.from(png.sec5), sec6(), Array.from(png.sec7)]),
    ]);
  }

  it('the complex / PNG corpus file decodes undamaged', async () => {
    const reader = await openGrib2(write(packedFile()));
    const r = await reader.readField('r', 0, 0);
    const u = await reader.readField('u', 0, 0);
    expect(r.filter(Number.isNaN).length).toBe(ramp(5).filter((_, k) => k % 7 === 3).length);
    expect(u[(NJ - 1) * NI]).toBe(200 + ramp(6)[0]);
    await reader.close();
  });

  it('a few hundred seeded random byte flips: an IngestError or a valid decode, never anything else', async () => {
    let seed = 20261202;
    const rand = () => {
      seed = (seed * 1103515245 + 12345) % 2147483648;
      return seed / 2147483648;
    };
    let errors = 0;
    let decoded = 0;
    const sources = [VALID, packedFile()];
    for (let trial = 0; trial < 400; trial++) {
      const bytes = sources[trial % 2].slice();
      const flips = 1 + Math.floor(rand() * 4);
      for (let f = 0; f < flips; f++) {
        const at = Math.floor(rand() * bytes.length);
        bytes[at] = rand() < 0.5 ? bytes[at] ^ (1 << Math.floor(rand() * 8)) : Math.floor(rand() * 256);
      }
      const out = await exercise(write(bytes));
      if (out.ok) decoded++;
      else if (out.error instanceof IngestError) errors++;
      else throw new Error(`trial ${trial}: ${String(out.error)}`);
    }
    expect(errors + decoded).toBe(400);
    // most flips land in packed data and still decode; header flips must be refused
    expect(errors).toBeGreaterThan(20);
    expect(decoded).toBeGreaterThan(20);
  }, 60_000);
});
