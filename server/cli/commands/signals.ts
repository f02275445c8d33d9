/**
 * `npm run liftwise -- signals FILE --regions REGIONS.geojson [--calibration SET.json] [--member N] [--json]`
 *
 * Regional daily signals of a model run, offline (no database): QG diagnosis of each step in
 * this process, then the same computation the processing chain stores (computeMemberSignals in
 * server/services/signals.ts; the omega is rounded to Float32 as the chain's derived store does,
 * so the numbers agree with the stored rows).
 *
 * Inputs:
 *  REGIONS.geojson  the regions contract (docs/regions.md); refused with one line per problem.
 *  SET.json         a calibration set ({ version, name, parameters }) or a bare parameters
 *                   object, full or partial (left-out parameters take the defaults of
 *                   shared/calibration.ts). Without it: the defaults (version 1).
 *  --member N       one member; all members of the file when absent.
 *
 * Output contracts:
 *  --json: a JSON array of rows, ordered by member, region, day:
 *    { member, region, day (ISO date, UTC), precipMm (mm per day, ours), snowShare (0..1),
 *      cloudPct (%, time mean of total cloud), ghiKwhM2 (kWh m-2 per day, solar zones, else null),
 *      solarGwh (GWh per day, solar zones, else null), inflowGwh (GWh per day, catchments, else
 *      null), modelPrecipMm (mm, the file's tp, null without it), modelCloudPct (%, the file's tcc,
 *      null without it), hoursCovered (hours of the day inside the run's steps) }
 *  text: one table per member with units, then warnings (regions outside the grid) and the
 *    product's caution.
 * Exit codes: 0 done, 1 the data was refused, 2 usage mistake.
 */
import fs from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { calibrationParametersSchema, DEFAULT_CALIBRATION_SET, type CalibrationParameters } from '@shared/calibration.ts';
import { validateRegions } from '@shared/regions.ts';
import { openRun, type RunReader } from '../../ingest/index.ts';
import { diagnose, OmegaSolver, qgGeometry } from '../../science/qg/index.ts';
import { computeMemberSignals, type ComputedSignalRow, type SignalRegion } from '../../services/signals.ts';

export class UsageError extends Error {}

/** A row as the command prints it: the computed row with its member, and `region` for the region id. */
export type CliSignalRow = { member: number; region: string } & Omit<ComputedSignalRow, 'regionId'>;

/** Regions from a parsed GeoJSON value; throws one line per problem. */
export function regionsFromGeojson(value: unknown): SignalRegion[] {
  const result = validateRegions(value);
  if (!result.ok) throw new Error(`the regions file has problems:\n  ${result.issues.map((i) => i.message).join('\n  ')}`);
  return result.collection.features.map((f) => ({ id: f.properties.id.trim(), properties: f.properties, geometry: f.geometry }));
}

/** A calibration set or a bare (partial) parameter object, over the defaults. */
export function calibrationFromJson(value: unknown): CalibrationParameters {
  const obj = (value ?? {}) as Record<string, unknown>;
  const params = typeof obj.parameters === 'object' && obj.parameters !== null ? obj.parameters : obj;
  const merged = calibrationParametersSchema.safeParse({ ...DEFAULT_CALIBRATION_SET.parameters, ...(params as object) });
  if (!merged.success) {
    throw new Error(`the calibration set is not valid:\n  ${merged.error.issues.map((i) => `${i.path.join('.') || 'parameters'}: ${i.message}`).join('\n  ')}`);
  }
  return merged.data;
}

/** Signals of the chosen members of an open run (the whole work of the command). */
export async function signalsForReader(
  reader: RunReader, regions: SignalRegion[], cal: CalibrationParameters, member?: number,
): Promise<{ rows: CliSignalRow[]; warnings: string[] }> {
  const { info } = reader;
  const names = new Set(info.variables.map((v) => v.name));
  if (member !== undefined && !info.members.includes(member)) throw new UsageError(`member ${member} is not in this file (members: ${info.members.join(' ')})`);
  const members = member === undefined ? info.members : [member];
  const solver = new OmegaSolver(qgGeometry(info.axes));
  const rows: CliSignalRow[] = [];
  const warnings = new Set<string>();
  for (const m of members) {
    const result = await computeMemberSignals(
      {
        info,
        member: m,
        readField: (name, step) => reader.readField(name, m, step),
        readOmega: async (step) => {
          const [z, t, w] = await Promise.all([
            reader.readField('z', m, step), reader.readField('t', m, step), names.has('w') ? reader.readField('w', m, step) : null,
          ]);
          // Float32, as the derived store keeps it: the CLI and the stored rows see the same omega.
          return Float32Array.from(diagnose({ axes: info.axes, z, t, w }, { solver }).omega);
        },
      },
      regions,
      cal,
    );
    for (const w of result.warnings) warnings.add(w);
    rows.push(...result.rows.map((r) => toCliRow(m, r)));
  }
  return { rows, warnings: [...warnings] };
}

