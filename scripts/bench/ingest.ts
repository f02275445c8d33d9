/**
 * `npm run bench:ingest`: our GRIB2 decoder against ecCodes' own decoder on the same files.
 *
 * Writes, with ecCodes (python3-eccodes under /usr/bin/python3), one file per packing holding
 * 12 pressure levels x 5 variables on a 241 x 161 grid (60 fields, 2.3 million values): simple
 * and complex packing, complex with spatial differencing, JPEG 2000; plus a PNG file crafted
 * from the simple one (this ecCodes build's PNG encoder aborts). Then times value decoding only:
 *  - ecCodes: codes_get_values on handles already in memory (python3-eccodes, time.perf_counter);
 *  - ours: Grib2Reader.decodePayload per field on section 7 already read into memory (unpacks,
 *    scales, reorders to the canonical grid). The files carry no bitmap.
 * Best of REPEATS passes each. Prints a table with throughput (values/s) and our/ecCodes ratio.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { openGrib2 } from '../../server/ingest/grib2/index.ts';
import { buildMessage, encodePng, scaleOctets, simpleIntegers, splitFile, splitMessage } from '../../tests/reference/grib2/craft.ts';

const PYTHON = '/usr/bin/python3';
const REPEATS = 10;
const NI = 241;
const NJ = 161;

const WRITE_AND_TIME = String.raw`
import json, sys, time
import eccodes, numpy as np
spec = json.loads(sys.argv[1])
ni, nj = spec.get("ni", 1), spec.get("nj", 1)
lat = np.linspace(70, 30, nj)[:, None]
lon = np.linspace(-20, 40, ni)[None, :]
params = [(3, 4, 9.8e4, 2.0e3), (0, 0, 260.0, 25.0), (1, 1, 60.0, 35.0), (2, 2, 5.0, 20.0), (2, 3, 0.0, 15.0)]
levels = [1000, 925, 850, 700, 600, 500, 400, 300, 250, 200, 150, 100]
rng = np.random.default_rng(1)
if spec["mode"] == "write":
    for f in spec["files"]:
        with open(f["out"], "wb") as out:
            for cat, num, base, amp in params:
                for k, lev in enumerate(levels):
                    h = eccodes.codes_grib_new_from_samples("regular_ll_pl_grib2")
                    for key, v in [("Ni", ni), ("Nj", nj)]:
                        eccodes.codes_set(h, key, v)
                    for key, v in [("latitudeOfFirstGridPointInDegrees", 70.0), ("longitudeOfFirstGridPointInDegrees", 340.0),
                                   ("latitudeOfLastGridPointInDegrees", 30.0), ("longitudeOfLastGridPointInDegrees", 40.0),
                                   ("iDirectionIncrementInDegrees", 0.25), ("jDirectionIncrementInDegrees", 0.25)]:
                        eccodes.codes_set_double(h, key, v)
                    for key, v in [("discipline", 0), ("parameterCategory", cat), ("parameterNumber", num),
                                   ("typeOfFirstFixedSurface", 100), ("level", lev)]:
                        eccodes.codes_set(h, key, v)
                    field = base * (1 + 0.05 * k) + amp * np.sin(np.radians(lon) * 3 + k) * np.cos(np.radians(lat) * 4) \
                        + 0.02 * amp * rng.standard_normal((nj, ni))
                    vals = field.ravel()
                    eccodes.codes_set_values(h, vals)
                    eccodes.codes_set_string(h, "packingType", f["packing"])
                    eccodes.codes_set(h, "bitsPerValue", 16)
                    eccodes.codes_set_values(h, vals)
                    eccodes.codes_write(h, out)
                    eccodes.codes_release(h)
else:
    result = {}
    for name in spec["files"]:
        msgs = []
        with open(name, "rb") as f:
            while True:
                h = eccodes.codes_grib_new_from_file(f)
                if h is None:
                    break
                msgs.append(eccodes.codes_get_message(h))
                eccodes.codes_release(h)
        best = float("inf")
        for _ in range(spec["repeats"]):
            handles = [eccodes.codes_new_from_message(m) for m in msgs]
            t0 = time.perf_counter()
            n = 0
            for h in handles:
                n += eccodes.codes_get_values(h).size
            best = min(best, time.perf_counter() - t0)
            for h in handles:
                eccodes.codes_release(h)
        result[name] = {"seconds": best, "values": n}
    print(json.dumps(result))
`;

function python(spec: object): string {
  const r = spawnSync(PYTHON, ['-c', WRITE_AND_TIME, JSON.stringify(spec)], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`ecCodes (python3-eccodes) failed: ${r.stderr.trim().split('\n').slice(-3).join(' | ')}`);
  return r.stdout;
}

async function ours(file: string): Promise<{ seconds: number; values: number }> {
  const reader = await openGrib2(file);
  let best = Infinity;
  let values = 0;
  try {
    // like the ecCodes side, the messages are in memory before the clock starts
    const payloads = await Promise.all(reader.fields.map((f) => reader.readPayload(f)));
    for (let r = 0; r < REPEATS + 1; r++) {
      const t0 = process.hrtime.bigint();
      values = 0;
      for (const [k, f] of reader.fields.entries()) values += (await reader.decodePayload(f, payloads[k], null)).length;
      const s = Number(process.hrtime.bigint() - t0) / 1e9;
      if (r > 0) best = Math.min(best, s); // the first pass warms the JIT (and loads the JPEG 2000 wasm)
    }
  } finally {
    await reader.close();
  }
  return { seconds: best, values };
}

function craftPng(simple: string, out: string): void {
  const messages = splitFile(fs.readFileSync(simple)).map((m) => {
    const { discipline, sections } = splitMessage(m);
    const s5 = sections.find((s) => s.num === 5)!.bytes;
    const s7 = sections.find((s) => s.num === 7)!.bytes;
    const { xs } = simpleIntegers(s5, s7);
    const png = encodePng(xs, NI, NJ, 16, scaleOctets(s5));
    return buildMessage(discipline, sections.map((s) => (s.num === 5 ? png.sec5 : s.num === 7 ? png.sec7 : s.bytes)));
  });
  fs.writeFileSync(out, Buffer.concat(messages));
}

async function main(): Promise<number> {
  if (!fs.existsSync(PYTHON) || execFileSync(PYTHON, ['-c', 'import eccodes; print(1)'], { encoding: 'utf8' }).trim() !== '1') {
    console.error('bench:ingest needs python3-eccodes for /usr/bin/python3 (apt-get install -y python3-eccodes libeccodes-tools)');
    return 1;
  }
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'liftwise-bench-'));
  try {
    const packings = [
      ['simple', 'grid_simple'],
      ['complex', 'grid_complex'],
      ['complex+spatial', 'grid_complex_spatial_differencing'],
      ['jpeg2000', 'grid_jpeg'],
    ] as const;
    const files = packings.map(([name, packing]) => ({ name, packing, out: path.join(dir, `${name}.grib2`) }));
    console.log(`writing ${files.length + 1} files of 60 fields on ${NI} x ${NJ} with ecCodes in ${dir} ...`);
    python({ mode: 'write', ni: NI, nj: NJ, files });
    const png = path.join(dir, 'png.grib2');
    craftPng(files[0].out, png);
    const all = [...files.map((f) => ({ name: f.name, out: f.out })), { name: 'png (crafted)', out: png }];
    const ec = JSON.parse(python({ mode: 'time', files: all.map((f) => f.out), repeats: REPEATS })) as Record<string, { seconds: number; values: number }>;

    const rows: string[][] = [['packing', 'MB', 'values', 'ecCodes s', 'ours s', 'ecCodes Mval/s', 'ours Mval/s', 'ours/ecCodes time']];
    for (const f of all) {
      const o = await ours(f.out);
      const e = ec[f.out];
      if (o.values !== e.values) throw new Error(`${f.name}: we decoded ${o.values} values, ecCodes ${e.values}`);
      rows.push([
        f.name,
        (fs.statSync(f.out).size / 1e6).toFixed(1),
        String(o.values),
        e.seconds.toFixed(4),
        o.seconds.toFixed(4),
        (e.values / e.seconds / 1e6).toFixed(1),
        (o.values / o.seconds / 1e6).toFixed(1),
        (o.seconds / e.seconds).toFixed(2),
      ]);
    }
    const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)));
    for (const r of rows) console.log(r.map((x, c) => (c === 0 ? x.padEnd(widths[c]) : x.padStart(widths[c]))).join('  '));
    console.log(`best of ${REPEATS} passes; target: ours/ecCodes <= 1.5 for simple and complex packing`);
    return 0;
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

main().then(
  (code) => process.exit(code),
  (err: unknown) => {
    console.error(`bench:ingest: ${err instanceof Error ? err.message : String(err)}`);
    process.exit(1);
  },
);
