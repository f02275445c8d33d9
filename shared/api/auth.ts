import { z } from 'zod';
import { roleSchema } from '../roles.ts';

/** GET /api/me: the signed-in person and the token the client sends back as X-CSRF-Token. */
export const meSchema = z.object({
  id: z.string(),
  name: z.string(),
  email: z.string(),
  roles: z.array(roleSchema),
  csrfToken: z.string(),
});
export type Me = z.infer<typeof meSchema>;

/** Identity-provider group names as the provider sends them: no blanks, no control characters. */
export const groupNameSchema = z
  .string()
  .trim()
  .min(1, 'a group name cannot be empty')
  .max(200)
  .regex(/^[^\p{Cc}]+$/u, 'a group name cannot contain control characters');

export const roleMappingSchema = z.object({ group: groupNameSchema, role: roleSchema });
export type RoleMapping = z.infer<typeof roleMappingSchema>;

/** GET and PUT /api/admin/role-mappings: the whole table, replaced at once. */
export const roleMappingsSchema = z.object({ mappings: z.array(roleMappingSchema).max(500) });
export type RoleMappings = z.infer<typeof roleMappingsSchema>;

const isoDate = z.iso.datetime({ offset: true });

/** GET /api/audit query: filters and paging. */
export const auditQuerySchema = z.object({
  action: z.string().max(100).optional(),
  actor: z.string().max(200).optional(),
  from: isoDate.optional(),
  to: isoDate.optional(),
  limit: z.coerce.number().int().min(1).max(500).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;

export const auditEventSchema = z.object({
  id: z.number(),
  at: z.string(),
  actorId: z.string().nullable(),
  actorLabel: z.string(),
  action: z.string(),
  objectType: z.string().nullable(),
  objectId: z.string().nullable(),
  detail: z.record(z.string(), z.unknown()),
  requestId: z.string().nullable(),
  clientAddress: z.string().nullable(),
  hash: z.string(),
});
export type AuditEventView = z.infer<typeof auditEventSchema>;

export const auditPageSchema = z.object({ events: z.array(auditEventSchema), total: z.number() });
export type AuditPage = z.infer<typeof auditPageSchema>;

/** GET /api/audit/verify: the chain walked from the first row; the first broken link named. */
export const auditVerificationSchema = z.object({
  ok: z.boolean(),
  checked: z.number(),
  firstBroken: z.object({ id: z.number(), reason: z.string() }).nullable(),
});
export type AuditVerification = z.infer<typeof auditVerificationSchema>;
