/**
 * `npm run demo:generate [-- --out DIR] [--force]`
 *
 * Writes the synthetic Nordvale model runs as real files (GRIB2 for the deterministic model,
 * NetCDF-4 for the ensemble), the regions GeoJSON, the demo people and subscribers, and a
 * manifest.json listing every file with its sha256. Same command, same bytes: every random
 * choice is seeded and nothing reads the clock. Skips the work when the manifest already
 * matches this generator version and configuration (unless --force).
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import {
  FORECAST_STEPS_H, NORDVALE_DOMAIN, PRESSURE_LEVELS_HPA, fieldsAt, gridAxes, makeContext,
  type Domain, type FieldSet, type WaveParameters,
} from './atmosphere.ts';
import { encodeGrib2Message, timeFromIso, type Grib2Packing, type Grib2Product } from './grib2-encoder.ts';
import { DEMO_PEOPLE, DEMO_SUBSCRIBERS, NORDVALE_REGIONS } from './market.ts';
import { writeNetcdf4, type NcVariable } from './netcdf4-writer.ts';
import {
  CURRENT_CYCLE, DEMO_MODELS, PREVIOUS_CYCLE, deterministicWave, hoursFromCurrentCycle, memberWaves, type DemoModel,
} from './runs.ts';

/** Bump when the output would change for the same configuration. */
export const GENERATOR_VERSION = 2;
const STANDARD_GRAVITY = 9.80665; // m s-2, WMO: geopotential height (gpm) = Phi / g0

export interface DemoConfig {
  deterministicDomain: Domain;
  /** the ensemble's grid (the demo uses the deterministic run's 0.5 degree; a coarser one keeps files small) */
  ensembleDomain: Domain;
  levelsHpa: number[];
  steps: number[];
  members: number;
  seed: string;
}

export const DEFAULT_CONFIG: DemoConfig = {
  deterministicDomain: NORDVALE_DOMAIN,
  ensembleDomain: NORDVALE_DOMAIN,
  levelsHpa: [...PRESSURE_LEVELS_HPA],
  steps: [...FORECAST_STEPS_H],
  members: 20,
  seed: 'nordvale-demo',
};

export interface ManifestFile {
  /** relative to the output folder */
  path: string;
  format: 'grib2' | 'netcdf4' | 'geojson' | 'json';
  model: DemoModel | null;
  modelName: string | null;
  /** ISO 8601 UTC reference time of the run */
  cycle: string | null;
  members: number[] | null;
  steps: number[] | null;
  description: string;
  bytes: number;
  sha256: string;
}

export interface Manifest {
  generator: 'liftwise-demo';
  version: number;
  config: DemoConfig;
  files: ManifestFile[];
}

export interface GenerateOptions {
  outDir: string;
  force?: boolean;
  config?: DemoConfig;
  log?: (line: string) => void;
}

const cycleTag = (iso: string): string => iso.slice(0, 13).replace(/[-T]/g, '');

function sha256File(file: string): string {
  return crypto.createHash('sha256').update(fs.readFileSync(file)).digest('hex');
}

/** Walks the steps of one run in order (precipitation accumulates) and hands each field set on. */
function walkRun(
  wave: WaveParameters, domain: Domain, config: DemoConfig, cycle: string,
  onStep: (stepIndex: number, fields: FieldSet) => void,
): void {
  const ctx = makeContext(domain, wave);
  const axes = gridAxes(domain);
  const levelsPa = config.levelsHpa.map((p) => p * 100);
  const offset = hoursFromCurrentCycle(cycle);
  let earlier: { runHours: number; tp: Float32Array } | undefined;
  config.steps.forEach((step, s) => {
    const fields = fieldsAt(ctx, axes, levelsPa, offset, step, earlier);
    earlier = { runHours: step, tp: fields.tp };
    onStep(s, fields);
  });
}

interface GribVariable {
  key: keyof FieldSet;
  product: Omit<Grib2Product, 'stepHours' | 'levelValue' | 'levelType'>;
  decimalScale: number;
  scale?: number;
  surface?: { secondLevelType?: number; accumulated?: boolean };
}

function gribVariables(geopotentialHeight: boolean): GribVariable[] {
  const z: GribVariable = geopotentialHeight
    ? { key: 'z', product: { discipline: 0, category: 3, number: 5 }, decimalScale: 2, scale: 1 / STANDARD_GRAVITY }
    : { key: 'z', product: { discipline: 0, category: 3, number: 4 }, decimalScale: 1 };
  return [
    z,
    { key: 't', product: { discipline: 0, category: 0, number: 0 }, decimalScale: 2 },
    { key: 'r', product: { discipline: 0, category: 1, number: 1 }, decimalScale: 1 },
    { key: 'u', product: { discipline: 0, category: 2, number: 2 }, decimalScale: 2 },
    { key: 'v', product: { discipline: 0, category: 2, number: 3 }, decimalScale: 2 },
    { key: 'w', product: { discipline: 0, category: 2, number: 8 }, decimalScale: 3 },
    { key: 'tp', product: { discipline: 0, category: 1, number: 8 }, decimalScale: 2, surface: { accumulated: true } },
    { key: 'tcc', product: { discipline: 0, category: 6, number: 1 }, decimalScale: 1, surface: { secondLevelType: 8 } },
  ];
}

