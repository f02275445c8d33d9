import { z } from 'zod';

/** Limits of a clustering request (server/science/clusters.ts MIN_CLUSTERS..MAX_CLUSTERS). */
export const CLUSTER_K_MIN = 2;
export const CLUSTER_K_MAX = 6;
/** The k-means seed when the request names none: a fixed one, so the same request gives the same clustering. */
export const DEFAULT_CLUSTER_SEED = 1;

/** POST /api/runs/:id/clusterings. step (hours) defaults to the run's middle step. */
export const clusteringRequestSchema = z.object({
  k: z.number().int().min(CLUSTER_K_MIN, `k must be at least ${CLUSTER_K_MIN}`).max(CLUSTER_K_MAX, `k must be at most ${CLUSTER_K_MAX}`),
  step: z.number().int().min(0).optional(),
  seed: z.number().int().min(0).max(2 ** 31 - 1).optional(),
});
export type ClusteringRequest = z.infer<typeof clusteringRequestSchema>;

export const clusterSchema = z.object({
  id: z.number().int(),
  /** the run's member numbers in this cluster, ascending */
  members: z.array(z.number().int()),
  size: z.number().int(),
});
export type Cluster = z.infer<typeof clusterSchema>;

export const clusteringSummarySchema = z.object({
  id: z.uuid(),
  runId: z.uuid(),
  /** forecast step, hours */
  step: z.number().int(),
  k: z.number().int(),
  seed: z.number().int(),
  /** mean silhouette (Rousseeuw 1987), dimensionless, -1..1 */
  silhouette: z.number(),
  /** variance fraction (0..1) of each retained EOF */
  explainedVariance: z.array(z.number()),
  clusters: z.array(clusterSchema),
  createdAt: z.string(),
});
export type ClusteringSummary = z.infer<typeof clusteringSummarySchema>;

/**
 * Each cluster's mean 500 hPa geopotential height on a (possibly thinned) lat/lon grid, for a map.
 * fields[c][iLat * lon.length + iLon], geopotential metres (gpm).
 */
export const clusterMeanFieldsSchema = z.object({
  units: z.literal('gpm'),
  levelHpa: z.literal(500),
  lat: z.array(z.number()),
  lon: z.array(z.number()),
  fields: z.array(z.array(z.number().nullable())),
});
export type ClusterMeanFields = z.infer<typeof clusterMeanFieldsSchema>;

export const clusteringDetailSchema = clusteringSummarySchema.extend({ meanFields: clusterMeanFieldsSchema });
export type ClusteringDetail = z.infer<typeof clusteringDetailSchema>;

export const clusteringListSchema = z.object({ clusterings: z.array(clusteringSummarySchema) });
export const clusteringResponseSchema = z.object({ clustering: clusteringDetailSchema });
