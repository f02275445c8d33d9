/**
 * The CF interpretation of a NetCDF file, written once over NcSource and shared by the
 * NetCDF-3 and NetCDF-4 readers: finds the canonical variables and their axes, then reads
 * one field (one member, one step) at a time into the canonical [level][lat][lon] order.
 */
import { CANONICAL_VARIABLES, IngestError, type CanonicalVariable, type RunInfo, type RunReader, type VariableInfo } from '../canonical.ts';
import { classifyDimension, coordinateVariable, isoTime, levelsInPa, mapLatitude, mapLongitude, readCoordinate, durationHours, timeUnitsOf, type AxisKind, type MappedAxis } from './cf-axes.ts';
import { conversionFor, identify, makeValueReader, unpackerFor, type Candidate, type Conversion, type Unpacker } from './cf-variables.ts';
import { textAttr, type NcSource, type NcVariable } from './source.ts';

type Role = AxisKind | 'singleton';

interface Plan {
  candidate: Candidate;
  roles: Role[];
  conv: Conversion;
  unpack: Unpacker;
  levelsPa: Float64Array | null;
  /** canonical level position -> index in the file (-1: the variable lacks that level) */
  levelIndex: Int32Array | null;
  stepIndex: Map<number, number> | null;
  memberIndex: Map<number, number> | null;
}

const key = (hours: number) => Math.round(hours * 1e6) / 1e6;
const REQUIRED: CanonicalVariable[] = ['z', 't'];

/** Roles of a variable's dimensions, or the reason it cannot be a field on a regular grid. */
function rolesOf(src: NcSource, v: NcVariable, kinds: Map<string, AxisKind | null>): Role[] | string {
  const roles: Role[] = [];
  let problem: string | null = null;
  for (let d = 0; d < v.dims.length; d++) {
    const dim = v.dims[d];
    if (!kinds.has(dim)) kinds.set(dim, classifyDimension(src, dim));
    const kind = kinds.get(dim) ?? null;
    if (kind === null && v.shape[d] !== 1) problem ??= `dimension ${dim} (length ${v.shape[d]}) is not a latitude, longitude, pressure, time or member axis`;
    if (kind !== null && roles.includes(kind)) problem ??= `two ${kind} dimensions`;
    roles.push(kind ?? 'singleton');
  }
  if (!roles.includes('lat') || !roles.includes('lon')) {
    refuseCurvilinear(src, v);
    return `no latitude/longitude axis among its dimensions (${v.dims.join(', ') || 'none'})${problem ? `; ${problem}` : ''}`;
  }
  return problem ?? roles;
}

/** 2-D latitude/longitude (curvilinear or rotated grids) is refused outright. */
function refuseCurvilinear(src: NcSource, v: NcVariable) {
  const coords = (textAttr(v.attrs, 'coordinates') ?? '').split(/\s+/).filter(Boolean);
  for (const other of src.variables.values()) {
    const sn = textAttr(other.attrs, 'standard_name');
    const named = coords.includes(other.name) || ['lat', 'latitude', 'lon', 'longitude'].includes(other.name.toLowerCase());
    if (other.dims.length >= 2 && named && (sn === 'latitude' || sn === 'longitude' || coords.includes(other.name))) {
      throw new IngestError(`variable ${other.name}`, `2-D latitude/longitude (${other.dims.join(', ')}): curvilinear or rotated grids are not supported; regrid to a regular latitude-longitude grid (e.g. \`cdo remapbil\`)`);
    }
  }
}

function pick(src: NcSource): { plans: Map<CanonicalVariable, { c: Candidate; roles: Role[] }>; reasons: Map<CanonicalVariable, string> } {
  const kinds = new Map<string, AxisKind | null>();
  const plans = new Map<CanonicalVariable, { c: Candidate; roles: Role[] }>();
  const reasons = new Map<CanonicalVariable, string>();
  for (const v of src.variables.values()) {
    if (coordinateVariable(src, v.name)) continue;
    const c = identify(v);
    if (!c) continue;
    const roles = rolesOf(src, v, kinds);
    const pressure = CANONICAL_VARIABLES[c.canonical].kind === 'pressure';
    let reason = typeof roles === 'string' ? roles : null;
    if (!reason && pressure && !roles.includes('level')) reason = `no pressure-level axis among its dimensions (${v.dims.join(', ')})`;
    if (!reason && !pressure && roles.includes('level')) reason = 'a surface quantity on pressure levels';
    if (reason) {
      if (!reasons.has(c.canonical)) reasons.set(c.canonical, `variable ${v.name}: ${reason}`);
      continue;
    }
    const best = plans.get(c.canonical);
    if (!best || c.rank > best.c.rank) plans.set(c.canonical, { c, roles: roles as Role[] });
  }
  return { plans, reasons };
}

