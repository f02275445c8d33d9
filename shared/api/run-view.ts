import { z } from 'zod';

/**
 * The Run view's read-only API: the QG diagnosis of one run (solver figures, sigma profile,
 * omega statistics, QG-versus-model correlation), omega maps and vertical cross-sections.
 * Omega is in Pa s-1 (negative = ascent); pressure in hPa; distances in km; times UTC.
 */

export const OMEGA_PART_NAMES = ['total', 'vorticity', 'thickness', 'qvector'] as const;
export type OmegaPartName = (typeof OMEGA_PART_NAMES)[number];

/** One sentence per map layer, shown beside the switch. */
export const OMEGA_PART_LABELS: Record<OmegaPartName, { label: string; explain: string }> = {
  total: { label: 'Total', explain: 'QG omega from both forcing terms together (traditional form).' },
  vorticity: { label: 'Vorticity part', explain: 'The ascent forced by differential advection of absolute vorticity alone.' },
  thickness: { label: 'Thickness part', explain: 'The ascent forced by the Laplacian of thickness (temperature) advection alone.' },
  qvector: { label: 'Q-vector form', explain: 'The same physics solved from the divergence of Q: a cross-check of the total.' },
};

/** "mean" or a member number, as sent in the query string. */
export const memberQuerySchema = z
  .string()
  .regex(/^(mean|\d{1,4})$/, 'member must be a member number or "mean"')
  .transform((v): number | 'mean' => (v === 'mean' ? 'mean' : Number(v)));

const finiteNumber = z.coerce.number().refine(Number.isFinite, 'must be a number');

const latLonSchema = z
  .string()
  .regex(/^\s*-?\d+(\.\d+)?\s*,\s*-?\d+(\.\d+)?\s*$/, 'must be "LAT,LON" in decimal degrees, e.g. "60.5,10.25"')
  .transform((v) => {
    const [lat, lon] = v.split(',').map(Number);
    return { lat, lon };
  })
  .refine((p) => p.lat >= -90 && p.lat <= 90, 'latitude must be between -90 and 90');

export const diagnosticsQuerySchema = z.object({ member: memberQuerySchema.default('mean') }).strict();

export const omegaQuerySchema = z
  .object({
    member: memberQuerySchema.default('mean'),
    step: finiteNumber,
    level: finiteNumber,
    part: z.enum(OMEGA_PART_NAMES, { message: `part must be one of ${OMEGA_PART_NAMES.join(', ')}` }).default('total'),
  })
  .strict();

export const sectionQuerySchema = z
  .object({
    member: memberQuerySchema.default('mean'),
    step: finiteNumber,
    part: z.enum(OMEGA_PART_NAMES, { message: `part must be one of ${OMEGA_PART_NAMES.join(', ')}` }).default('total'),
    from: latLonSchema,
    to: latLonSchema,
    points: z.coerce.number().int('points must be a whole number').min(2, 'points must be at least 2').max(400, 'points must be at most 400').default(60),
    line: z.enum(['great-circle', 'straight'], { message: 'line must be "great-circle" or "straight"' }).default('great-circle'),
  })
  .strict();

export const stepDiagnosisSchema = z.object({
  /** hours after the cycle */
  step: z.number(),
  /** ISO 8601 UTC */
  validTime: z.string(),
  /** relative residual of the discrete system */
  residual: z.number(),
  solveMs: z.number(),
  /** static stability per level, m2 Pa-2 s-2 */
  sigma: z.array(z.number()),
  /** Pa s-1 per level */
  omegaMin: z.array(z.number()),
  omegaMean: z.array(z.number()),
  omegaMax: z.array(z.number()),
  /** QG versus model omega pattern correlation per level; null where the file had no model omega */
  correlation: z.array(z.number().nullable()).nullable(),
  warnings: z.array(z.string()),
});
export type StepDiagnosis = z.infer<typeof stepDiagnosisSchema>;

/** GET /api/runs/:id/diagnostics */
export const diagnosticsSchema = z.object({
  runId: z.string(),
  member: z.union([z.number(), z.literal('mean')]),
  /** members whose rows were averaged (member=mean on an ensemble) */
  averagedMembers: z.array(z.number()),
  /** Coriolis parameter at the domain centre, s-1 */
  f0: z.number(),
  /** run order: bottom (high pressure) to top */
  levelsHpa: z.array(z.number()),
  steps: z.array(stepDiagnosisSchema),
});
export type Diagnostics = z.infer<typeof diagnosticsSchema>;

/** GET /api/runs/:id/omega */
export const omegaMapSchema = z.object({
  member: z.union([z.number(), z.literal('mean')]),
  step: z.number(),
  validTime: z.string(),
  levelHpa: z.number(),
  part: z.enum(OMEGA_PART_NAMES),
  /** degrees north, ascending */
  lat: z.array(z.number()),
  /** degrees east, ascending */
  lon: z.array(z.number()),
  /** row-major [lat][lon], lat ascending; null where missing */
  values: z.array(z.number().nullable()),
  units: z.literal('Pa s-1'),
  min: z.number().nullable(),
  max: z.number().nullable(),
});
export type OmegaMap = z.infer<typeof omegaMapSchema>;

/** GET /api/runs/:id/section */
export const sectionSchema = z.object({
  member: z.union([z.number(), z.literal('mean')]),
  step: z.number(),
  validTime: z.string(),
  part: z.enum(OMEGA_PART_NAMES),
  line: z.enum(['great-circle', 'straight']),
  distanceKm: z.array(z.number()),
  path: z.array(z.object({ lat: z.number(), lon: z.number() })),
  /** run order: bottom (high pressure) to top */
  levelsHpa: z.array(z.number()),
  /** [level][point], Pa s-1; null where missing */
  values: z.array(z.array(z.number().nullable())),
  units: z.literal('Pa s-1'),
});
export type Section = z.infer<typeof sectionSchema>;

/** GET /api/runs/:id/members (server/services/runs.ts listRunMembers) */
export const runMemberSchema = z.object({
  member: z.number(),
  state: z.string(),
  progress: z.number(),
  message: z.string().nullable(),
  attempts: z.number(),
  updatedAt: z.string(),
});
export const runMembersSchema = z.object({ members: z.array(runMemberSchema) });
export type RunMember = z.infer<typeof runMemberSchema>;
