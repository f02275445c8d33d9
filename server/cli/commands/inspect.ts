/**
 * `npm run liftwise -- inspect FILE [--json] [--dump VAR:LEVEL_HPA:STEP_H [--member N]]`
 *
 * Opens FILE through openRun (GRIB2 or NetCDF, chosen by magic bytes) and describes it.
 * Output formats (contracts: desk scripts parse them):
 *
 * Text (default), one item per line:
 *   format: grib2
 *   model: ECMWF                              ("unknown" when the file does not say)
 *   reference time: 2026-12-01T00:00:00Z
 *   grid: 161 x 241 (lat x lon)
 *   latitude: first 40 last 80 step 0.25      (canonical order, south to north)
 *   longitude: first -20 last 40 step 0.25    (canonical order, west to east)
 *   levels (hPa): 1000 925 850                (bottom to top; "none" when there are none)
 *   steps (h): 0 6 12
 *   members: 0 (deterministic)               or "members: 0 1 2 (ensemble)"
 *   variables:
 *     t K levels(hPa) 1000 925 850 source t (0/0/0)
 *     tp kg m-2 surface source tp (0/1/8)
 *   skipped: 2 messages                       (GRIB2 only; then one line per message)
 *     message 5: parameter 0/3/1 level type 101: parameter not read
 *
 * --json: one JSON object on one line:
 *   {"format","model","referenceTime","steps":[h],"members":[n],"isEnsemble",
 *    "grid":{"nlat","nlon","latFirst","latLast","latStep","lonFirst","lonLast","lonStep"},
 *    "levelsHpa":[...],"variables":[{"name","units","source","levelsHpa":[...]}],
 *    "skipped":[{"message","parameter","levelType","reason"}]}
 *   (steps for an accumulation such as tp are the ends of the intervals.)
 *
 * --dump VAR:LEVEL_HPA:STEP_H (level 0 for surface variables, e.g. tp:0:24; --member N, default
 *   the first member): one line per grid point, "lat lon value" separated by single spaces,
 *   rows north to south, points west to east within a row, longitudes in -180..180, values
 *   in canonical units (z in m2 s-2, tcc as a fraction, tp in kg m-2 since the reference
 *   time), missing values as "nan". Numbers in their shortest decimal form: lat/lon rounded to
 *   1e-6, values the shortest decimal that reads back as the same 32-bit float (e.g. 2.44).
 *
 * Exit codes: 0 success; 1 the file cannot be read (one line on stderr, "inspect: MESSAGE");
 * 2 wrong arguments (one line on stderr).
 */
import { CANONICAL_VARIABLES, IngestError, openRun, type CanonicalVariable, type RunReader } from '../../ingest/index.ts';

interface Args {
  file: string;
  json: boolean;
  dump: { name: CanonicalVariable; levelHpa: number; step: number } | null;
  member: number | null;
}

class UsageError extends Error {}

const num = (x: number, digits = 6) => String(Number(x.toFixed(digits)));

function parseArgs(argv: string[]): Args {
  const a: Args = { file: '', json: false, dump: null, member: null };
  for (let i = 0; i < argv.length; i++) {
    const x = argv[i];
    if (x === '--json') a.json = true;
    else if (x === '--dump') {
      const spec = argv[++i] ?? '';
      const m = /^([a-z]+):(-?[0-9.]+):(-?[0-9.]+)$/.exec(spec);
      if (!m || !(m[1] in CANONICAL_VARIABLES)) throw new UsageError(`--dump wants VAR:LEVEL_HPA:STEP_H with VAR one of ${Object.keys(CANONICAL_VARIABLES).join(', ')} (got "${spec}")`);
      a.dump = { name: m[1] as CanonicalVariable, levelHpa: Number(m[2]), step: Number(m[3]) };
    } else if (x === '--member') {
      const n = Number(argv[++i]);
      if (!Number.isInteger(n) || n < 0) throw new UsageError(`--member wants a member number (got "${argv[i]}")`);
      a.member = n;
    } else if (x.startsWith('--')) throw new UsageError(`unknown option ${x}`);
    else if (a.file) throw new UsageError(`one file only (got "${a.file}" and "${x}")`);
    else a.file = x;
  }
  if (!a.file) throw new UsageError('usage: inspect FILE [--json] [--dump VAR:LEVEL_HPA:STEP_H [--member N]]');
  if (a.member !== null && !a.dump) throw new UsageError('--member only applies with --dump');
  return a;
}

function describe(reader: RunReader): Record<string, unknown> {
  const { info } = reader;
  const { lat, lon } = info.axes;
  const step = (x: Float64Array) => (x.length > 1 ? (x[x.length - 1] - x[0]) / (x.length - 1) : 0);
  const skipped = 'skipped' in reader ? (reader.skipped as unknown[]) : [];
  return {
    format: info.format,
    model: info.model,
    referenceTime: info.referenceTime,
    steps: info.steps,
    members: info.members,
    isEnsemble: info.isEnsemble,
    grid: {
      nlat: lat.length,
      nlon: lon.length,
      latFirst: lat[0],
      latLast: lat[lat.length - 1],
      latStep: Number(num(step(lat))),
      lonFirst: lon[0],
      lonLast: lon[lon.length - 1],
      lonStep: Number(num(step(lon))),
    },
    levelsHpa: Array.from(info.axes.levels, (p) => Number(num(p / 100))),
    variables: info.variables.map((v) => ({
      name: v.name,
      units: CANONICAL_VARIABLES[v.name].units,
      source: v.sourceName,
      levelsHpa: v.levels.map((p) => Number(num(p / 100))),
    })),
    skipped,
  };
}

