/**
 * Regional daily signals of one member of a run (SCIENCE.md sections 3-6): the ONE
 * implementation that both the pipeline's deriver and the `liftwise signals` command call.
 *
 * Per model step: t, RH (the file's r, or RH from q), QG omega (total), and the model's tp and
 * tcc where present -> condensation precipitation rate, snow share (temperature ramp), total
 * cloud cover (Sundqvist with omega-dependent RH_c, maximum-random overlap) -> area-weighted
 * regional means. Per UTC day: precipitation (trapezoid accumulation between steps, intervals
 * straddling midnight shared by time), snow share, time-mean cloud, GHI and solar energy per
 * solar zone (hourly, interpolated between steps), inflow energy per hydro catchment
 * (degree-day snowpack, runoff, linear reservoir), the model's precipitation and cloud beside.
 *
 * Choices stated here (and in docs/regions.md):
 *  - the air temperature for melt, cell temperature and the daily means is the lowest pressure
 *    level of the grid with data (a near-surface proxy: the files carry no 2 m temperature);
 *  - a region that the run's grid does not cover is skipped for that run with a warning (the
 *    deriver writes it into the member's message); the other regions are computed;
 *  - GHI and solar energy are computed for solar zones only, inflow for catchments only
 *    (null elsewhere);
 *  - the first and last day may be partial: `hoursCovered` says how many hours the model steps
 *    covered; precipitation and energies are sums over those hours only.
 */
import { createHash } from 'node:crypto';
import { and, asc, eq, sql } from 'drizzle-orm';
import type { SignalRow } from '@shared/api/signals.ts';
import type { CalibrationParameters } from '@shared/calibration.ts';
import type { RegionGeometry, RegionProperties } from '@shared/regions.ts';
import { IngestError, type CanonicalVariable, type GridAxes, type RunInfo } from '../ingest/canonical.ts';
import { cloudCover } from '../science/clouds.ts';
import { catchmentInflowEnergy, dailyTotalsFromIntervals } from '../science/hydro.ts';
import { condensationPrecipitationRate, rainSnowLevelTemperature, snowShareField, type ColumnShape } from '../science/precipitation.ts';
import {
  catchmentParameters, regionalMean, regionWeights, RegionGridError, solarZoneParameters, type RegionWeights,
} from '../science/regions.ts';
import { solarZoneEnergy } from '../science/solar.ts';
import { relativeHumidityField } from '../science/thermo.ts';
import { ZERO_CELSIUS_K } from '../science/thermo-constants.ts';
import type { Database } from '../db/client.ts';
import { runMembers, signalRows } from '../db/schema.ts';
import { latestCalibrationSet } from './calibration.ts';
import { readOmegaPart } from './derived-store.ts';
import type { MemberDeriver } from './pipeline.ts';
import { listActiveRegions } from './regions.ts';
import { regionPropertiesSchema } from '@shared/regions.ts';

/** A region as the computation needs it (a row of the regions table, or a feature of a file). */
export interface SignalRegion {
  id: string;
  properties: RegionProperties;
  geometry: RegionGeometry;
}

/** Where the fields of one member come from: the file reader, and the stored or fresh QG omega. */
export interface MemberFieldSource {
  info: RunInfo;
  member: number;
  readField(name: CanonicalVariable, step: number): Promise<Float32Array>;
  /** total QG omega, Pa s-1, [level][lat][lon] */
  readOmega(step: number): Promise<Float32Array>;
}

/** One computed row (units as in shared/api/signals.ts). */
export interface ComputedSignalRow {
  regionId: string;
  day: string;
  precipMm: number | null;
  snowShare: number | null;
  cloudPct: number | null;
  ghiKwhM2: number | null;
  solarGwh: number | null;
  inflowGwh: number | null;
  modelPrecipMm: number | null;
  modelCloudPct: number | null;
  hoursCovered: number;
}

