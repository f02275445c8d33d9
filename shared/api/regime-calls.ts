/**
 * Contracts of regime calls, the desk's regime names and the mail subscriptions
 * (PRODUCT.md "Regime calls", "Admin"). Weights keep to shared/api/weights.ts exactly.
 */
import { z } from 'zod';
import { callWeightsSchema } from './weights.ts';

// ---- regime names (admin-edited) -------------------------------------------------------------

export const regimeNameSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  description: z.string(),
  active: z.boolean(),
});
export type RegimeName = z.infer<typeof regimeNameSchema>;

export const regimeNameInputSchema = z.object({
  name: z.string().trim().min(2, 'a regime name has at least 2 characters').max(80, 'a regime name has at most 80 characters'),
  description: z.string().trim().max(500).default(''),
  active: z.boolean().default(true),
});
export type RegimeNameInput = z.input<typeof regimeNameInputSchema>;
export const regimeNameListSchema = z.object({ names: z.array(regimeNameSchema) });

// ---- subscriptions (admin) -------------------------------------------------------------------

export const subscriptionSchema = z.object({
  id: z.uuid(),
  email: z.string(),
  name: z.string(),
  /** empty: every call; otherwise only calls whose linked runs have signals for one of these regions */
  regionIds: z.array(z.string()),
  active: z.boolean(),
  createdAt: z.string(),
});
export type Subscription = z.infer<typeof subscriptionSchema>;

export const subscriptionInputSchema = z.object({
  email: z.email('email must be an e-mail address').transform((s) => s.toLowerCase()),
  name: z.string().trim().min(1, 'name is required').max(120),
  regionIds: z.array(z.string().trim().min(1)).max(200).default([]),
  active: z.boolean().default(true),
});
export type SubscriptionInput = z.input<typeof subscriptionInputSchema>;
export const subscriptionListSchema = z.object({ subscriptions: z.array(subscriptionSchema) });

// ---- regime calls ----------------------------------------------------------------------------

export const CONFIDENCES = ['low', 'medium', 'high'] as const;
export type Confidence = (typeof CONFIDENCES)[number];

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'dates are YYYY-MM-DD');

/** One regime over part (a day or more) of the valid period; regimeId from the names list. */
export const callRegimeSchema = z.object({ from: isoDate, to: isoDate, regimeId: z.number().int() });
export type CallRegime = z.infer<typeof callRegimeSchema>;

/**
 * The weights as a draft holds them while the meteorologist types: the same shape as
 * callWeightsSchema but not yet summing to 100 % (publish checks that).
 */
export const draftWeightsSchema = z.object({
  basis: z.enum(['member', 'cluster']),
  clusteringId: z.uuid().optional(),
  weights: z.array(z.object({ key: z.string().min(1), pct: z.number().min(0).max(100) })),
});

/** PUT /api/regime-calls/:id and POST /api/regime-calls: a draft's content. */
export const callDraftSchema = z.object({
  validFrom: isoDate,
  validTo: isoDate,
  regimes: z.array(callRegimeSchema).max(60).default([]),
  confidence: z.enum(CONFIDENCES).default('medium'),
  weights: draftWeightsSchema.default({ basis: 'member', weights: [] }),
  keyRisks: z.string().max(4000).default(''),
  narrative: z.string().max(20000).default(''),
  linkedRunIds: z.array(z.uuid()).max(20).default([]),
});
export type CallDraft = z.input<typeof callDraftSchema>;

/** What a published call must satisfy (checked at publish; the server adds checks against the database). */
export const publishableCallSchema = callDraftSchema
  .extend({
    regimes: z.array(callRegimeSchema).min(1, 'name at least one regime for the valid period'),
    weights: callWeightsSchema,
  })
  .refine((c) => c.validFrom <= c.validTo, { message: 'the valid period ends before it starts', path: ['validTo'] })
  .refine((c) => c.regimes.every((r) => r.from <= r.to && r.from >= c.validFrom && r.to <= c.validTo), {
    message: 'every regime lies inside the valid period, from before to',
    path: ['regimes'],
  });

export const correctionSchema = z.object({
  reason: z.string().trim().min(5, 'a correction needs a reason of at least 5 characters').max(2000),
});

export const regimeCallSchema = z.object({
  id: z.uuid(),
  seriesId: z.uuid(),
  version: z.number().int(),
  state: z.enum(['draft', 'published']),
  validFrom: z.string(),
  validTo: z.string(),
  regimes: z.array(callRegimeSchema),
  confidence: z.enum(CONFIDENCES),
  weights: draftWeightsSchema,
  keyRisks: z.string(),
  narrative: z.string(),
  linkedRunIds: z.array(z.string()),
  correctionOf: z.string().nullable(),
  correctionReason: z.string().nullable(),
  authorId: z.string().nullable(),
  authorName: z.string().nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
  publishedAt: z.string().nullable(),
});
export type RegimeCall = z.infer<typeof regimeCallSchema>;

export const regimeCallListSchema = z.object({ calls: z.array(regimeCallSchema) });
export const regimeCallDetailSchema = z.object({
  call: regimeCallSchema,
  /** the narrative as strict, escaped HTML (server/mail/templates.ts renderMarkdown) */
  narrativeHtml: z.string(),
  /** every version of the call's series, oldest first */
  versions: z.array(regimeCallSchema),
});
export type RegimeCallDetail = z.infer<typeof regimeCallDetailSchema>;

export const callPreviewSchema = z.object({
  subject: z.string(),
  html: z.string(),
  text: z.string(),
  /** how many active subscribers would receive it now */
  recipients: z.number().int(),
});
export type CallPreview = z.infer<typeof callPreviewSchema>;

/** Sum of a weight list, in percent, rounded for display (the form's live total). */
export function weightTotal(weights: readonly { pct: number }[]): number {
  return Math.round(weights.reduce((s, w) => s + (Number.isFinite(w.pct) ? w.pct : 0), 0) * 100) / 100;
}
