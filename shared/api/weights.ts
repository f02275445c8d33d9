import { z } from 'zod';

/**
 * How a regime call weights the scenarios (stored in regime_calls.weights). Either per cluster of
 * a clustering (run_clusterings row) or per member of a run; percentages summing to 100.
 * The latest published call's weights are the traders' default scenario weights:
 *   - basis "member": key is "<runId>:<member>";
 *   - basis "cluster": key is the cluster id (as a string) of `clusteringId`; a cluster's weight
 *     is shared equally by its members.
 * Runs and members the call does not mention get weight 0 when the call names their run, and
 * equal weights otherwise.
 */
export const callWeightsSchema = z
  .object({
    basis: z.enum(['member', 'cluster']),
    clusteringId: z.uuid().optional(),
    weights: z.array(z.object({ key: z.string().min(1), pct: z.number().min(0).max(100) })).min(1),
  })
  .refine((w) => w.basis !== 'cluster' || w.clusteringId, { message: 'a cluster basis names its clustering', path: ['clusteringId'] })
  .refine((w) => Math.abs(w.weights.reduce((s, x) => s + x.pct, 0) - 100) < 0.01, {
    message: 'weights must sum to 100 %',
    path: ['weights'],
  });
export type CallWeights = z.infer<typeof callWeightsSchema>;