export interface MemberSignals {
  rows: ComputedSignalRow[];
  /** regions skipped for this run, one sentence each */
  warnings: string[];
}

const HOUR_MS = 3_600_000;

// ---------------------------------------------------------------------------------------------
// Region weights, computed once per grid and region set and kept in memory.
// ---------------------------------------------------------------------------------------------

interface WeightSet {
  weights: Map<string, RegionWeights>;
  skipped: string[];
}

const weightCache = new Map<string, WeightSet>();
const MAX_CACHED_WEIGHT_SETS = 16;

function gridDescription(axes: GridAxes): string {
  const { lat, lon } = axes;
  return [lat[0], lat[lat.length - 1], lat.length, lon[0], lon[lon.length - 1], lon.length].join(',');
}

/** A version of a region set made from its content, so that equal sets share cached weights. */
export function regionSetVersion(regions: readonly SignalRegion[]): string {
  const hash = createHash('sha256');
  for (const r of [...regions].sort((a, b) => a.id.localeCompare(b.id))) hash.update(r.id).update('\u0000').update(JSON.stringify(r.geometry)).update('\u0000');
  return hash.digest('hex').slice(0, 32);
}

/**
 * Area weights of every region on a grid. In-memory cache keyed by the grid's description and
 * the region set's content hash: weights are computed once per grid and region set.
 */
export function weightsForGrid(axes: GridAxes, regions: readonly SignalRegion[]): WeightSet {
  const key = `${gridDescription(axes)}|${regionSetVersion(regions)}`;
  const cached = weightCache.get(key);
  if (cached) return cached;
  const weights = new Map<string, RegionWeights>();
  const skipped: string[] = [];
  for (const r of regions) {
    try {
      weights.set(r.id, regionWeights(r.id, r.geometry, axes.lat, axes.lon));
    } catch (err) {
      if (!(err instanceof RegionGridError)) throw err;
      skipped.push(`${err.message}; skipped for this run`);
    }
  }
  const set = { weights, skipped };
  if (weightCache.size >= MAX_CACHED_WEIGHT_SETS) weightCache.delete(weightCache.keys().next().value!);
  weightCache.set(key, set);
  return set;
}

// ---------------------------------------------------------------------------------------------
// Per step: regional means of the column signals.
// ---------------------------------------------------------------------------------------------

interface StepMeans {
  /** precipitation rate, mm s-1 */
  rate: number;
  snowShare: number;
  /** total cloud, fraction */
  cloud: number;
  /** lowest-level air temperature, degC */
  tempC: number;
  /** model running-total precipitation, mm (NaN without tp) */
  modelTotal: number;
  /** model total cloud, fraction (NaN without tcc) */
  modelCloud: number;
}

async function stepMeans(
  source: MemberFieldSource, step: number, weights: Map<string, RegionWeights>, cal: CalibrationParameters,
): Promise<Map<string, StepMeans>> {
  const { info } = source;
  const names = new Set(info.variables.map((v) => v.name));
  const shape: ColumnShape = { nlat: info.axes.lat.length, nlon: info.axes.lon.length, levelsPa: info.axes.levels };
  const t = await source.readField('t', step);
  const rh = names.has('r') ? await source.readField('r', step) : relativeHumidityField(await source.readField('q', step), t, info.axes.levels);
  const omega = await source.readOmega(step);
  const rate = condensationPrecipitationRate(t, rh, omega, shape, cal);
  const share = snowShareField(t, shape, cal);
  const cloud = cloudCover(rh, omega, shape, cal).total;
  const lowest = rainSnowLevelTemperature(t, shape, 'lowest');
  // A model field missing at one step (often tp at step 0, where the running total is 0 by
  // definition) leaves the model columns empty there rather than failing the member.
  const optional = async (name: 'tp' | 'tcc'): Promise<Float32Array | null> => {
    if (!names.has(name)) return null;
    try {
      return await source.readField(name, step);
    } catch (err) {
      if (!(err instanceof IngestError)) throw err;
      return name === 'tp' && step === 0 ? new Float32Array(shape.nlat * shape.nlon) : null;
    }
  };
  const tp = await optional('tp');
  const tcc = await optional('tcc');
  const out = new Map<string, StepMeans>();
  for (const [id, w] of weights) {
    out.set(id, {
      rate: regionalMean(rate, w),
      snowShare: regionalMean(share, w),
      cloud: regionalMean(cloud, w),
      tempC: regionalMean(lowest, w) - ZERO_CELSIUS_K,
      modelTotal: tp ? regionalMean(tp, w) : Number.NaN,
      modelCloud: tcc ? regionalMean(tcc, w) : Number.NaN,
    });
  }
  return out;
}

