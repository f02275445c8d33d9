/**
 * `npm run liftwise -- diagnose FILE [--step H] [--member N] [--json] [--dump omega:LEVEL_HPA:STEP_H]`
 *
 * QG omega diagnosis of one member of a model run, step by step (SCIENCE.md section 2).
 * Output contracts:
 *  --json: { file, model, referenceTime, member, levels (hPa), lat0, f0 (s-1), beta (m-1 s-1),
 *           sigma (m2 Pa-2 s-2 per level, of the first diagnosed step), steps: [{ step (h),
 *           residual (largest relative residual of the step's solves), residuals, solveMs (the
 *           linear solves alone, ms), solves, sigma, omega: [{ level (hPa), min, mean, max }]
 *           (Pa s-1; mean area-weighted), omegaVorticity, omegaThickness (same form),
 *           qVectorCorrelation (per level, Q-vector vs traditional form), modelCorrelation
 *           (per level vs the file's omega, null without it), warnings }] }
 *  text: a table per step with units.
 *  --dump omega:LEVEL_HPA:STEP_H: `lat lon value` lines (Pa s-1), north to south, west to east,
 *           longitudes in -180..180, `nan` for missing: the order of the inspect command.
 * diagnoseReader() does the work on any RunReader; run() is the thin file-opening wrapper.
 */
import { parseArgs } from 'node:util';
import { openRun, type RunReader } from '../../ingest/index.ts';
import {
  diagnose, levelStatistics, OmegaSolver, patternCorrelation, qgGeometry, QgInputError, type QgDiagnosis, type QgGeometry,
} from '../../science/qg/index.ts';

export interface DiagnoseOptions {
  /** forecast steps (hours) to diagnose; all when empty */
  steps?: number[];
  /** member number; the first member when absent */
  member?: number;
}

export interface LevelStats { level: number; min: number; mean: number; max: number }

export interface DiagnoseStep {
  step: number;
  residual: number;
  residuals: QgDiagnosis['residual'];
  solveMs: number;
  solves: number;
  sigma: number[];
  omega: LevelStats[];
  omegaVorticity: LevelStats[];
  omegaThickness: LevelStats[];
  qVectorCorrelation: (number | null)[];
  modelCorrelation: (number | null)[] | null;
  warnings: string[];
}

export interface DiagnoseReport {
  file: string | null;
  model: string | null;
  referenceTime: string;
  member: number;
  levels: number[];
  lat0: number;
  f0: number;
  beta: number;
  sigma: number[];
  steps: DiagnoseStep[];
}

/** Usage mistakes (exit code 2), as opposed to refusals of the data (exit code 1). */
export class UsageError extends Error {}

function stats(field: Float64Array, g: QgGeometry): LevelStats[] {
  return levelStatistics(field, g).map((s, k) => ({ level: g.levels[k] / 100, ...s }));
}

function chooseMember(reader: RunReader, member: number | undefined): number {
  const { members } = reader.info;
  if (member === undefined) return members[0];
  if (!members.includes(member)) throw new UsageError(`member ${member} is not in this file (members: ${members.join(' ')})`);
  return member;
}

function chooseSteps(reader: RunReader, steps: number[] | undefined): number[] {
  const available = reader.info.steps;
  if (!steps || steps.length === 0) return available;
  for (const s of steps) if (!available.includes(s)) throw new UsageError(`step ${s} h is not in this file (steps: ${available.join(' ')})`);
  return steps;
}