async function axisValues(src: NcSource, dim: string): Promise<Float64Array> {
  const cv = coordinateVariable(src, dim);
  if (!cv) throw new IngestError(`axis ${dim}`, 'the dimension has no coordinate variable giving its values');
  return readCoordinate(src, cv);
}

const sameValues = (a: Float64Array, b: Float64Array) => a.length === b.length && a.every((x, i) => Math.abs(x - b[i]) < 1e-6);

/** Reference time (ms) from a forecast_reference_time variable, or null. */
async function forecastReference(src: NcSource): Promise<number | null> {
  const v = [...src.variables.values()].find((x) => textAttr(x.attrs, 'standard_name') === 'forecast_reference_time' || x.name === 'forecast_reference_time' || x.name === 'reftime');
  if (!v) return null;
  const { hours, epochMs } = timeUnitsOf(v);
  const values = await readCoordinate(src, v);
  if (values.length === 0) return null;
  if (values.some((x) => x !== values[0])) throw new IngestError(`variable ${v.name}`, 'several forecast reference times: one run per file is expected');
  return epochMs + values[0] * hours * 3600e3;
}

/** Valid times (ms) along a time dimension, or steps (hours) along a forecast_period dimension. */
async function timeAxis(src: NcSource, dim: string, kind: 'time' | 'period'): Promise<Float64Array> {
  const cv = coordinateVariable(src, dim);
  if (!cv) throw new IngestError(`axis ${dim}`, 'the time dimension has no coordinate variable giving its values');
  const values = await readCoordinate(src, cv);
  if (kind === 'period') {
    const per = durationHours(textAttr(cv.attrs, 'units') ?? '') ?? NaN;
    return values.map((x) => x * per);
  }
  const { hours, epochMs } = timeUnitsOf(cv);
  return values.map((x) => epochMs + x * hours * 3600e3);
}

/** A dimensionless time variable (scalar valid time), for files without a time dimension. */
async function scalarTime(src: NcSource): Promise<number | null> {
  const v = [...src.variables.values()].find((x) => (textAttr(x.attrs, 'standard_name') === 'time' || x.name === 'time' || x.name === 'valid_time') && x.shape.every((n) => n === 1));
  if (!v) return null;
  const { hours, epochMs } = timeUnitsOf(v);
  const values = await readCoordinate(src, v);
  return values.length ? epochMs + values[0] * hours * 3600e3 : null;
}

type Chosen = Map<CanonicalVariable, { c: Candidate; roles: Role[] }>;

const dimOf = (roles: Role[], v: NcVariable, role: Role) => v.dims[roles.indexOf(role)];
const timeRoleOf = (roles: Role[]) => (roles.includes('time') ? 'time' : roles.includes('period') ? 'period' : null);

function requireCore(chosen: Chosen, reasons: Map<CanonicalVariable, string>) {
  for (const name of REQUIRED) {
    if (chosen.has(name)) continue;
    const what = name === 'z' ? 'geopotential (standard_name geopotential or geopotential_height, or a variable z / gh)' : 'temperature (standard_name air_temperature, or a variable t)';
    throw new IngestError(`variable ${name}`, `missing ${what}${reasons.has(name) ? `; found ${reasons.get(name)}` : ''}`);
  }
}