// ---------------------------------------------------------------------------------------------
// Per region: daily aggregation and the generation models.
// ---------------------------------------------------------------------------------------------

interface Intervals {
  starts: number[];
  ends: number[];
}

/** Daily sums of per-interval amounts. */
function daily(iv: Intervals, amounts: number[]): Map<string, number> {
  return dailyTotalsFromIntervals(iv.starts, iv.ends, amounts);
}

const finiteOrNull = (x: number | undefined): number | null => (x !== undefined && Number.isFinite(x) ? x : null);

function regionRows(
  region: SignalRegion, w: RegionWeights, series: StepMeans[], stepsHours: number[], referenceMs: number, cal: CalibrationParameters,
): ComputedSignalRow[] {
  const iv: Intervals = { starts: [], ends: [] };
  const precip: number[] = [], snow: number[] = [], hours: number[] = [];
  const cloudHours: number[] = [], tempHours: number[] = [], modelPrecip: number[] = [], modelCloudHours: number[] = [];
  for (let i = 0; i + 1 < stepsHours.length; i++) {
    const a = series[i], b = series[i + 1];
    const dtH = stepsHours[i + 1] - stepsHours[i];
    iv.starts.push(referenceMs + stepsHours[i] * HOUR_MS);
    iv.ends.push(referenceMs + stepsHours[i + 1] * HOUR_MS);
    // Trapezoid in time of the regional mean rate (the mean of a linear operation commutes with it).
    const amount = Math.max(0, 0.5 * (a.rate + b.rate) * dtH * 3600);
    precip.push(amount);
    snow.push(amount * 0.5 * (a.snowShare + b.snowShare));
    hours.push(dtH);
    cloudHours.push(0.5 * (a.cloud + b.cloud) * dtH);
    tempHours.push(0.5 * (a.tempC + b.tempC) * dtH);
    modelPrecip.push(Math.max(0, b.modelTotal - a.modelTotal));
    modelCloudHours.push(0.5 * (a.modelCloud + b.modelCloud) * dtH);
  }
  const dayHours = daily(iv, hours);
  const days = [...dayHours.keys()].sort();
  const dPrecip = daily(iv, precip), dSnow = daily(iv, snow), dCloud = daily(iv, cloudHours);
  const dTemp = daily(iv, tempHours), dModelPrecip = daily(iv, modelPrecip), dModelCloud = daily(iv, modelCloudHours);

  const solar = new Map<string, { energyGwh: number; ghiKwhM2: number }>();
  const inflow = new Map<string, number>();
  const props = region.properties;
  if (props.kind === 'solar') {
    const result = solarZoneEnergy(
      {
        referenceTimeMs: referenceMs, stepsHours,
        cloudFraction: series.map((s) => s.cloud), airTempC: series.map((s) => s.tempC),
        latDeg: w.centroidLatDeg, lonDeg: w.centroidLonDeg,
      },
      solarZoneParameters(props, cal),
    );
    for (const d of result.days) solar.set(d.day, { energyGwh: d.energyGwh, ghiKwhM2: 0 });
    for (const h of result.hours) {
      const day = new Date(h.startMs).toISOString().slice(0, 10);
      const entry = solar.get(day);
      if (entry) entry.ghiKwhM2 += h.ghi / 1000; // W m-2 over 1 h = Wh m-2; / 1000 = kWh m-2
    }
  } else {
    const results = catchmentInflowEnergy(
      days.map((day) => {
        const p = dPrecip.get(day) ?? 0;
        return { day, precipitationMm: p, snowShare: p > 0 ? (dSnow.get(day) ?? 0) / p : 0, tempC: (dTemp.get(day) ?? 0) / dayHours.get(day)! };
      }),
      catchmentParameters(props, w, cal),
    );
    for (const r of results) inflow.set(r.day, r.energyGwh);
  }

  return days.map((day) => {
    const h = dayHours.get(day)!;
    const p = dPrecip.get(day) ?? 0;
    return {
      regionId: region.id,
      day,
      precipMm: p,
      snowShare: p > 0 ? (dSnow.get(day) ?? 0) / p : 0,
      cloudPct: finiteOrNull((100 * (dCloud.get(day) ?? Number.NaN)) / h),
      ghiKwhM2: props.kind === 'solar' ? solar.get(day)?.ghiKwhM2 ?? 0 : null,
      solarGwh: props.kind === 'solar' ? solar.get(day)?.energyGwh ?? 0 : null,
      inflowGwh: props.kind === 'hydro' ? finiteOrNull(inflow.get(day)) : null,
      modelPrecipMm: finiteOrNull(dModelPrecip.get(day)),
      modelCloudPct: finiteOrNull((100 * (dModelCloud.get(day) ?? Number.NaN)) / h),
      hoursCovered: h,
    };
  });
}

