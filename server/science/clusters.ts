/**
 * Clustering of ensemble members into a few scenario groups (SCIENCE.md section 6): EOF
 * truncation of 500 hPa geopotential anomalies followed by k-means in the space of the
 * leading principal components, the regime-analysis method of Michelangeli, Vautard and
 * Legras (1995, J. Atmos. Sci. 52, 1237-1256), here applied to the members of one ensemble
 * forecast. Cluster quality is the mean silhouette of Rousseeuw (1987).
 *
 * Fields are one Float32Array per member laid out [lat][lon] (index = iLat * nLon + iLon),
 * in geopotential metres (gpm) or m^2 s^-2: the method is linear, the units carry through.
 */
import { symmetricEigen } from './linalg.ts';
import { mulberry32 } from './random.ts';

export class ClusterInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ClusterInputError';
  }
}

export const MIN_CLUSTERS = 2;
export const MAX_CLUSTERS = 6;

interface GridShape {
  members: number;
  nLat: number;
  nLon: number;
  points: number;
}

function checkFields(fields: Float32Array[], lat: Float64Array): GridShape {
  if (!Array.isArray(fields) || fields.length < 2) throw new ClusterInputError(`ensemble has ${fields?.length ?? 0} members; EOF analysis needs at least 2`);
  if (lat.length < 1) throw new ClusterInputError('latitude axis is empty');
  for (let i = 0; i < lat.length; i++) {
    if (!(Math.abs(lat[i]) <= 90)) throw new ClusterInputError(`latitude ${i} is ${lat[i]}; expected degrees in -90..90`);
  }
  const points = fields[0].length;
  if (points === 0 || points % lat.length !== 0) {
    throw new ClusterInputError(`member 0 has ${points} values, not a whole number of rows of the ${lat.length} latitudes`);
  }
  const nLon = points / lat.length;
  fields.forEach((f, m) => {
    if (f.length !== points) throw new ClusterInputError(`member ${m} has ${f.length} values; member 0 has ${points} (${lat.length} x ${nLon})`);
    for (let g = 0; g < points; g++) {
      if (!Number.isFinite(f[g])) {
        throw new ClusterInputError(`member ${m} has ${f[g]} at lat index ${Math.floor(g / nLon)}, lon index ${g % nLon}`);
      }
    }
  });
  return { members: fields.length, nLat: lat.length, nLon, points };
}

/**
 * EOF area weight per latitude row, sqrt(cos lat) (dimensionless): weighting the anomalies
 * by sqrt(cos lat) makes the covariance matrix area-weighted, so the EOFs do not over-count
 * the crowded high-latitude points of a regular lat-lon grid (Chung and Nigam 1999, J.
 * Geophys. Res. 104, 16925-16928; Hannachi, Jolliffe and Stephenson 2007, Int. J. Climatol.
 * 27, 1119-1152).
 */
export function eofAreaWeights(lat: Float64Array): Float64Array {
  return Float64Array.from(lat, (deg) => Math.sqrt(Math.max(0, Math.cos((deg * Math.PI) / 180))));
}

export interface EofOptions {
  /** smallest cumulative explained-variance fraction to retain, in (0, 1]; default 0.9 */
  varianceFraction?: number;
  /** cap on the number of retained modes; default 6 */
  maxModes?: number;
}

export interface EofResult {
  /** retained modes */
  modes: number;
  /** ensemble-mean field, same units and layout as the input */
  meanField: Float64Array;
  /** patterns[i]: EOF i over the grid, in area-weighted space, unit Euclidean norm */
  patterns: Float64Array[];
  /** pcs[m][i]: principal component i of member m (weighted field units) */
  pcs: Float64Array[];
  /** variance fraction of each retained mode */
  explainedVariance: Float64Array;
  /** variance fraction of every resolved mode (at most members - 1) */
  explainedVarianceAll: Float64Array;
}

/** Below this fraction of the leading eigenvalue a mode is numerical rank deficiency. */
const RANK_TOLERANCE = 1e-10;