/** Per-variable plans: same grid as geopotential, own pressure levels, own time axis. */
async function buildPlans(src: NcSource, chosen: Chosen, grid: { latDim: string; lonDim: string; latRaw: Float64Array; lonRaw: Float64Array; ref: string }) {
  const plans = new Map<CanonicalVariable, Plan>();
  const timeCache = new Map<string, Float64Array>();
  const validTimes: number[] = [];
  for (const [name, { c, roles }] of chosen) {
    const v = c.variable;
    for (const [role, axisDim, raw] of [['lat', grid.latDim, grid.latRaw], ['lon', grid.lonDim, grid.lonRaw]] as const) {
      const dim = dimOf(roles, v, role);
      if (dim !== axisDim && !sameValues(await axisValues(src, dim), raw)) {
        throw new IngestError(`variable ${v.name}`, `its ${role === 'lat' ? 'latitude' : 'longitude'} axis ${dim} differs from ${axisDim} used by ${grid.ref}: all fields must share one grid`);
      }
    }
    const levelDim = roles.includes('level') ? dimOf(roles, v, 'level') : null;
    const levelsPa = levelDim ? levelsInPa(levelDim, coordinateVariable(src, levelDim), await axisValues(src, levelDim)) : null;
    const timeRole = timeRoleOf(roles);
    if (timeRole) {
      const dim = dimOf(roles, v, timeRole);
      if (!timeCache.has(dim)) timeCache.set(dim, await timeAxis(src, dim, timeRole));
      if (timeRole === 'time') validTimes.push(...timeCache.get(dim)!);
    }
    plans.set(name, { candidate: c, roles, conv: conversionFor(c), unpack: unpackerFor(v), levelsPa, levelIndex: null, stepIndex: null, memberIndex: null });
  }
  return { plans, timeCache, validTimes };
}

/** Reference time, and each variable's steps (hours after it). */
async function assignSteps(src: NcSource, plans: Map<CanonicalVariable, Plan>, timeCache: Map<string, Float64Array>, validTimes: number[]) {
  const reference = await forecastReference(src);
  const scalar = validTimes.length === 0 ? await scalarTime(src) : null;
  const refMs = reference ?? (validTimes.length > 0 ? Math.min(...validTimes) : scalar);
  if (refMs === null || !Number.isFinite(refMs)) {
    throw new IngestError('time', 'no time coordinate: expected a time dimension with units "hours since YYYY-MM-DD HH:MM:SS", a scalar time variable, or a forecast_reference_time variable');
  }
  const steps = new Set<number>();
  for (const plan of plans.values()) {
    const v = plan.candidate.variable;
    const timeRole = timeRoleOf(plan.roles);
    if (!timeRole) {
      steps.add(key(scalar !== null ? (scalar - refMs) / 3600e3 : 0));
      continue;
    }
    if (timeRole === 'period' && reference === null) throw new IngestError(`variable ${v.name}`, 'a forecast_period axis needs a forecast_reference_time variable');
    const values = timeCache.get(dimOf(plan.roles, v, timeRole))!;
    plan.stepIndex = new Map(Array.from(values, (x, i) => [key(timeRole === 'time' ? (x - refMs) / 3600e3 : x), i]));
    for (const s of plan.stepIndex.keys()) steps.add(s);
  }
  return { refMs, steps: [...steps].sort((a, b) => a - b) };
}

/** Ensemble member numbers (the member coordinate's values, else 0..n-1). */
async function assignMembers(src: NcSource, plans: Map<CanonicalVariable, Plan>) {
  const members = new Set<number>();
  let isEnsemble = false;
  for (const plan of plans.values()) {
    if (!plan.roles.includes('member')) continue;
    isEnsemble = true;
    const dim = dimOf(plan.roles, plan.candidate.variable, 'member');
    const cv = coordinateVariable(src, dim);
    const numbers = cv ? Array.from(await readCoordinate(src, cv), Math.round) : Array.from({ length: src.dims.get(dim) ?? 0 }, (_, i) => i);
    plan.memberIndex = new Map(numbers.map((m, i) => [m, i]));
    numbers.forEach((m) => members.add(m));
  }
  if (members.size === 0) members.add(0);
  return { isEnsemble, members: [...members].sort((a, b) => a - b) };
}

/** The union of all pressure levels, bottom to top; each variable maps onto it. */
function assignLevels(plans: Map<CanonicalVariable, Plan>): Float64Array {
  const levelSet = new Set<number>();
  for (const plan of plans.values()) plan.levelsPa?.forEach((p) => levelSet.add(p));
  const levels = Float64Array.from([...levelSet].sort((a, b) => b - a));
  for (const plan of plans.values()) {
    if (plan.levelsPa) plan.levelIndex = Int32Array.from(levels, (p) => plan.levelsPa!.indexOf(p));
  }
  return levels;
}

