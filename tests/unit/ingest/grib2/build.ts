/**
 * Builds small valid GRIB2 files by hand (WMO FM 92 layouts) for the malformed-input corpus:
 * no reference tool needed, every octet known, so a test can damage exactly one of them.
 */
export interface BuiltField {
  category: number;
  number: number;
  levelType: number;
  levelPa: number;
  /** integers packed with simple packing; value = (R + X) with R = 200, E = D = 0 */
  xs: number[];
  bitmap?: boolean[];
  /** forecast time, in `timeUnit` (Code table 4.4, default 1 = hour) */
  forecastHours?: number;
  timeUnit?: number;
  /** template 4.8 only: length of the accumulation in hours */
  rangeHours?: number;
  template?: number;
}

const be32 = (v: number) => [(v >>> 24) & 0xff, (v >>> 16) & 0xff, (v >>> 8) & 0xff, v & 0xff];
const be16 = (v: number) => [(v >>> 8) & 0xff, v & 0xff];

function section(num: number, body: number[]): number[] {
  return [...be32(body.length + 5), num, ...body];
}

export const NI = 6;
export const NJ = 4;

export function sec1(hour = 0, centre = 98): number[] {
  // subcentre 0, tables 2/0, significance 1, 2026-12-01 hour:00:00, status 0, type 1
  return section(1, [...be16(centre), ...be16(0), 2, 0, 1, ...be16(2026), 12, 1, hour, 0, 0, 0, 1]);
}

export function sec3(template = 0, scanMode = 0, ni = NI): number[] {
  const body = [0, ...be32(ni * NJ), 0, 0, ...be16(template)];
  // shape of earth 6, radius and axes missing-ish zeros
  body.push(6, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0);
  body.push(...be32(ni), ...be32(NJ), ...be32(0), ...be32(0xffffffff));
  body.push(...be32(60_000_000), ...be32(350_000_000), 48, ...be32(54_000_000), ...be32(10_000_000));
  body.push(...be32(4_000_000), ...be32(2_000_000), scanMode);
  return section(3, body);
}

export function sec4(f: BuiltField, template = 0): number[] {
  const body = [...be16(0), ...be16(template), f.category, f.number, 2, 0, 0, ...be16(0), 0, f.timeUnit ?? 1, ...be32(f.forecastHours ?? 0)];
  body.push(f.levelType, 0, ...be32(f.levelPa), 255, 255, ...be32(0xffffffff));
  if (template === 8) {
    // end of the interval (not read), one time range: accumulation (1) over `rangeHours` hours
    body.push(...be16(2026), 12, 1, 0, 0, 0, 1, ...be32(0), 1, 2, 1, ...be32(f.rangeHours ?? 0), 255, ...be32(0));
  }
  return section(4, body);
}

export function sec5(count: number, nbits: number, template = 0): number[] {
  // R = 200.0 as IEEE float 0x43480000, E = 0, D = 0
  return section(5, [...be32(count), ...be16(template), 0x43, 0x48, 0, 0, 0, 0, 0, 0, nbits, 0]);
}

export function sec6(bitmap?: boolean[]): number[] {
  if (!bitmap) return section(6, [255]);
  const bytes = new Array(Math.ceil(bitmap.length / 8)).fill(0);
  bitmap.forEach((b, k) => {
    if (b) bytes[k >> 3] |= 0x80 >> (k & 7);
  });
  return section(6, [0, ...bytes]);
}

export function sec7(xs: number[], nbits: number): number[] {
  const bytes: number[] = [];
  let acc = 0;
  let n = 0;
  for (const x of xs) {
    for (let b = nbits - 1; b >= 0; b--) {
      acc = (acc << 1) | ((x >>> b) & 1);
      if (++n === 8) {
        bytes.push(acc);
        acc = 0;
        n = 0;
      }
    }
  }
  if (n) bytes.push(acc << (8 - n));
  return section(7, bytes);
}

export function message(sections: number[][], discipline = 0, edition = 2): Uint8Array {
  const body = sections.flat();
  const total = 16 + body.length + 4;
  return Uint8Array.from([0x47, 0x52, 0x49, 0x42, 0, 0, discipline, edition, 0, 0, 0, 0, ...be32(total), ...body, 0x37, 0x37, 0x37, 0x37]);
}

export function fieldSections(f: BuiltField, nbits = 12): number[][] {
  const present = f.bitmap ? f.xs.filter((_, k) => f.bitmap![k]) : f.xs;
  return [sec4(f, f.template ?? 0), sec5(present.length, nbits), sec6(f.bitmap), sec7(present, nbits)];
}

export const ramp = (seed: number) => Array.from({ length: NI * NJ }, (_, k) => (k * 37 + seed * 11) % 4000);

/** A valid file: t at 850 and 500 hPa (the second with a bitmap), z at 850 hPa in a
 *  two-field message, tcc at the surface. */
export function validFile(): Uint8Array {
  const t850: BuiltField = { category: 0, number: 0, levelType: 100, levelPa: 85000, xs: ramp(1) };
  const t500: BuiltField = { category: 0, number: 0, levelType: 100, levelPa: 50000, xs: ramp(2), bitmap: ramp(2).map((_, k) => k % 5 !== 1) };
  const z850: BuiltField = { category: 3, number: 4, levelType: 100, levelPa: 85000, xs: ramp(3) };
  const tcc: BuiltField = { category: 6, number: 1, levelType: 1, levelPa: 0, xs: ramp(4).map((x) => x % 100) };
  const m1 = message([sec1(), sec3(), ...fieldSections(t850)]);
  const m2 = message([sec1(), sec3(), ...fieldSections(t500), ...fieldSections(z850)]);
  const m3 = message([sec1(), sec3(), ...fieldSections(tcc, 8)]);
  return Uint8Array.from([...m1, ...m2, ...m3]);
}

/** Offsets of every section start (and the end marker) in a file of messages. */
export function sectionBoundaries(file: Uint8Array): number[] {
  const out: number[] = [];
  let pos = 0;
  while (pos < file.length) {
    const total = (file[pos + 12] << 24) | (file[pos + 13] << 16) | (file[pos + 14] << 8) | file[pos + 15];
    out.push(pos);
    let p = pos + 16;
    while (p < pos + total - 4) {
      out.push(p);
      p += ((file[p] << 24) | (file[p + 1] << 16) | (file[p + 2] << 8) | file[p + 3]) >>> 0;
    }
    out.push(pos + total - 4);
    pos += total;
  }
  return out;
}
