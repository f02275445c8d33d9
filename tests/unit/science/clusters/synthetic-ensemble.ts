/**
 * Hand-made 500 hPa ensembles for the clustering tests: a regular 0.75 degree grid over the
 * North Atlantic and Europe (121 lon x 81 lat, 20..80 N, 40 W..50 E), a flat 5500 gpm base,
 * and members built from known anomaly patterns plus seeded Gaussian noise.
 */
import { mulberry32 } from '../../../../server/science/random.ts';

export const N_LON = 121;
export const N_LAT = 81;
export const LAT = Float64Array.from({ length: N_LAT }, (_, i) => 20 + 0.75 * i);
export const LON = Float64Array.from({ length: N_LON }, (_, j) => -40 + 0.75 * j);

export function gaussianSource(seed: number): () => number {
  const uniform = mulberry32(seed);
  return () => {
    // Box-Muller; 1 - u keeps the logarithm finite
    const u = 1 - uniform(), v = uniform();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
}

function gridPattern(f: (lat: number, lon: number) => number): Float64Array {
  const out = new Float64Array(N_LAT * N_LON);
  for (let i = 0; i < N_LAT; i++) for (let j = 0; j < N_LON; j++) out[i * N_LON + j] = f(LAT[i], LON[j]);
  return out;
}

const bump = (lat0: number, lon0: number, radius: number) => (lat: number, lon: number) =>
  Math.exp(-((lat - lat0) ** 2 + (lon - lon0) ** 2) / (2 * radius * radius));

/** Three regime-like anomaly patterns (gpm): Scandinavian block, Atlantic trough, zonal flow. */
export const REGIME_PATTERNS: Float64Array[] = [
  gridPattern((lat, lon) => 150 * bump(62, 15, 9)(lat, lon) - 60 * bump(45, -20, 10)(lat, lon)),
  gridPattern((lat, lon) => -140 * bump(52, -15, 10)(lat, lon) + 50 * bump(50, 25, 8)(lat, lon)),
  gridPattern((lat) => -90 * Math.tanh((lat - 55) / 8)),
];

/** Extra large-scale shapes for ensembles with a spread of explained variances. */
export const SPREAD_PATTERNS: Float64Array[] = [
  ...REGIME_PATTERNS,
  gridPattern((lat, lon) => Math.sin(((lon + 40) * Math.PI) / 45) * Math.cos(((lat - 50) * Math.PI) / 60)),
  gridPattern((lat, lon) => bump(35, 30, 7)(lat, lon) - bump(70, -30, 7)(lat, lon)),
  gridPattern((lat, lon) => Math.cos(((lon + 40) * Math.PI) / 30) * Math.sin(((lat - 20) * Math.PI) / 30)),
];

export interface PlantedEnsemble {
  fields: Float32Array[];
  /** planted group of each member, groups numbered by size descending */
  groups: number[];
}

/**
 * Members from REGIME_PATTERNS: group g has sizes[g] members, each the base plus pattern g
 * scaled by 1 +- 10 % and white noise of noiseGpm; members are interleaved in a seeded order.
 */
export function plantedEnsemble(sizes: number[], seed: number, noiseGpm = 5): PlantedEnsemble {
  const gauss = gaussianSource(seed);
  const uniform = mulberry32(seed ^ 0x5bd1e995);
  const groups = sizes.flatMap((size, g) => new Array<number>(size).fill(g));
  for (let i = groups.length - 1; i > 0; i--) {
    const j = Math.floor(uniform() * (i + 1));
    [groups[i], groups[j]] = [groups[j], groups[i]];
  }
  const fields = groups.map((g) => {
    const scale = 1 + 0.1 * gauss();
    const pattern = REGIME_PATTERNS[g];
    return Float32Array.from(pattern, (v) => 5500 + scale * v + noiseGpm * gauss());
  });
  return { fields, groups };
}

/** Members = base + sum_j a_mj P_j + noise, a_mj ~ N(0, sigmas[j]): distinct EOF variances. */
export function spreadEnsemble(members: number, sigmas: number[], seed: number, noiseGpm = 3): Float32Array[] {
  const gauss = gaussianSource(seed);
  return Array.from({ length: members }, () => {
    const field = new Float64Array(N_LAT * N_LON).fill(5500);
    sigmas.forEach((sigma, j) => {
      const a = (sigma * gauss()) / (j < REGIME_PATTERNS.length ? 100 : 1);
      const pattern = SPREAD_PATTERNS[j];
      for (let g = 0; g < field.length; g++) field[g] += a * pattern[g];
    });
    return Float32Array.from(field, (v) => v + noiseGpm * gauss());
  });
}