/**
 * Regional daily signals of one member: the shared computation of the deriver and the CLI.
 * Reads each step once; keeps only regional means in memory.
 */
export async function computeMemberSignals(
  source: MemberFieldSource, regions: readonly SignalRegion[], cal: CalibrationParameters,
): Promise<MemberSignals> {
  const { info } = source;
  const { weights, skipped } = weightsForGrid(info.axes, regions);
  const warnings = [...skipped];
  const stepsHours = [...info.steps].sort((a, b) => a - b);
  const names = new Set(info.variables.map((v) => v.name));
  if (stepsHours.length < 2) warnings.push(`the run has ${stepsHours.length} step(s); daily signals need at least 2`);
  if (!names.has('t') || (!names.has('r') && !names.has('q'))) {
    warnings.push('the file has no temperature and humidity (t with r or q) on pressure levels; no regional signals for this run');
  }
  if (weights.size === 0 || warnings.length > skipped.length) return { rows: [], warnings };
  const levels = info.axes.levels;
  if (cal.rainSnowLevel === '850hPa' && !(levels[0] >= 85000 && levels[levels.length - 1] <= 85000)) {
    // Without 850 hPa in the column, the ramp uses the lowest level rather than failing the member.
    warnings.push(`850 hPa is outside the levels (${levels[0] / 100}..${levels[levels.length - 1] / 100} hPa): the rain/snow split used the lowest level`);
    cal = { ...cal, rainSnowLevel: 'lowest' };
  }
  const perStep: Map<string, StepMeans>[] = [];
  for (const step of stepsHours) perStep.push(await stepMeans(source, step, weights, cal));
  const referenceMs = Date.parse(info.referenceTime);
  const rows: ComputedSignalRow[] = [];
  for (const region of regions) {
    const w = weights.get(region.id);
    if (!w) continue;
    rows.push(...regionRows(region, w, perStep.map((m) => m.get(region.id)!), stepsHours, referenceMs, cal));
  }
  return { rows, warnings };
}

// ---------------------------------------------------------------------------------------------
// The pipeline's deriver and the stored rows.
// ---------------------------------------------------------------------------------------------