/**
 * Empirical orthogonal functions of an ensemble (Lorenz 1956; Hannachi et al. 2007).
 * X (members x points) holds the anomalies from the ensemble mean times sqrt(cos lat); its
 * SVD X = U S V^T gives the EOFs (rows of V^T), the PCs U S and the explained variances
 * s_i^2 / sum s^2. Because members << points, the SVD is obtained from the small Gram matrix
 * X X^T = U S^2 U^T (the "snapshot" method, Sirovich 1987), eigen-decomposed by Jacobi, and
 * V = X^T U S^-1. Sign convention: each pattern's largest-magnitude element is positive.
 * Retains the fewest modes reaching options.varianceFraction, capped by options.maxModes.
 */
export function eofAnalysis(fields: Float32Array[], lat: Float64Array, options: EofOptions = {}): EofResult {
  const fraction = options.varianceFraction ?? 0.9;
  const maxModes = options.maxModes ?? 6;
  if (!(fraction > 0 && fraction <= 1)) throw new ClusterInputError(`varianceFraction ${fraction} is outside (0, 1]`);
  if (!Number.isInteger(maxModes) || maxModes < 1) throw new ClusterInputError(`maxModes ${maxModes} must be an integer >= 1`);
  const shape = checkFields(fields, lat);
  const { meanField, anomalies } = weightedAnomalies(fields, lat, shape);
  const n = shape.members, p = shape.points;

  const gram = new Float64Array(n * n);
  let total = 0;
  for (let i = 0; i < n; i++) {
    const xi = anomalies.subarray(i * p, (i + 1) * p);
    for (let j = 0; j <= i; j++) {
      const xj = anomalies.subarray(j * p, (j + 1) * p);
      let s = 0;
      for (let g = 0; g < p; g++) s += xi[g] * xj[g];
      gram[i * n + j] = s;
      gram[j * n + i] = s;
    }
    total += gram[i * n + i];
  }
  if (!(total > 0)) throw new ClusterInputError('all members are identical: no anomaly variance to analyse');

  const eigen = symmetricEigen(gram, n);
  let rank = 0;
  while (rank < n && eigen.values[rank] > RANK_TOLERANCE * eigen.values[0]) rank++;
  const explainedVarianceAll = Float64Array.from(eigen.values.subarray(0, rank), (v) => v / total);
  const modes = Math.min(modeCount(explainedVarianceAll, fraction), maxModes);

  const patterns: Float64Array[] = [];
  const pcs = Array.from({ length: n }, () => new Float64Array(modes));
  for (let i = 0; i < modes; i++) {
    const singular = Math.sqrt(eigen.values[i]);
    const u = eigen.vectors[i];
    const pattern = new Float64Array(p);
    for (let m = 0; m < n; m++) {
      const w = u[m] / singular;
      const xm = anomalies.subarray(m * p, (m + 1) * p);
      for (let g = 0; g < p; g++) pattern[g] += w * xm[g];
    }
    const sign = largestMagnitudeSign(pattern);
    for (let g = 0; g < p; g++) pattern[g] *= sign;
    for (let m = 0; m < n; m++) pcs[m][i] = sign * singular * u[m];
    patterns.push(pattern);
  }
  return { modes, meanField, patterns, pcs, explainedVariance: explainedVarianceAll.slice(0, modes), explainedVarianceAll };
}

function weightedAnomalies(fields: Float32Array[], lat: Float64Array, shape: GridShape): { meanField: Float64Array; anomalies: Float64Array } {
  const { members: n, points: p, nLon } = shape;
  const meanField = new Float64Array(p);
  for (const f of fields) for (let g = 0; g < p; g++) meanField[g] += f[g];
  for (let g = 0; g < p; g++) meanField[g] /= n;
  const rowWeight = eofAreaWeights(lat);
  const anomalies = new Float64Array(n * p);
  fields.forEach((f, m) => {
    const offset = m * p;
    for (let g = 0; g < p; g++) anomalies[offset + g] = rowWeight[Math.floor(g / nLon)] * (f[g] - meanField[g]);
  });
  return { meanField, anomalies };
}

/** Fewest leading modes whose cumulative fraction reaches the target (1e-12 slack for round-off). */
function modeCount(fractions: Float64Array, target: number): number {
  let cumulative = 0;
  for (let i = 0; i < fractions.length; i++) {
    cumulative += fractions[i];
    if (cumulative >= target - 1e-12) return i + 1;
  }
  return fractions.length;
}