/** Diagnoses the chosen member and steps, calling `onStep` with each step's full diagnosis. */
export async function diagnoseReader(
  reader: RunReader,
  opts: DiagnoseOptions = {},
  onStep?: (step: number, d: QgDiagnosis) => void,
): Promise<DiagnoseReport> {
  const { info } = reader;
  const names = new Set(info.variables.map((v) => v.name));
  for (const [name, what] of [['z', 'geopotential'], ['t', 'temperature']] as const) {
    if (!names.has(name)) throw new QgInputError('BAD_SHAPE', `the file has no ${what} (${name}); the QG diagnosis needs geopotential and temperature on pressure levels`);
  }
  const member = chooseMember(reader, opts.member);
  const steps = chooseSteps(reader, opts.steps);
  const g = qgGeometry(info.axes);
  const solver = new OmegaSolver(g);
  const out: DiagnoseStep[] = [];
  for (const step of steps) {
    const z = await reader.readField('z', member, step);
    const t = await reader.readField('t', member, step);
    const w = names.has('w') ? await reader.readField('w', member, step) : null;
    const d = diagnose({ axes: info.axes, z, t, w }, { solver });
    onStep?.(step, d);
    out.push({
      step,
      residual: Math.max(d.residual.total, d.residual.vorticity, d.residual.thickness, d.residual.qVector),
      residuals: d.residual,
      solveMs: d.solveMs,
      solves: d.solves,
      sigma: Array.from(d.sigma),
      omega: stats(d.omega, g),
      omegaVorticity: stats(d.omegaVorticity, g),
      omegaThickness: stats(d.omegaThickness, g),
      qVectorCorrelation: Array.from(g.levels, (_, k) => (k === 0 || k === g.nz - 1 ? null : patternCorrelation(d.omega, d.omegaQVector, g, k))),
      modelCorrelation: d.patternCorrelation,
      warnings: d.warnings,
    });
  }
  return {
    file: null,
    model: info.model,
    referenceTime: info.referenceTime,
    member,
    levels: Array.from(info.axes.levels, (p) => p / 100),
    lat0: g.lat0,
    f0: g.f0,
    beta: g.beta,
    sigma: out[0]?.sigma ?? [],
    steps: out,
  };
}

const num = (x: number) => String(Number(x.toPrecision(9)));
const fmt = (x: number | null, digits = 3) => (x === null || !Number.isFinite(x) ? '-' : x.toExponential(digits));

/** `lat lon value` lines, north to south, west to east, longitudes wrapped to -180..180. */
export function dumpLines(field: Float64Array, g: QgGeometry, lat: Float64Array, lon: Float64Array, level: number): string {
  const { nx, ny } = g;
  const lons = Array.from(lon, (x) => num(x >= 180 ? x - 360 : x));
  const lines: string[] = [];
  for (let j = ny - 1; j >= 0; j--) {
    const la = num(lat[j]);
    const row = (level * ny + j) * nx;
    for (let i = 0; i < nx; i++) {
      const v = field[row + i];
      lines.push(`${la} ${lons[i]} ${Number.isFinite(v) ? String(Number(v.toPrecision(7))) : 'nan'}`);
    }
  }
  return lines.join('\n');
}

/** Parses `omega:LEVEL_HPA:STEP_H`. */
export function parseDump(spec: string): { levelHpa: number; step: number } {
  const m = /^omega:([0-9.]+):([0-9.]+)$/.exec(spec);
  if (!m) throw new UsageError(`--dump wants omega:LEVEL_HPA:STEP_H, e.g. omega:500:12 (got "${spec}")`);
  return { levelHpa: Number(m[1]), step: Number(m[2]) };
}

/** Runs diagnoseReader for one step and returns the dump of omega_QG at one level. */
export async function dumpOmega(reader: RunReader, spec: { levelHpa: number; step: number }, member?: number): Promise<string> {
  const { axes } = reader.info;
  const k = Array.from(axes.levels).findIndex((p) => Math.abs(p / 100 - spec.levelHpa) < 1e-6);
  if (k < 0) throw new UsageError(`no level ${spec.levelHpa} hPa (levels: ${Array.from(axes.levels, (p) => p / 100).join(' ')})`);
  let body = '';
  await diagnoseReader(reader, { steps: [spec.step], member }, (_s, d) => {
    body = dumpLines(d.omega, qgGeometry(axes), axes.lat, axes.lon, k);
  });
  return body;
}