export async function openCf(src: NcSource): Promise<RunReader> {
  const { plans: chosen, reasons } = pick(src);
  requireCore(chosen, reasons);
  const z = chosen.get('z')!;
  const latDim = dimOf(z.roles, z.c.variable, 'lat');
  const lonDim = dimOf(z.roles, z.c.variable, 'lon');
  const latRaw = await axisValues(src, latDim);
  const lonRaw = await axisValues(src, lonDim);
  const lat = mapLatitude(latDim, latRaw);
  const lon = mapLongitude(lonDim, lonRaw);
  const { plans, timeCache, validTimes } = await buildPlans(src, chosen, { latDim, lonDim, latRaw, lonRaw, ref: z.c.variable.name });
  const { refMs, steps } = await assignSteps(src, plans, timeCache, validTimes);
  const { isEnsemble, members } = await assignMembers(src, plans);
  const levels = assignLevels(plans);
  const variables: VariableInfo[] = [...plans.entries()].map(([name, plan]) => ({
    name,
    sourceName: plan.candidate.variable.name,
    levels: plan.levelsPa ? [...plan.levelsPa].sort((a, b) => b - a) : [],
  }));
  const model = ['model', 'source', 'institution'].map((a) => textAttr(src.attrs, a)).find((x) => x) ?? null;
  const info: RunInfo = {
    format: src.format,
    model: model ? model.slice(0, 200) : null,
    referenceTime: isoTime(refMs),
    steps,
    members,
    isEnsemble,
    axes: { lat: lat.values, lon: lon.values, levels },
    variables,
  };
  return new CfRunReader(src, info, plans, lat, lon);
}

class CfRunReader implements RunReader {
  constructor(
    private readonly src: NcSource,
    readonly info: RunInfo,
    private readonly plans: Map<CanonicalVariable, Plan>,
    private readonly lat: MappedAxis,
    private readonly lon: MappedAxis,
  ) {}

  async readField(name: CanonicalVariable, member: number, step: number): Promise<Float32Array> {
    const plan = this.plans.get(name);
    if (!plan) throw new IngestError(`variable ${name}`, 'not in this file');
    const v = plan.candidate.variable;
    if (!this.info.steps.includes(key(step))) throw new IngestError(`variable ${v.name}`, `step ${step} h is not in the file (steps: ${this.info.steps.join(', ')})`);
    if (!this.info.members.includes(member)) throw new IngestError(`variable ${v.name}`, `member ${member} is not in the file`);
    const nlat = this.lat.values.length;
    const nlon = this.lon.values.length;
    const nlev = plan.levelIndex ? plan.levelIndex.length : 1;
    const out = new Float32Array(nlev * nlat * nlon).fill(NaN);
    const t = plan.stepIndex ? plan.stepIndex.get(key(step)) : 0;
    const m = plan.memberIndex ? plan.memberIndex.get(member) : 0;
    if (t === undefined || m === undefined) return out; // this variable lacks that step or member
    const start = plan.roles.map((r) => (r === 'time' || r === 'period' ? t : r === 'member' ? m : 0));
    const count = plan.roles.map((r, d) => (r === 'lat' || r === 'lon' || r === 'level' ? v.shape[d] : 1));
    const raw = await this.src.read(v, start, count);
    const stride = new Array<number>(count.length).fill(1);
    for (let d = count.length - 2; d >= 0; d--) stride[d] = stride[d + 1] * count[d + 1];
    const sLat = stride[plan.roles.indexOf('lat')];
    const sLon = stride[plan.roles.indexOf('lon')];
    const sLev = plan.roles.includes('level') ? stride[plan.roles.indexOf('level')] : 0;
    const value = makeValueReader(raw, plan.unpack, plan.conv);
    const levelIndex = plan.levelIndex ?? Int32Array.of(0);
    let present = 0;
    let missing = 0;
    for (let k = 0; k < nlev; k++) {
      const sk = levelIndex[k];
      if (sk < 0) continue;
      const outBase = k * nlat * nlon;
      for (let j = 0; j < nlat; j++) {
        const rowBase = sk * sLev + this.lat.index[j] * sLat;
        const outRow = outBase + j * nlon;
        for (let i = 0; i < nlon; i++) {
          const x = value(rowBase + this.lon.index[i] * sLon);
          out[outRow + i] = x;
          if (x !== x) missing++;
        }
      }
      present += nlat * nlon;
    }
    if (REQUIRED.includes(name) && missing * 2 > present) {
      throw new IngestError(`variable ${v.name}`, `${Math.round((100 * missing) / present)}% of the values of ${CANONICAL_VARIABLES[name].description} are missing (member ${member}, step ${step} h)`);
    }
    return out;
  }

  async close(): Promise<void> {
    await this.src.close();
  }
}