function largestMagnitudeSign(v: Float64Array): 1 | -1 {
  let largest = 0;
  for (let g = 1; g < v.length; g++) if (Math.abs(v[g]) > Math.abs(v[largest])) largest = g;
  return v[largest] < 0 ? -1 : 1;
}

export interface KMeansOptions {
  /** independent k-means++ starts; the lowest within-cluster sum of squares wins; default 20 */
  restarts?: number;
  /** cap on Lloyd iterations per start; default 300 */
  maxIterations?: number;
}

export interface KMeansResult {
  /** assignments[m]: cluster of point m, labels ordered by size descending then lowest member */
  assignments: Int32Array;
  /** centroids[c] of cluster c */
  centroids: Float64Array[];
  /** within-cluster sum of squared Euclidean distances */
  withinSumOfSquares: number;
}

function checkClusterCount(k: number): void {
  if (!Number.isInteger(k) || k < MIN_CLUSTERS || k > MAX_CLUSTERS) {
    throw new ClusterInputError(`number of clusters k = ${k} must be an integer in ${MIN_CLUSTERS}..${MAX_CLUSTERS}`);
  }
}

function squaredDistance(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += (a[i] - b[i]) ** 2;
  return s;
}

/**
 * k-means partition of points (Lloyd 1982; MacQueen 1967) with k-means++ seeding (Arthur and
 * Vassilvitskii 2007) from the seeded PRNG, repeated `restarts` times, keeping the lowest
 * within-cluster sum of squares as Michelangeli et al. (1995) do with their many random
 * starts. Deterministic: the same points, k and seed give the same result, whatever the
 * order of the points; labels are canonical (size descending, then lowest member index).
 */
export function kMeans(points: Float64Array[], k: number, seed: number, options: KMeansOptions = {}): KMeansResult {
  checkClusterCount(k);
  const restarts = options.restarts ?? 20;
  const maxIterations = options.maxIterations ?? 300;
  if (!Number.isInteger(restarts) || restarts < 1) throw new ClusterInputError(`restarts ${restarts} must be an integer >= 1`);
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new ClusterInputError(`maxIterations ${maxIterations} must be an integer >= 1`);
  if (!Number.isFinite(seed)) throw new ClusterInputError(`seed ${seed} must be a finite number`);
  if (points.length < k) throw new ClusterInputError(`${points.length} points cannot form ${k} clusters`);
  const dim = points[0].length;
  points.forEach((pt, m) => {
    if (pt.length !== dim) throw new ClusterInputError(`point ${m} has ${pt.length} coordinates; point 0 has ${dim}`);
    if (!pt.every(Number.isFinite)) throw new ClusterInputError(`point ${m} has a non-finite coordinate`);
  });

  // The starts run on the points in a canonical (lexicographic) order, so that the members'
  // order in the upload cannot change which local optimum the seeded starts reach.
  const order = Array.from(points, (_, m) => m).sort((a, b) => lexicographic(points[a], points[b]) || a - b);
  const sorted = order.map((m) => points[m]);
  const random = mulberry32(seed);
  let best: KMeansResult | null = null;
  for (let r = 0; r < restarts; r++) {
    const run = lloyd(sorted, kMeansPlusPlus(sorted, k, random), maxIterations);
    if (!best || run.withinSumOfSquares < best.withinSumOfSquares) best = run;
  }
  const assignments = new Int32Array(points.length);
  order.forEach((m, s) => { assignments[m] = best!.assignments[s]; });
  return canonicalLabels(points, { ...best!, assignments }, k);
}

function lexicographic(a: Float64Array, b: Float64Array): number {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return a[i] - b[i];
  return 0;
}

