import { describe, expect, it } from 'vitest';
import {
  ClusterInputError,
  clusterEnsemble,
  eofAnalysis,
  eofAreaWeights,
  kMeans,
  silhouetteSamples,
  silhouetteScore,
} from '../../../../server/science/clusters.ts';
import { LAT, N_LAT, N_LON, gaussianSource, plantedEnsemble, spreadEnsemble } from './synthetic-ensemble.ts';

const f32 = (...v: number[]) => Float32Array.from(v);
const points = (...rows: number[][]) => rows.map((r) => Float64Array.from(r));

/** Same partition up to the naming of the clusters. */
function samePartition(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  const forward = new Map<number, number>(), backward = new Map<number, number>();
  for (let i = 0; i < a.length; i++) {
    if ((forward.get(a[i]) ?? b[i]) !== b[i] || (backward.get(b[i]) ?? a[i]) !== a[i]) return false;
    forward.set(a[i], b[i]);
    backward.set(b[i], a[i]);
  }
  return true;
}

describe('eofAnalysis on hand-worked ensembles', () => {
  // One latitude row at the equator (weight 1), two grid points. Anomalies from the mean
  // (5500, 5500): (+-3, +-1) in all four sign combinations, so the variance along point 0 is
  // 4 * 9 = 36 and along point 1 is 4 * 1 = 4: fractions 0.9 and 0.1, EOF 1 = (1, 0) with PCs
  // (3, -3, 3, -3), EOF 2 = (0, 1) with PCs (1, 1, -1, -1).
  const fields = [f32(5503, 5501), f32(5497, 5501), f32(5503, 5499), f32(5497, 5499)];
  const equator = Float64Array.of(0);

  it('gives the explained variances, patterns and PCs worked out by hand', () => {
    const eof = eofAnalysis(fields, equator, { varianceFraction: 1 });
    expect(eof.modes).toBe(2);
    expect(eof.explainedVariance[0]).toBeCloseTo(0.9, 12);
    expect(eof.explainedVariance[1]).toBeCloseTo(0.1, 12);
    expect(eof.patterns[0][0]).toBeCloseTo(1, 12);
    expect(eof.patterns[0][1]).toBeCloseTo(0, 12);
    expect(eof.patterns[1][1]).toBeCloseTo(1, 12);
    expect(eof.pcs.map((pc) => pc[0])).toEqual([3, -3, 3, -3].map((v) => expect.closeTo(v, 12)));
    expect(eof.pcs.map((pc) => pc[1])).toEqual([1, 1, -1, -1].map((v) => expect.closeTo(v, 12)));
    expect(Array.from(eof.meanField)).toEqual([5500, 5500]);
  });

  it('keeps the fewest modes reaching the variance fraction, capped by maxModes', () => {
    expect(eofAnalysis(fields, equator, { varianceFraction: 0.9 }).modes).toBe(1);
    expect(eofAnalysis(fields, equator, { varianceFraction: 0.95 }).modes).toBe(2);
    expect(eofAnalysis(fields, equator, { varianceFraction: 0.95, maxModes: 1 }).modes).toBe(1);
    expect(eofAnalysis(fields, equator).modes).toBe(1); // default 90 %
  });

  it('weights anomalies by sqrt(cos lat) (Hannachi et al. 2007): equal anomalies at 60 N carry half the variance', () => {
    // point 0 at the equator, point 1 at 60 N; anomalies +-3 at both, uncorrelated:
    // weighted variances 4 * 9 * cos 0 = 36 and 4 * 9 * cos 60 = 18 -> fractions 2/3 and 1/3
    const twoRows = [f32(3, 3), f32(-3, 3), f32(3, -3), f32(-3, -3)];
    const eof = eofAnalysis(twoRows, Float64Array.of(0, 60), { varianceFraction: 1 });
    expect(eof.explainedVariance[0]).toBeCloseTo(2 / 3, 12);
    expect(eof.explainedVariance[1]).toBeCloseTo(1 / 3, 12);
    expect(Math.abs(eof.pcs[0][1])).toBeCloseTo(3 * Math.sqrt(0.5), 12);
    expect(Array.from(eofAreaWeights(Float64Array.of(0, 60, -60, 90)))).toEqual(
      [1, Math.SQRT1_2, Math.SQRT1_2, expect.closeTo(0, 7)].map((v) => (typeof v === 'number' ? expect.closeTo(v, 14) : v)),
    );
  });

  it('returns orthonormal patterns and uncorrelated PCs that rebuild the weighted anomalies', () => {
    const members = spreadEnsemble(8, [90, 60, 40, 25, 15, 10], 5);
    const eof = eofAnalysis(members, LAT, { varianceFraction: 1, maxModes: 10 });
    expect(eof.modes).toBe(7); // 8 members span 7 anomaly dimensions
    expect(eof.explainedVariance.reduce((s, v) => s + v, 0)).toBeCloseTo(1, 12);
    for (let i = 0; i < eof.modes; i++) {
      for (let j = 0; j < eof.modes; j++) {
        const dot = eof.patterns[i].reduce((s, v, g) => s + v * eof.patterns[j][g], 0);
        expect(dot).toBeCloseTo(i === j ? 1 : 0, 10);
        if (i !== j) expect(eof.pcs.reduce((s, pc) => s + pc[i] * pc[j], 0)).toBeCloseTo(0, 6);
      }
    }
    const weights = eofAreaWeights(LAT);
    for (const m of [0, 5]) {
      for (const g of [0, 4000, 9800]) {
        const rebuilt = eof.pcs[m].reduce((s, pc, i) => s + pc * eof.patterns[i][g], 0);
        const anomaly = weights[Math.floor(g / N_LON)] * (members[m][g] - eof.meanField[g]);
        expect(rebuilt).toBeCloseTo(anomaly, 6);
      }
    }
    for (const pattern of eof.patterns) {
      const largest = pattern.reduce((best, v) => (Math.abs(v) > Math.abs(best) ? v : best), 0);
      expect(largest).toBeGreaterThan(0);
    }
  });
});

