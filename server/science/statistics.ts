/**
 * Scenario statistics (SCIENCE.md section 6): weighted percentiles across scenarios and the
 * change against the previous run.
 */

export class StatisticsInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'StatisticsInputError';
  }
}

/**
 * Weighted percentile, p in [0, 100], of values with non-negative weights.
 *
 * Definition. Equal weights: Hyndman and Fan (1996) sample quantile type 7, the default
 * ('linear') of numpy.percentile and of R's quantile(): sorted x_1..x_n sit at plotting
 * positions (k - 1) / (n - 1), and the percentile interpolates linearly between them.
 * Unequal weights: with weights normalised to sum 1 and values sorted, sample k sits at the
 * centre of its own share of the cumulative weight, c_k = S_k - w_k / 2 (S_k the cumulative
 * sum), and the positions are rescaled so the first sample is at 0 and the last at 1:
 * p_k = (c_k - c_1) / (c_n - c_1). For equal weights c_k = (k - 1/2) / n and p_k reduces to
 * (k - 1) / (n - 1), i.e. exactly type 7; the rule is symmetric (reversing the order of the
 * values mirrors the result) and a heavier scenario pulls the percentiles towards itself.
 * Values with zero weight take no part; NaN values are refused.
 */
export function weightedPercentile(values: ArrayLike<number>, weights: ArrayLike<number> | null, p: number): number {
  return weightedPercentiles(values, weights, [p])[0];
}

/** Several weighted percentiles of the same sample (sorted once); see weightedPercentile. */
export function weightedPercentiles(values: ArrayLike<number>, weights: ArrayLike<number> | null, ps: number[]): number[] {
  const n = values.length;
  if (weights && weights.length !== n) throw new StatisticsInputError(`weightedPercentiles: ${n} values but ${weights.length} weights`);
  const items: { x: number; w: number }[] = [];
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i] : 1;
    if (!(w >= 0) || !Number.isFinite(w)) throw new StatisticsInputError(`weightedPercentiles: weight ${i} is ${w}; weights must be finite and >= 0`);
    if (Number.isNaN(values[i])) throw new StatisticsInputError(`weightedPercentiles: value ${i} is NaN`);
    if (w > 0) items.push({ x: values[i], w });
  }
  if (items.length === 0) throw new StatisticsInputError('weightedPercentiles: no value with a positive weight');
  for (const p of ps) if (!(p >= 0 && p <= 100)) throw new StatisticsInputError(`weightedPercentiles: percentile ${p} is outside 0..100`);
  items.sort((a, b) => a.x - b.x);
  if (items.length === 1) return ps.map(() => items[0].x);

  const total = items.reduce((s, it) => s + it.w, 0);
  const positions = new Float64Array(items.length);
  let cumulative = 0;
  items.forEach((it, k) => {
    cumulative += it.w / total;
    positions[k] = cumulative - it.w / total / 2;
  });
  const first = positions[0];
  const span = positions[items.length - 1] - first;
  for (let k = 0; k < items.length; k++) positions[k] = (positions[k] - first) / span;

  return ps.map((p) => {
    const q = p / 100;
    let k = 0;
    while (k + 2 < items.length && positions[k + 1] < q) k++;
    const lo = positions[k], hi = positions[k + 1];
    const f = hi > lo ? Math.min(1, Math.max(0, (q - lo) / (hi - lo))) : 0;
    return items[k].x + f * (items[k + 1].x - items[k].x);
  });
}

export interface SpreadSummary {
  p10: number;
  p50: number;
  p90: number;
  /** weighted mean */
  mean: number;
}

/** P10, P50, P90 and the weighted mean of a set of scenarios (weights null: equal). */
export function scenarioSpread(values: ArrayLike<number>, weights: ArrayLike<number> | null): SpreadSummary {
  const [p10, p50, p90] = weightedPercentiles(values, weights, [10, 50, 90]);
  let s = 0, ws = 0;
  for (let i = 0; i < values.length; i++) {
    const w = weights ? weights[i] : 1;
    s += w * values[i];
    ws += w;
  }
  return { p10, p50, p90, mean: s / ws };
}

export interface RunChange {
  key: string;
  current: number | null;
  previous: number | null;
  /** current - previous; null when either is missing */
  change: number | null;
  /** 100 (current - previous) / |previous|; null when either is missing or previous is 0 */
  changePct: number | null;
}

/**
 * Change of each keyed number (e.g. "region|day|P50") against the previous run of the same
 * model. Keys present in only one run are kept with the other side null, so a trader sees
 * what appeared and what dropped out.
 */
export function changeAgainstPreviousRun(current: ReadonlyMap<string, number>, previous: ReadonlyMap<string, number>): RunChange[] {
  const keys = [...new Set([...current.keys(), ...previous.keys()])].sort();
  return keys.map((key) => {
    const c = current.get(key) ?? null;
    const p = previous.get(key) ?? null;
    const change = c !== null && p !== null ? c - p : null;
    const changePct = change !== null && p !== 0 && p !== null ? (100 * change) / Math.abs(p) : null;
    return { key, current: c, previous: p, change, changePct };
  });
}