/** k-means++: each further centre drawn with probability proportional to D^2 to the nearest. */
function kMeansPlusPlus(points: Float64Array[], k: number, random: () => number): Float64Array[] {
  const n = points.length;
  const centres = [Float64Array.from(points[Math.floor(random() * n)])];
  const nearest = Float64Array.from(points, (pt) => squaredDistance(pt, centres[0]));
  while (centres.length < k) {
    let sum = 0;
    for (let m = 0; m < n; m++) sum += nearest[m];
    if (!(sum > 0)) throw new ClusterInputError(`fewer than k = ${k} distinct points: cannot form ${k} clusters`);
    const target = random() * sum;
    let pick = 0, cumulative = nearest[0];
    while (cumulative <= target && pick < n - 1) cumulative += nearest[++pick];
    while (nearest[pick] === 0) pick--; // round-off at the end of the cumulative sum
    const centre = Float64Array.from(points[pick]);
    centres.push(centre);
    for (let m = 0; m < n; m++) nearest[m] = Math.min(nearest[m], squaredDistance(points[m], centre));
  }
  return centres;
}

/** Lloyd iterations until no assignment changes; an emptied cluster takes the worst-fitted point. */
function lloyd(points: Float64Array[], centroids: Float64Array[], maxIterations: number): KMeansResult {
  const n = points.length, k = centroids.length, dim = points[0].length;
  const assignments = new Int32Array(n).fill(-1);
  const distance = new Float64Array(n);
  for (let iteration = 0; iteration < maxIterations; iteration++) {
    let changed = false;
    for (let m = 0; m < n; m++) {
      let bestC = 0, bestD = squaredDistance(points[m], centroids[0]);
      for (let c = 1; c < k; c++) {
        const d = squaredDistance(points[m], centroids[c]);
        if (d < bestD) { bestD = d; bestC = c; }
      }
      distance[m] = bestD;
      if (assignments[m] !== bestC) { assignments[m] = bestC; changed = true; }
    }
    const sizes = new Int32Array(k);
    for (let m = 0; m < n; m++) sizes[assignments[m]]++;
    for (let c = 0; c < k; c++) {
      if (sizes[c] > 0) continue;
      let worst = -1;
      for (let m = 0; m < n; m++) if (sizes[assignments[m]] > 1 && (worst < 0 || distance[m] > distance[worst])) worst = m;
      sizes[assignments[worst]]--;
      assignments[worst] = c;
      sizes[c] = 1;
      distance[worst] = 0;
      changed = true;
    }
    if (!changed) break;
    for (let c = 0; c < k; c++) centroids[c] = new Float64Array(dim);
    for (let m = 0; m < n; m++) for (let i = 0; i < dim; i++) centroids[assignments[m]][i] += points[m][i];
    for (let c = 0; c < k; c++) for (let i = 0; i < dim; i++) centroids[c][i] /= sizes[c];
  }
  let withinSumOfSquares = 0;
  for (let m = 0; m < n; m++) withinSumOfSquares += squaredDistance(points[m], centroids[assignments[m]]);
  return { assignments, centroids, withinSumOfSquares };
}

function canonicalLabels(points: Float64Array[], result: KMeansResult, k: number): KMeansResult {
  const sizes = new Array<number>(k).fill(0);
  const firstMember = new Array<number>(k).fill(Infinity);
  result.assignments.forEach((c, m) => {
    sizes[c]++;
    firstMember[c] = Math.min(firstMember[c], m);
  });
  const order = Array.from({ length: k }, (_, c) => c).sort((a, b) => sizes[b] - sizes[a] || firstMember[a] - firstMember[b]);
  const newLabel = new Int32Array(k);
  order.forEach((old, label) => { newLabel[old] = label; });
  const assignments = Int32Array.from(result.assignments, (c) => newLabel[c]);
  const centroids = order.map((old) => result.centroids[old]);
  let withinSumOfSquares = 0;
  points.forEach((pt, m) => { withinSumOfSquares += squaredDistance(pt, centroids[assignments[m]]); });
  return { assignments, centroids, withinSumOfSquares };
}

/**
 * Silhouette of each point (Rousseeuw 1987, J. Comput. Appl. Math. 20, 53-65), Euclidean
 * distance: s = (b - a) / max(a, b), a the mean distance to the other members of its own
 * cluster, b the smallest mean distance to the members of another cluster; s = 0 for a
 * point alone in its cluster (Rousseeuw's convention). Dimensionless, in [-1, 1].
 */