describe('silhouette (Rousseeuw 1987), hand-worked', () => {
  // 1-D points A = {0, 2}, B = {5, 6}:
  //   x=0: a = 2, b = (5 + 6)/2 = 5.5, s = 3.5/5.5 = 7/11
  //   x=2: a = 2, b = (3 + 4)/2 = 3.5, s = 1.5/3.5 = 3/7
  //   x=5: a = 1, b = (5 + 3)/2 = 4,   s = 3/4
  //   x=6: a = 1, b = (6 + 4)/2 = 5,   s = 4/5
  //   mean = (980 + 660 + 1155 + 1232) / 1540 / 4 = 4027/6160
  it('gives the per-point values and the mean', () => {
    const pts = points([0], [2], [5], [6]);
    const s = silhouetteSamples(pts, [0, 0, 1, 1]);
    [7 / 11, 3 / 7, 3 / 4, 4 / 5].forEach((v, i) => expect(s[i]).toBeCloseTo(v, 14));
    expect(silhouetteScore(pts, [0, 0, 1, 1])).toBeCloseTo(4027 / 6160, 14);
  });

  it('gives 0 to a point alone in its cluster and lets it count as the nearest cluster of others', () => {
    // add C = {3}: x=2 now has b = min(3.5, 1) = 1 < a = 2 -> s = (1 - 2)/2 = -1/2
    const s = silhouetteSamples(points([0], [2], [5], [6], [3]), [0, 0, 1, 1, 2]);
    expect(s[4]).toBe(0);
    expect(s[1]).toBeCloseTo(-0.5, 14);
    expect(s[0]).toBeCloseTo((3 - 2) / 3, 14); // b = min(5.5, 3)
  });

  it('uses Euclidean distance in several dimensions (3-4-5 triangle)', () => {
    // A = {(0,0), (0,0)}, B = {(3,4)}: a = 0 for A members, b = 5 -> s = 1; B is a singleton -> 0
    const s = silhouetteSamples(points([0, 0], [0, 0], [3, 4]), [0, 0, 1]);
    expect(Array.from(s)).toEqual([1, 1, 0]);
  });

  it('refuses a single cluster and mismatched lengths', () => {
    expect(() => silhouetteSamples(points([0], [1]), [0, 0])).toThrow(/at least 2 non-empty clusters/);
    expect(() => silhouetteSamples(points([0], [1]), [0])).toThrow(/2 points but 1 assignments/);
  });
});