/** One deterministic run as a GRIB2 file: per step, per variable, per level. */
function writeDeterministicGrib(
  file: string, cycle: string, config: DemoConfig, packing: 'simple' | 'complex', geopotentialHeight: boolean,
  log: (line: string) => void,
): void {
  const domain = config.deterministicDomain;
  const { lat, lon } = gridAxes(domain);
  const grid = {
    ni: lon.length, nj: lat.length, lat1: lat[0], lon1: lon[0], lat2: lat[lat.length - 1], lon2: lon[lon.length - 1],
    di: domain.resolution, dj: domain.resolution, scanningMode: 0,
  };
  const n2 = lat.length * lon.length;
  const referenceTime = timeFromIso(cycle);
  const fd = fs.openSync(file, 'w');
  try {
    walkRun(deterministicWave(cycle), domain, config, cycle, (s, fields) => {
      const stepHours = config.steps[s];
      for (const v of gribVariables(geopotentialHeight)) {
        const pack: Grib2Packing = { type: packing, decimalScale: v.decimalScale, bitsPerValue: 16 };
        const data = fields[v.key];
        if (v.surface) {
          const product: Grib2Product = {
            ...v.product, levelType: 1, levelValue: 0, stepHours,
            secondLevelType: v.surface.secondLevelType,
            accumulatedFromHours: v.surface.accumulated ? 0 : undefined,
          };
          fs.writeSync(fd, encodeGrib2Message({ referenceTime, grid, product, packing: pack }, data));
          continue;
        }
        config.levelsHpa.forEach((hpa, k) => {
          let slab: ArrayLike<number> = data.subarray(k * n2, (k + 1) * n2);
          if (v.scale) slab = Float64Array.from(slab as Float32Array, (x) => x * (v.scale as number));
          const product: Grib2Product = { ...v.product, levelType: 100, levelValue: hpa * 100, stepHours };
          fs.writeSync(fd, encodeGrib2Message({ referenceTime, grid, product, packing: pack }, slab));
        });
      }
      if (s % 5 === 0 || s === config.steps.length - 1) log(`  step ${stepHours} h written`);
    });
  } finally {
    fs.closeSync(fd);
  }
}

/**
 * Rounds float32 values to `bits` significant bits (round to nearest on the bit pattern):
 * far below the fields' meaningful precision, and deflate then compresses the zeroed tail.
 */
export function keepSignificantBits(data: Float32Array, bits: number): void {
  const u = new Uint32Array(data.buffer, data.byteOffset, data.length);
  const drop = 24 - bits;
  if (drop <= 0) return;
  const half = 1 << (drop - 1);
  const mask = ~((1 << drop) - 1) >>> 0;
  for (let i = 0; i < u.length; i++) u[i] = ((u[i] + half) & mask) >>> 0;
}

interface NcVariableSpec {
  key: keyof FieldSet;
  name: string;
  standardName: string;
  longName: string;
  units: string;
  significantBits: number;
  scale?: number;
}

const NC_VARIABLES: NcVariableSpec[] = [
  { key: 'z', name: 'z', standardName: 'geopotential', longName: 'geopotential', units: 'm2 s-2', significantBits: 18 },
  { key: 't', name: 't', standardName: 'air_temperature', longName: 'temperature', units: 'K', significantBits: 14 },
  { key: 'r', name: 'r', standardName: 'relative_humidity', longName: 'relative humidity', units: '%', significantBits: 10 },
  { key: 'u', name: 'u', standardName: 'eastward_wind', longName: 'eastward wind', units: 'm s-1', significantBits: 12 },
  { key: 'v', name: 'v', standardName: 'northward_wind', longName: 'northward wind', units: 'm s-1', significantBits: 12 },
  { key: 'w', name: 'w', standardName: 'lagrangian_tendency_of_air_pressure', longName: 'pressure vertical velocity (omega)', units: 'Pa s-1', significantBits: 12 },
  { key: 'tp', name: 'tp', standardName: 'precipitation_amount', longName: 'total precipitation accumulated since the forecast reference time', units: 'kg m-2', significantBits: 12 },
  { key: 'tcc', name: 'tcc', standardName: 'cloud_area_fraction', longName: 'total cloud cover', units: '1', significantBits: 10, scale: 0.01 },
];