export function silhouetteSamples(points: Float64Array[], assignments: ArrayLike<number>): Float64Array {
  const n = points.length;
  if (assignments.length !== n) throw new ClusterInputError(`${n} points but ${assignments.length} assignments`);
  let k = 0;
  for (let m = 0; m < n; m++) {
    if (!Number.isInteger(assignments[m]) || assignments[m] < 0) throw new ClusterInputError(`assignment ${m} is ${assignments[m]}; labels are integers >= 0`);
    k = Math.max(k, assignments[m] + 1);
  }
  const sizes = new Array<number>(k).fill(0);
  for (let m = 0; m < n; m++) sizes[assignments[m]]++;
  if (sizes.filter((s) => s > 0).length < 2) throw new ClusterInputError('silhouette needs at least 2 non-empty clusters');

  const silhouettes = new Float64Array(n);
  const sums = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    const own = assignments[i];
    if (sizes[own] === 1) continue;
    sums.fill(0);
    for (let j = 0; j < n; j++) if (j !== i) sums[assignments[j]] += Math.sqrt(squaredDistance(points[i], points[j]));
    const a = sums[own] / (sizes[own] - 1);
    let b = Infinity;
    for (let c = 0; c < k; c++) if (c !== own && sizes[c] > 0) b = Math.min(b, sums[c] / sizes[c]);
    const scale = Math.max(a, b);
    silhouettes[i] = scale > 0 ? (b - a) / scale : 0;
  }
  return silhouettes;
}

/** Mean silhouette over all points (Rousseeuw 1987): the overall quality of a partition. */
export function silhouetteScore(points: Float64Array[], assignments: ArrayLike<number>): number {
  const s = silhouetteSamples(points, assignments);
  return s.reduce((sum, v) => sum + v, 0) / s.length;
}

export interface ClusterEnsembleOptions extends EofOptions, KMeansOptions {
  /** number of scenario groups, 2..6 */
  k: number;
  /** PRNG seed of the k-means++ starts; default 1 */
  seed?: number;
}

export interface EnsembleCluster {
  id: number;
  /** member indices, ascending */
  members: number[];
  size: number;
  /** mean 500 hPa field of the cluster's members, input units and layout */
  meanField: Float32Array;
}

export interface EnsembleClustering {
  k: number;
  /** retained EOF modes (dimension of the space the k-means works in) */
  modes: number;
  assignments: Int32Array;
  clusters: EnsembleCluster[];
  /** pcs[m]: retained principal components of member m */
  pcs: Float64Array[];
  /** variance fraction of each retained EOF */
  explainedVariance: Float64Array;
  /** mean silhouette in PC space */
  silhouette: number;
  memberSilhouettes: Float64Array;
}

/**
 * Scenario groups of an ensemble: EOF truncation of the 500 hPa geopotential anomalies, then
 * k-means on the retained PCs (Michelangeli, Vautard and Legras 1995). Needs at least k + 1
 * members so that at least one group has two members and the silhouette is informative.
 */
export function clusterEnsemble(fields: Float32Array[], lat: Float64Array, options: ClusterEnsembleOptions): EnsembleClustering {
  const { k } = options;
  checkClusterCount(k);
  if (!Array.isArray(fields) || fields.length < k + 1) {
    throw new ClusterInputError(`${fields?.length ?? 0} members are too few for k = ${k} clusters; need at least ${k + 1}`);
  }
  const eof = eofAnalysis(fields, lat, options);
  const partition = kMeans(eof.pcs, k, options.seed ?? 1, options);
  const points = fields[0].length;
  const clusters: EnsembleCluster[] = Array.from({ length: k }, (_, id) => {
    const members: number[] = [];
    partition.assignments.forEach((c, m) => { if (c === id) members.push(m); });
    const sum = new Float64Array(points);
    for (const m of members) for (let g = 0; g < points; g++) sum[g] += fields[m][g];
    const meanField = Float32Array.from(sum, (s) => s / members.length);
    return { id, members, size: members.length, meanField };
  });
  const memberSilhouettes = silhouetteSamples(eof.pcs, partition.assignments);
  return {
    k,
    modes: eof.modes,
    assignments: partition.assignments,
    clusters,
    pcs: eof.pcs,
    explainedVariance: eof.explainedVariance,
    silhouette: memberSilhouettes.reduce((s, v) => s + v, 0) / memberSilhouettes.length,
    memberSilhouettes,
  };
}