describe('kMeans (k-means++ starts, Lloyd iterations)', () => {
  it('finds the obvious partition of well-separated 2-D points with canonical labels', () => {
    // sizes 2, 3, 1 -> labels by size: the triple is 0, the pair 1, the singleton 2
    const pts = points([10, 10], [0, 0], [10.2, 9.9], [0.1, 0.2], [-20, 5], [9.8, 10.1]);
    const result = kMeans(pts, 3, 42);
    expect(Array.from(result.assignments)).toEqual([0, 1, 0, 1, 2, 0]);
    expect(result.centroids[0][0]).toBeCloseTo(10, 12);
    expect(result.centroids[2][0]).toBe(-20);
    // WCSS by hand: triple about (10, 10): 0 + (0.04 + 0.01) + (0.04 + 0.01) = 0.1;
    // pair about (0.05, 0.1): 2 x (0.0025 + 0.01) = 0.025; singleton 0 -> 0.125
    const expected = 0.125;
    expect(result.withinSumOfSquares).toBeCloseTo(expected, 12);
  });

  it('refuses k outside 2..6, too few points and too few distinct points', () => {
    const pts = points([0], [1], [2], [3], [4], [5], [6], [7]);
    expect(() => kMeans(pts, 1, 1)).toThrow(/k = 1 must be an integer in 2..6/);
    expect(() => kMeans(pts, 7, 1)).toThrow(/k = 7/);
    expect(() => kMeans(pts, 2.5, 1)).toThrow(/k = 2.5/);
    expect(() => kMeans(points([0], [1]), 3, 1)).toThrow(/2 points cannot form 3 clusters/);
    expect(() => kMeans(points([0], [0], [1], [1]), 3, 1)).toThrow(/fewer than k = 3 distinct points/);
    expect(() => kMeans(points([0, 1], [1]), 2, 1)).toThrow(/point 1 has 1 coordinates/);
  });
});

