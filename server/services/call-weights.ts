/**
 * The one reading of a regime call's scenario weights (shared/api/weights.ts), shared by the
 * traders' grid (scenarios.ts) and sealed snapshots (snapshot-content.ts).
 */
import type { CallWeights } from '@shared/api/weights.ts';

/** The clustering a cluster-basis call refers to. */
export interface CallClustering {
  runId: string;
  clusters: { id: string | number; members: number[] }[];
}

/**
 * Percent per scenario key "<runId>:<member>" and the runs the call names: member keys as
 * given; a cluster's percentage shared equally by its members. Malformed keys and empty clusters
 * carry no weight.
 */
export function memberPercents(weights: CallWeights, clustering: CallClustering | null): { pct: Map<string, number>; namedRuns: Set<string> } {
  const pct = new Map<string, number>();
  const namedRuns = new Set<string>();
  if (weights.basis === 'member') {
    for (const w of weights.weights) {
      const at = w.key.lastIndexOf(':');
      if (at <= 0) continue;
      namedRuns.add(w.key.slice(0, at));
      pct.set(w.key, (pct.get(w.key) ?? 0) + w.pct);
    }
  } else if (clustering) {
    namedRuns.add(clustering.runId);
    for (const w of weights.weights) {
      const cluster = clustering.clusters.find((c) => String(c.id) === w.key);
      if (!cluster || cluster.members.length === 0) continue;
      for (const m of cluster.members) {
        const key = `${clustering.runId}:${m}`;
        pct.set(key, (pct.get(key) ?? 0) + w.pct / cluster.members.length);
      }
    }
  }
  return { pct, namedRuns };
}
