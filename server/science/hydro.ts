/**
 * Hydro inflow energy per catchment and UTC day (SCIENCE.md section 5): degree-day snowpack,
 * runoff coefficient, linear-reservoir routing, potential energy of the routed volume.
 */

/** Water density, kg m-3, and the gravity of the handbook formula, m s-2 (SCIENCE.md section 5). */
const WATER_DENSITY = 1000;
const HYDRO_GRAVITY = 9.81;
/** Joules per GWh. */
const JOULES_PER_GWH = 3.6e12;

/**
 * Degree-day snowmelt, mm per day: melt = DDF max(0, T - T0).
 * Source: Hock (2003), "Temperature index melt modelling in mountain areas".
 * ddf in mm d-1 K-1, temperatures in degC. Not limited by the snowpack here (see snowpackStep).
 */
export function degreeDayMelt(tempC: number, ddfMmPerDayK: number, thresholdC: number): number {
  return ddfMmPerDayK * Math.max(0, tempC - thresholdC);
}

/**
 * Linear-reservoir outflow for one step: Q_t = Q_{t-1} exp(-dt/k) + (1 - exp(-dt/k)) I_t,
 * Q and I in the same units (mm per step), dt and k in days. The exact solution of
 * dS/dt = I - S/k for inflow held over the step, written in outflow form (SCIENCE.md section 5).
 */
export function linearReservoirStep(previousOutflow: number, inflow: number, dtDays: number, recessionDays: number): number {
  const a = Math.exp(-dtDays / recessionDays);
  return previousOutflow * a + (1 - a) * inflow;
}

/**
 * Inflow energy, GWh, of a water volume through a head: E = rho g H eta V,
 * E[GWh] = V[m3] 1000 9.81 H eta / 3.6e12 (handbook hydropower formula).
 */
export function hydropowerEnergyGwh(volumeM3: number, headM: number, efficiency: number): number {
  return (volumeM3 * WATER_DENSITY * HYDRO_GRAVITY * headM * efficiency) / JOULES_PER_GWH;
}

/** Hydropower, MW, of a discharge through a head: P = rho g Q H eta (handbook formula). */
export function hydropowerMw(dischargeM3PerS: number, headM: number, efficiency: number): number {
  return (WATER_DENSITY * HYDRO_GRAVITY * dischargeM3PerS * headM * efficiency) / 1e6;
}

export interface CatchmentParameters {
  /** catchment area, m2 (from the polygon: regions.ts) */
  areaM2: number;
  headM: number;
  /** 0..1 */
  efficiency: number;
  /** 0..1 */
  runoffCoefficient: number;
  /** linear-reservoir recession constant k, days */
  recessionDays: number;
  snowDdfMmPerDayK: number;
  meltThresholdC: number;
}

export interface CatchmentDayInput {
  /** UTC day, YYYY-MM-DD */
  day: string;
  /** catchment-mean precipitation of the day, mm */
  precipitationMm: number;
  /** share of it falling as snow, 0..1 */
  snowShare: number;
  /** catchment-mean temperature of the day, degC (drives melt) */
  tempC: number;
}

export interface CatchmentState {
  /** snow water equivalent, mm */
  sweMm: number;
  /** routed outflow of the previous day, mm d-1 */
  outflowMmPerDay: number;
}

export interface CatchmentDayResult extends CatchmentState {
  day: string;
  rainMm: number;
  snowfallMm: number;
  meltMm: number;
  runoffMm: number;
  volumeM3: number;
  energyGwh: number;
}

/**
 * Daily water balance and inflow energy of one catchment. Each day: snowfall joins the pack,
 * melt (degree-day, limited to the pack) and rain form the liquid water, runoff = coefficient x
 * liquid water, routed through the linear reservoir (dt = 1 day); the routed depth times the
 * area is the day's volume, and its energy follows from head and efficiency.
 */
export function catchmentInflowEnergy(
  days: CatchmentDayInput[], catchment: CatchmentParameters,
  initial: CatchmentState = { sweMm: 0, outflowMmPerDay: 0 },
): CatchmentDayResult[] {
  if (!(catchment.areaM2 > 0) || !(catchment.recessionDays > 0)) {
    throw new RangeError(`catchmentInflowEnergy: area (${catchment.areaM2} m2) and recession constant (${catchment.recessionDays} d) must be positive`);
  }
  let { sweMm, outflowMmPerDay } = initial;
  const results: CatchmentDayResult[] = [];
  for (const d of days) {
    const precipitation = Math.max(0, d.precipitationMm);
    const share = Math.min(1, Math.max(0, d.snowShare));
    const snowfallMm = precipitation * share;
    const rainMm = precipitation - snowfallMm;
    sweMm += snowfallMm;
    const meltMm = Math.min(sweMm, degreeDayMelt(d.tempC, catchment.snowDdfMmPerDayK, catchment.meltThresholdC));
    sweMm -= meltMm;
    const runoffMm = catchment.runoffCoefficient * (rainMm + meltMm);
    outflowMmPerDay = linearReservoirStep(outflowMmPerDay, runoffMm, 1, catchment.recessionDays);
    const volumeM3 = (outflowMmPerDay / 1000) * catchment.areaM2;
    results.push({
      day: d.day, rainMm, snowfallMm, meltMm, runoffMm, sweMm, outflowMmPerDay, volumeM3,
      energyGwh: hydropowerEnergyGwh(volumeM3, catchment.headM, catchment.efficiency),
    });
  }
  return results;
}

/**
 * Sums interval amounts (e.g. precipitation accumulations, mm) into UTC days, sharing an
 * interval that straddles midnight in proportion to its time in each day (the rate is taken
 * as constant over the interval). Interval bounds in ms since epoch.
 */
export function dailyTotalsFromIntervals(startsMs: number[], endsMs: number[], amounts: ArrayLike<number>): Map<string, number> {
  const dayMs = 86_400_000;
  const totals = new Map<string, number>();
  for (let i = 0; i < startsMs.length; i++) {
    const span = endsMs[i] - startsMs[i];
    if (!(span > 0)) throw new RangeError(`dailyTotalsFromIntervals: interval ${i} has no duration`);
    for (let t = startsMs[i]; t < endsMs[i];) {
      const dayEnd = (Math.floor(t / dayMs) + 1) * dayMs;
      const until = Math.min(dayEnd, endsMs[i]);
      const key = new Date(t).toISOString().slice(0, 10);
      totals.set(key, (totals.get(key) ?? 0) + (amounts[i] * (until - t)) / span);
      t = until;
    }
  }
  return totals;
}