describe('clusterEnsemble (EOF truncation + k-means, Michelangeli et al. 1995)', () => {
  const planted = plantedEnsemble([20, 17, 14], 2026);

  it('recovers three planted regimes exactly (51 members, 121 x 81 grid)', () => {
    const result = clusterEnsemble(planted.fields, LAT, { k: 3, seed: 7 });
    expect(Array.from(result.assignments)).toEqual(planted.groups);
    expect(result.clusters.map((c) => c.size)).toEqual([20, 17, 14]);
    expect(result.modes).toBeLessThanOrEqual(6);
    expect(result.explainedVariance.reduce((s, v) => s + v, 0)).toBeGreaterThanOrEqual(0.9);
    expect(result.silhouette).toBeGreaterThan(0.9);
    // the cluster-mean field of the first regime shows its Scandinavian block (+150 gpm at 62 N, 15 E)
    const iLat = Math.round((62 - 20) / 0.75), iLon = Math.round((15 + 40) / 0.75);
    const block = result.clusters[0].meanField[iLat * N_LON + iLon];
    expect(block).toBeGreaterThan(5630);
    expect(block).toBeLessThan(5670);
    expect(result.clusters[0].members).toEqual(planted.groups.flatMap((g, m) => (g === 0 ? [m] : [])));
  });

  it('is deterministic: the same seed gives identical output, other seeds the same partition', () => {
    const a = clusterEnsemble(planted.fields, LAT, { k: 3, seed: 7 });
    const b = clusterEnsemble(planted.fields, LAT, { k: 3, seed: 7 });
    expect(b).toEqual(a);
    for (const seed of [1, 99, 123456]) {
      expect(Array.from(clusterEnsemble(planted.fields, LAT, { k: 3, seed }).assignments)).toEqual(Array.from(a.assignments));
    }
  });

  it('is deterministic on structureless members too (same seed -> identical assignments)', () => {
    const noise = spreadEnsemble(30, [50, 50, 50, 50, 50, 50], 31);
    for (const k of [2, 4, 6]) {
      const a = clusterEnsemble(noise, LAT, { k, seed: 3 });
      const b = clusterEnsemble(noise, LAT, { k, seed: 3 });
      expect(Array.from(b.assignments)).toEqual(Array.from(a.assignments));
      expect(b.silhouette).toBe(a.silhouette);
    }
  });

  it('gives the same partition whatever the order of the members', () => {
    const gauss = gaussianSource(77);
    const order = planted.fields.map((_, m) => ({ m, key: gauss() })).sort((x, y) => x.key - y.key).map((x) => x.m);
    const original = clusterEnsemble(planted.fields, LAT, { k: 3, seed: 5 });
    const shuffled = clusterEnsemble(order.map((m) => planted.fields[m]), LAT, { k: 3, seed: 5 });
    const mapped = order.map((m) => original.assignments[m]);
    expect(samePartition(shuffled.assignments, mapped)).toBe(true);
    // also on members without planted structure, where only the optimum decides
    const noise = spreadEnsemble(25, [80, 60, 40, 20, 10, 5], 12);
    const noiseOriginal = clusterEnsemble(noise, LAT, { k: 4, seed: 5 });
    const noiseOrder = order.filter((m) => m < 25);
    const noiseShuffled = clusterEnsemble(noiseOrder.map((m) => noise[m]), LAT, { k: 4, seed: 5 });
    expect(samePartition(noiseShuffled.assignments, noiseOrder.map((m) => noiseOriginal.assignments[m]))).toBe(true);
  });

  it('refuses bad input with a message naming the problem', () => {
    const few = planted.fields.slice(0, 3);
    expect(() => clusterEnsemble(few, LAT, { k: 3 })).toThrow(/3 members are too few for k = 3 clusters; need at least 4/);
    expect(() => clusterEnsemble(planted.fields, LAT, { k: 1 })).toThrow(/k = 1 must be an integer in 2..6/);
    expect(() => clusterEnsemble(planted.fields, LAT, { k: 7 })).toThrow(ClusterInputError);
    const short = [...planted.fields.slice(0, 5), planted.fields[5].subarray(0, N_LON * (N_LAT - 1))];
    expect(() => clusterEnsemble(short, LAT, { k: 2 })).toThrow(/member 5 has 9680 values; member 0 has 9801 \(81 x 121\)/);
    const withNaN = planted.fields.slice(0, 6).map((f) => f.slice());
    withNaN[4][2 * N_LON + 7] = NaN;
    expect(() => clusterEnsemble(withNaN, LAT, { k: 2 })).toThrow(/member 4 has NaN at lat index 2, lon index 7/);
    expect(() => clusterEnsemble(planted.fields.slice(0, 6), LAT.subarray(0, 80), { k: 2 })).toThrow(/not a whole number of rows of the 80 latitudes/);
    expect(() => clusterEnsemble(planted.fields.slice(0, 6), Float64Array.from(LAT, (v) => v + 20), { k: 2 })).toThrow(/latitude 67 is 90.25; expected degrees in -90..90/);
    const same = new Array(5).fill(planted.fields[0]) as Float32Array[];
    expect(() => clusterEnsemble(same, LAT, { k: 2 })).toThrow(/all members are identical/);
    expect(() => clusterEnsemble(planted.fields, LAT, { k: 3, varianceFraction: 0 })).toThrow(/varianceFraction 0 is outside/);
  });

  it('clusters 51 members on a 121 x 81 grid well under a second', () => {
    const fields = spreadEnsemble(51, [90, 60, 40, 25, 15, 10], 8);
    clusterEnsemble(fields, LAT, { k: 4, seed: 1 }); // warm-up for the JIT
    const start = performance.now();
    const result = clusterEnsemble(fields, LAT, { k: 4, seed: 1 });
    const elapsed = performance.now() - start;
    console.info(`clusterEnsemble 51 members x 121 x 81: ${elapsed.toFixed(1)} ms, ${result.modes} modes`);
    expect(elapsed).toBeLessThan(1000);
  });
});
