import { z } from 'zod';

export const RUN_STATES = ['received', 'reading', 'diagnosing', 'deriving', 'ready', 'rejected'] as const;
export type RunState = (typeof RUN_STATES)[number];

/** Plain words for each state, shown in the Runs table. */
export const RUN_STATE_LABELS: Record<RunState, string> = {
  received: 'Received',
  reading: 'Reading file',
  diagnosing: 'Diagnosing ascent',
  deriving: 'Deriving signals',
  ready: 'Ready',
  rejected: 'Rejected',
};

export const runGridSchema = z.object({
  nlat: z.number().int(),
  nlon: z.number().int(),
  latFirst: z.number(),
  latLast: z.number(),
  lonFirst: z.number(),
  lonLast: z.number(),
  dlat: z.number(),
  dlon: z.number(),
});

export const runSchema = z.object({
  id: z.uuid(),
  checksum: z.string(),
  sizeBytes: z.number(),
  fileName: z.string(),
  format: z.string().nullable(),
  model: z.string().nullable(),
  cycle: z.string().nullable(),
  members: z.array(z.number()).nullable(),
  isEnsemble: z.boolean().nullable(),
  steps: z.array(z.number()).nullable(),
  levelsHpa: z.array(z.number()).nullable(),
  variables: z.array(z.string()).nullable(),
  grid: runGridSchema.nullable(),
  state: z.enum(RUN_STATES),
  /** 0 to 1 */
  progress: z.number(),
  message: z.string().nullable(),
  uploadedBy: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Run = z.infer<typeof runSchema>;

export const runListSchema = z.object({ runs: z.array(runSchema) });

/** POST /api/runs answers 201 with a new run, or 200 with the existing run when the same file was uploaded before. */
export const uploadResultSchema = z.object({ run: runSchema, duplicate: z.boolean() });
export type UploadResult = z.infer<typeof uploadResultSchema>;