function toCliRow(member: number, r: ComputedSignalRow): CliSignalRow {
  const { regionId, ...rest } = r;
  return { member, region: regionId, ...rest };
}

const f = (x: number | null, digits: number) => (x === null || !Number.isFinite(x) ? '-' : x.toFixed(digits));

/** The plain-text report: one table per member. */
export function textTable(rows: CliSignalRow[], warnings: string[]): string {
  const lines: string[] = [];
  const members = [...new Set(rows.map((r) => r.member))];
  for (const m of members) {
    lines.push(`member ${m}`);
    lines.push('  region               day         precip  snow   cloud  GHI      solar   inflow  model precip  model cloud  hours');
    lines.push('                                   mm      share  %      kWh/m2   GWh     GWh     mm            %            h');
    for (const r of rows.filter((x) => x.member === m)) {
      lines.push(
        `  ${r.region.padEnd(20)} ${r.day}  ${f(r.precipMm, 2).padStart(6)}  ${f(r.snowShare, 2).padStart(5)}  ${f(r.cloudPct, 1).padStart(5)}  `
        + `${f(r.ghiKwhM2, 3).padStart(7)}  ${f(r.solarGwh, 3).padStart(6)}  ${f(r.inflowGwh, 3).padStart(6)}  ${f(r.modelPrecipMm, 2).padStart(12)}  `
        + `${f(r.modelCloudPct, 1).padStart(11)}  ${String(r.hoursCovered).padStart(5)}`,
      );
    }
    lines.push('');
  }
  for (const w of warnings) lines.push(`warning: ${w}`);
  lines.push('Signals are model-derived estimates (QG diagnosis), not a safety forecast. Official warnings come from the national meteorological service.');
  return lines.join('\n');
}

function readJson(file: string, what: string): unknown {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (err) {
    throw new UsageError(`cannot read the ${what} file ${file}: ${(err as Error).message}`);
  }
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new Error(`the ${what} file ${path.basename(file)} is not valid JSON: ${(err as Error).message}`);
  }
}

export async function run(argv: string[]): Promise<number> {
  const usage = 'usage: signals FILE --regions REGIONS.geojson [--calibration SET.json] [--member N] [--json]';
  try {
    const { values, positionals } = (() => {
      try {
        return parseArgs({
          args: argv, allowPositionals: true,
          options: { regions: { type: 'string' }, calibration: { type: 'string' }, member: { type: 'string' }, json: { type: 'boolean' } },
        });
      } catch (err) {
        throw new UsageError(`${(err as Error).message}\n${usage}`);
      }
    })();
    if (positionals.length !== 1 || !values.regions) throw new UsageError(usage);
    const member = values.member === undefined ? undefined : Number(values.member);
    if (member !== undefined && !Number.isInteger(member)) throw new UsageError(`--member wants an integer (got "${values.member}")`);
    const regions = regionsFromGeojson(readJson(values.regions, 'regions'));
    const cal = values.calibration ? calibrationFromJson(readJson(values.calibration, 'calibration')) : DEFAULT_CALIBRATION_SET.parameters;
    const reader = await openRun(positionals[0]);
    try {
      const { rows, warnings } = await signalsForReader(reader, regions, cal, member);
      if (values.json) {
        process.stdout.write(`${JSON.stringify(rows, null, 1)}\n`);
        for (const w of warnings) process.stderr.write(`warning: ${w}\n`);
      } else {
        process.stdout.write(`${textTable(rows, warnings)}\n`);
      }
    } finally {
      await reader.close();
    }
    return 0;
  } catch (err) {
    if (err instanceof UsageError) {
      process.stderr.write(`liftwise signals: ${err.message}\n`);
      return 2;
    }
    process.stderr.write(`liftwise signals: ${(err as Error).message}\n`);
    return 1;
  }
}