/** One ensemble run (all members) as a NetCDF-4 file with dims (time, member, level, latitude, longitude). */
async function writeEnsembleNetcdf(file: string, cycle: string, config: DemoConfig, log: (line: string) => void): Promise<void> {
  const domain = config.ensembleDomain;
  const { lat, lon } = gridAxes(domain);
  const n2 = lat.length * lon.length;
  const nlev = config.levelsHpa.length;
  const nt = config.steps.length;
  const nm = config.members;
  const arrays = new Map<keyof FieldSet, Float32Array>();
  for (const v of NC_VARIABLES) {
    const surface = v.key === 'tp' || v.key === 'tcc';
    arrays.set(v.key, new Float32Array(nt * nm * (surface ? 1 : nlev) * n2));
  }
  memberWaves(cycle, nm, config.seed).forEach((wave, m) => {
    walkRun(wave, domain, config, cycle, (s, fields) => {
      for (const v of NC_VARIABLES) {
        const src = fields[v.key];
        const target = arrays.get(v.key) as Float32Array;
        const offset = (s * nm + m) * src.length;
        if (v.scale) for (let i = 0; i < src.length; i++) target[offset + i] = src[i] * v.scale;
        else target.set(src, offset);
      }
    });
    if (m % 5 === 4 || m === nm - 1) log(`  members 0..${m} computed`);
  });
  const variables: NcVariable[] = NC_VARIABLES.map((v) => {
    const surface = v.key === 'tp' || v.key === 'tcc';
    const data = arrays.get(v.key) as Float32Array;
    keepSignificantBits(data, v.significantBits);
    return {
      name: v.name,
      dims: surface ? ['time', 'member', 'latitude', 'longitude'] : ['time', 'member', 'level', 'latitude', 'longitude'],
      data,
      chunks: surface ? [1, 1, lat.length, lon.length] : [1, 1, nlev, lat.length, lon.length],
      attrs: { standard_name: v.standardName, long_name: v.longName, units: v.units },
    };
  });
  const cycleText = cycle.replace('T', ' ').replace('Z', '');
  await writeNetcdf4(file, {
    dimensions: [
      { name: 'time', values: Float64Array.from(config.steps),
        attrs: { standard_name: 'time', long_name: 'valid time', units: `hours since ${cycleText}`, calendar: 'proleptic_gregorian', axis: 'T' } },
      { name: 'member', values: Int32Array.from({ length: nm }, (_, m) => m),
        attrs: { standard_name: 'realization', long_name: 'ensemble member number (0 = control)' } },
      { name: 'level', values: Float32Array.from(config.levelsHpa),
        attrs: { standard_name: 'air_pressure', long_name: 'pressure level', units: 'hPa', positive: 'down', axis: 'Z' } },
      { name: 'latitude', values: Float32Array.from(lat), attrs: { standard_name: 'latitude', long_name: 'latitude', units: 'degrees_north', axis: 'Y' } },
      { name: 'longitude', values: Float32Array.from(lon), attrs: { standard_name: 'longitude', long_name: 'longitude', units: 'degrees_east', axis: 'X' } },
    ],
    variables,
    globalAttrs: {
      Conventions: 'CF-1.8',
      title: 'Nordvale Ensemble (NVE), synthetic pressure-level forecast',
      institution: 'Nordvale Weather Service (invented for the Liftwise demo)',
      source: `Liftwise demo generator v${GENERATOR_VERSION}: synthetic baroclinic wave, ${nm} members`,
      model: 'NVE',
      forecast_reference_time: cycle,
      comment: 'Synthetic data. Values rounded to a few significant bits below their precision for compression.',
    },
  }, Date.parse(cycle));
}

function writeJson(file: string, value: unknown): void {
  fs.writeFileSync(file, `${JSON.stringify(value, null, 2)}\n`);
}

function manifestIsCurrent(manifestPath: string, config: DemoConfig): boolean {
  if (!fs.existsSync(manifestPath)) return false;
  try {
    const m = JSON.parse(fs.readFileSync(manifestPath, 'utf8')) as Manifest;
    if (m.version !== GENERATOR_VERSION || JSON.stringify(m.config) !== JSON.stringify(config)) return false;
    const dir = path.dirname(manifestPath);
    return m.files.every((f) => fs.existsSync(path.join(dir, f.path)) && fs.statSync(path.join(dir, f.path)).size === f.bytes);
  } catch {
    return false;
  }
}