/** The plain-text report. */
export function textReport(r: DiagnoseReport): string {
  const lines = [
    `QG omega diagnosis${r.file ? ` of ${r.file}` : ''}`,
    `model ${r.model ?? 'unknown'}, reference time ${r.referenceTime}, member ${r.member}`,
    `f0 = ${fmt(r.f0)} s-1, beta = ${fmt(r.beta)} m-1 s-1 at the domain centre ${r.lat0.toFixed(2)} deg`,
  ];
  for (const s of r.steps) {
    lines.push('', `step +${s.step} h: residual ${fmt(s.residual, 1)}, solve ${s.solveMs.toFixed(1)} ms (${s.solves} solves)`);
    lines.push('  level    sigma         omega min    mean         max          vort.part    thick.part   corr Q    corr model');
    lines.push('  hPa      m2 Pa-2 s-2   Pa s-1       Pa s-1       Pa s-1       mean Pa s-1  mean Pa s-1  (1)       (1)');
    s.omega.forEach((o, k) => {
      const cq = s.qVectorCorrelation[k], cm = s.modelCorrelation?.[k] ?? null;
      lines.push(
        `  ${String(o.level).padEnd(8)} ${fmt(s.sigma[k], 2).padEnd(13)} ${fmt(o.min).padEnd(12)} ${fmt(o.mean).padEnd(12)} ${fmt(o.max).padEnd(12)} `
        + `${fmt(s.omegaVorticity[k].mean).padEnd(12)} ${fmt(s.omegaThickness[k].mean).padEnd(12)} ${(cq === null ? '-' : cq.toFixed(3)).padEnd(9)} ${cm === null ? '-' : cm.toFixed(3)}`,
      );
    });
    for (const w of s.warnings) lines.push(`  warning: ${w}`);
  }
  lines.push('', 'Omega is model-derived (QG diagnosis); negative values are ascent. Official warnings come from the national meteorological service.');
  return lines.join('\n');
}

interface Args { file: string; steps: number[]; member?: number; json: boolean; dump: { levelHpa: number; step: number } | null }

function parseCommandLine(argv: string[]): Args {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      options: { step: { type: 'string', multiple: true }, member: { type: 'string' }, json: { type: 'boolean' }, dump: { type: 'string' } },
    });
  } catch (err) {
    throw new UsageError((err as Error).message);
  }
  const { values, positionals } = parsed;
  if (positionals.length !== 1) throw new UsageError('usage: diagnose FILE [--step H] [--member N] [--json] [--dump omega:LEVEL_HPA:STEP_H]');
  const toNumber = (name: string, s: string) => {
    const x = Number(s);
    if (!Number.isFinite(x)) throw new UsageError(`--${name} wants a number (got "${s}")`);
    return x;
  };
  return {
    file: positionals[0],
    steps: (values.step ?? []).map((s) => toNumber('step', s)),
    member: values.member === undefined ? undefined : toNumber('member', values.member),
    json: values.json ?? false,
    dump: values.dump === undefined ? null : parseDump(values.dump),
  };
}

export async function run(argv: string[]): Promise<number> {
  let args: Args;
  try {
    args = parseCommandLine(argv);
  } catch (err) {
    process.stderr.write(`diagnose: ${(err as Error).message}\n`);
    return 2;
  }
  let reader: RunReader | null = null;
  try {
    reader = await openRun(args.file);
    let body: string;
    if (args.dump) {
      body = await dumpOmega(reader, args.dump, args.member);
    } else {
      const report = { ...(await diagnoseReader(reader, { steps: args.steps, member: args.member })), file: args.file };
      body = args.json ? JSON.stringify(report) : textReport(report);
    }
    process.stdout.write(body + '\n');
    return 0;
  } catch (err) {
    const msg = err instanceof Error ? err.message : String(err);
    const prefix = err instanceof QgInputError ? `refused (${err.code}): ` : '';
    process.stderr.write(`diagnose: ${prefix}${msg.replace(/\s*\n\s*/g, ' ')}\n`);
    return err instanceof UsageError ? 2 : 1;
  } finally {
    await reader?.close();
  }
}