function text(d: ReturnType<typeof describe>): string {
  const g = d.grid as Record<string, number>;
  const list = (xs: number[]) => (xs.length ? xs.join(' ') : 'none');
  const lines = [
    `format: ${d.format}`,
    `model: ${d.model ?? 'unknown'}`,
    `reference time: ${d.referenceTime}`,
    `grid: ${g.nlat} x ${g.nlon} (lat x lon)`,
    `latitude: first ${g.latFirst} last ${g.latLast} step ${g.latStep}`,
    `longitude: first ${g.lonFirst} last ${g.lonLast} step ${g.lonStep}`,
    `levels (hPa): ${list(d.levelsHpa as number[])}`,
    `steps (h): ${list(d.steps as number[])}`,
    `members: ${(d.members as number[]).join(' ')} (${d.isEnsemble ? 'ensemble' : 'deterministic'})`,
    'variables:',
  ];
  for (const v of d.variables as { name: string; units: string; source: string; levelsHpa: number[] }[]) {
    const where = v.levelsHpa.length ? `levels(hPa) ${v.levelsHpa.join(' ')}` : 'surface';
    lines.push(`  ${v.name} ${v.units} ${where} source ${v.source}`);
  }
  const skipped = d.skipped as { message: number; parameter: string; levelType: number; reason: string }[];
  if (skipped.length) {
    lines.push(`skipped: ${skipped.length} messages`);
    for (const s of skipped) lines.push(`  message ${s.message}: parameter ${s.parameter} level type ${s.levelType}: ${s.reason}`);
  }
  return lines.join('\n');
}

/** The fewest significant digits that give back the same float32 (fields are Float32Array). */
function shortestFloat32(x: number): string {
  for (let p = 6; p < 9; p++) {
    const s = x.toPrecision(p);
    if (Math.fround(Number(s)) === x) return String(Number(s));
  }
  return String(Number(x.toPrecision(9)));
}

async function dump(reader: RunReader, spec: NonNullable<Args['dump']>, memberArg: number | null): Promise<string> {
  const { info } = reader;
  const v = info.variables.find((x) => x.name === spec.name);
  if (!v) throw new IngestError(`variable ${spec.name}`, `not in this file (it has ${info.variables.map((x) => x.name).join(', ') || 'none'})`);
  const member = memberArg ?? info.members[0];
  const field = await reader.readField(spec.name, member, spec.step);
  const nlat = info.axes.lat.length;
  const nlon = info.axes.lon.length;
  let offset = 0;
  if (CANONICAL_VARIABLES[spec.name].kind === 'pressure') {
    const k = Array.from(info.axes.levels).findIndex((p) => Math.abs(p / 100 - spec.levelHpa) < 1e-6);
    if (k < 0 || !v.levels.some((p) => Math.abs(p / 100 - spec.levelHpa) < 1e-6)) {
      throw new IngestError(`variable ${spec.name}`, `no level ${spec.levelHpa} hPa (levels: ${v.levels.map((p) => p / 100).join(' ')})`);
    }
    offset = k * nlat * nlon;
  } else if (spec.levelHpa !== 0) {
    throw new IngestError(`variable ${spec.name}`, 'is a surface variable: use level 0');
  }
  const lon = Array.from(info.axes.lon, (x) => num(x >= 180 ? x - 360 : x));
  const out: string[] = [];
  for (let j = nlat - 1; j >= 0; j--) {
    const lat = num(info.axes.lat[j]);
    const row = offset + j * nlon;
    for (let i = 0; i < nlon; i++) {
      const x = field[row + i];
      out.push(`${lat} ${lon[i]} ${Number.isNaN(x) ? 'nan' : shortestFloat32(x)}`);
    }
  }
  return out.join('\n');
}

export async function run(argv: string[]): Promise<number> {
  let args: Args;
  try {
    args = parseArgs(argv);
  } catch (err) {
    process.stderr.write(`inspect: ${(err as Error).message}\n`);
    return 2;
  }
  let reader: RunReader | null = null;
  try {
    reader = await openRun(args.file);
    const body = args.dump ? await dump(reader, args.dump, args.member) : args.json ? JSON.stringify(describe(reader)) : text(describe(reader));
    process.stdout.write(body + '\n');
    return 0;
  } catch (err) {
    const msg = err instanceof Error ? err.message : String(err);
    process.stderr.write(`inspect: ${msg.replace(/\s*\n\s*/g, ' ')}\n`);
    return 1;
  } finally {
    await reader?.close();
  }
}