/** Rows per INSERT statement (16 columns each, well under PostgreSQL's parameter limit). */
const INSERT_CHUNK = 500;

/**
 * Member deriver: regional daily signals of one diagnosed member, upserted into signal_rows
 * (unique on run, member, region, day: running it again replaces, never duplicates). Regions the
 * grid does not cover are named in the member's message. Computed with the latest calibration
 * set, the deployment's code version and the run file's checksum.
 */
export const signalsDeriver: MemberDeriver = async ({ deps, run, member, reader }) => {
  const db = deps.db.db;
  // A region stored without valid plant parameters (written around the API) is left out and named, not fatal.
  const stored = await listActiveRegions(db);
  const active = stored.filter((r) => regionPropertiesSchema.safeParse(r.properties).success);
  const unusable = stored.filter((r) => !active.includes(r)).map((r) => `Signals: region ${r.id} has invalid parameters and was left out.`);
  if (active.length === 0) return;
  const calibration = await latestCalibrationSet(db);
  const source: MemberFieldSource = {
    info: reader.info,
    member,
    readField: (name, step) => reader.readField(name, member, step),
    readOmega: (step) => readOmegaPart(deps.config.storageDir, run.id, member, step, 'total'),
  };
  const computed = await computeMemberSignals(source, active, calibration.parameters);
  const { rows } = computed;
  const warnings = [...unusable, ...computed.warnings];
  const values = rows.map((r) => ({
    runId: run.id,
    member,
    ...r,
    calibrationVersion: calibration.version,
    codeVersion: deps.config.codeVersion,
    inputChecksum: run.checksum,
  }));
  await db.transaction(async (tx) => {
    for (let i = 0; i < values.length; i += INSERT_CHUNK) {
      await tx
        .insert(signalRows)
        .values(values.slice(i, i + INSERT_CHUNK))
        .onConflictDoUpdate({
          target: [signalRows.runId, signalRows.member, signalRows.regionId, signalRows.day],
          set: Object.fromEntries(UPDATED_COLUMNS.map((c) => [c, sql.raw(`excluded.${signalRows[c].name}`)])),
        });
    }
  });
  if (warnings.length) {
    await db
      .update(runMembers)
      .set({ message: `Signals: ${warnings.join(' ')}`, updatedAt: new Date() })
      .where(and(eq(runMembers.runId, run.id), eq(runMembers.member, member)));
  }
};

const UPDATED_COLUMNS = [
  'precipMm', 'snowShare', 'cloudPct', 'ghiKwhM2', 'solarGwh', 'inflowGwh', 'modelPrecipMm', 'modelCloudPct',
  'hoursCovered', 'calibrationVersion', 'codeVersion', 'inputChecksum', 'createdAt',
] as const;

/** GET /api/runs/:id/signals: the stored rows of a run, optionally of one member. */
export async function listRunSignals(db: Database, runId: string, member?: number): Promise<SignalRow[]> {
  const where = member === undefined ? eq(signalRows.runId, runId) : and(eq(signalRows.runId, runId), eq(signalRows.member, member));
  const rows = await db.select().from(signalRows).where(where).orderBy(asc(signalRows.member), asc(signalRows.regionId), asc(signalRows.day));
  return rows.map((r) => ({
    runId: r.runId,
    member: r.member,
    regionId: r.regionId,
    day: r.day,
    precipMm: r.precipMm,
    snowShare: r.snowShare,
    cloudPct: r.cloudPct,
    ghiKwhM2: r.ghiKwhM2,
    solarGwh: r.solarGwh,
    inflowGwh: r.inflowGwh,
    modelPrecipMm: r.modelPrecipMm,
    modelCloudPct: r.modelCloudPct,
    hoursCovered: r.hoursCovered,
    calibrationVersion: r.calibrationVersion,
    codeVersion: r.codeVersion,
    inputChecksum: r.inputChecksum,
  }));
}