/** Generates everything into `outDir` and returns the manifest. */
export async function generateDemo(options: GenerateOptions): Promise<{ manifest: Manifest; skipped: boolean }> {
  const config = options.config ?? DEFAULT_CONFIG;
  const log = options.log ?? ((line: string) => console.log(line));
  const outDir = path.resolve(options.outDir);
  const manifestPath = path.join(outDir, 'manifest.json');
  if (!options.force && manifestIsCurrent(manifestPath, config)) {
    log(`[demo] ${manifestPath} is up to date (generator v${GENERATOR_VERSION}); use --force to regenerate`);
    return { manifest: JSON.parse(fs.readFileSync(manifestPath, 'utf8')) as Manifest, skipped: true };
  }
  fs.mkdirSync(outDir, { recursive: true });
  const files: Omit<ManifestFile, 'bytes' | 'sha256'>[] = [];
  const run = (model: DemoModel, cycle: string, format: 'grib2' | 'netcdf4', members: number, description: string) => ({
    path: `${model.toLowerCase()}-${cycleTag(cycle)}.${format === 'grib2' ? 'grib2' : 'nc'}`,
    format, model, modelName: DEMO_MODELS[model], cycle,
    members: Array.from({ length: members }, (_, m) => m), steps: [...config.steps], description,
  });

  const runs = [
    { ...run('NVM', CURRENT_CYCLE, 'grib2', 1, 'deterministic run, GRIB2 simple packing, geopotential (0/3/4)'), packing: 'simple' as const, gh: false },
    { ...run('NVM', PREVIOUS_CYCLE, 'grib2', 1, 'deterministic run, GRIB2 complex packing, geopotential height (0/3/5)'), packing: 'complex' as const, gh: true },
  ];
  for (const r of runs) {
    log(`[demo] ${r.model} ${r.cycle}: writing ${r.path}`);
    writeDeterministicGrib(path.join(outDir, r.path), r.cycle as string, config, r.packing, r.gh, log);
    files.push({ path: r.path, format: r.format, model: r.model, modelName: r.modelName, cycle: r.cycle, members: r.members, steps: r.steps, description: r.description });
  }
  for (const cycle of [CURRENT_CYCLE, PREVIOUS_CYCLE]) {
    const r = run('NVE', cycle, 'netcdf4', config.members, `ensemble run, ${config.members} members, NetCDF-4 (CF)`);
    log(`[demo] NVE ${cycle}: writing ${r.path}`);
    await writeEnsembleNetcdf(path.join(outDir, r.path), cycle, config, log);
    files.push(r);
  }
  log('[demo] writing regions, people and subscribers');
  writeJson(path.join(outDir, 'nordvale-regions.geojson'), NORDVALE_REGIONS);
  writeJson(path.join(outDir, 'people.json'), DEMO_PEOPLE);
  writeJson(path.join(outDir, 'subscribers.json'), DEMO_SUBSCRIBERS);
  const none = { model: null, modelName: null, cycle: null, members: null, steps: null };
  files.push({ path: 'nordvale-regions.geojson', format: 'geojson', ...none, description: 'Nordvale hydro catchments and solar zones' });
  files.push({ path: 'people.json', format: 'json', ...none, description: 'demo people, identity-provider groups and roles' });
  files.push({ path: 'subscribers.json', format: 'json', ...none, description: 'demo mail subscribers and their regions' });

  const manifest: Manifest = {
    generator: 'liftwise-demo',
    version: GENERATOR_VERSION,
    config,
    files: files.map((f) => {
      const full = path.join(outDir, f.path);
      return { ...f, bytes: fs.statSync(full).size, sha256: sha256File(full) };
    }),
  };
  writeJson(manifestPath, manifest);
  const total = manifest.files.reduce((a, f) => a + f.bytes, 0);
  log(`[demo] wrote ${manifest.files.length} files, ${(total / 1e6).toFixed(1)} MB, manifest ${manifestPath}`);
  return { manifest, skipped: false };
}

function parseArgs(argv: string[]): { outDir: string; force: boolean } {
  const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
  let outDir = path.join(repoRoot, '.data', 'demo');
  let force = false;
  for (let i = 0; i < argv.length; i++) {
    if (argv[i] === '--force') force = true;
    else if (argv[i] === '--out') {
      const value = argv[++i];
      if (!value) throw new Error('--out needs a folder');
      outDir = path.resolve(value);
    } else throw new Error(`unknown argument ${argv[i]} (use --out DIR, --force)`);
  }
  return { outDir, force };
}

const invokedDirectly = process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (invokedDirectly) {
  const started = performance.now();
  generateDemo(parseArgs(process.argv.slice(2)))
    .then(() => console.log(`[demo] done in ${((performance.now() - started) / 1000).toFixed(1)} s`))
    .catch((err: unknown) => {
      console.error(`[demo] failed: ${err instanceof Error ? err.message : String(err)}`);
      process.exitCode = 1;
    });
}
