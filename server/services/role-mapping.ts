/** Identity-provider groups -> Liftwise roles: read at each sign-in, edited by admins. */
import { asc, inArray } from 'drizzle-orm';
import type { RoleMapping } from '@shared/api/auth.ts';
import { ROLES, type Role } from '@shared/roles.ts';
import type { Database } from '../db/client.ts';
import { roleMappings } from '../db/schema.ts';
import { unprocessable } from '../errors.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';

export async function listRoleMappings(db: Database): Promise<RoleMapping[]> {
  const rows = await db.select({ group: roleMappings.group, role: roleMappings.role }).from(roleMappings).orderBy(asc(roleMappings.group), asc(roleMappings.role));
  return rows.filter((r): r is RoleMapping => (ROLES as readonly string[]).includes(r.role));
}

/** The roles a person with these groups holds, in the order of ROLES. */
export async function rolesForGroups(db: Database, groups: readonly string[]): Promise<Role[]> {
  if (groups.length === 0) return [];
  const rows = await db.selectDistinct({ role: roleMappings.role }).from(roleMappings).where(inArray(roleMappings.group, [...groups]));
  const granted = new Set(rows.map((r) => r.role));
  return ROLES.filter((r) => granted.has(r));
}

/** Replaces the whole mapping in one transaction, with its audit row. */
export async function replaceRoleMappings(
  db: Database,
  mappings: readonly RoleMapping[],
  audit: Omit<AuditEventInput, 'action' | 'detail'>,
): Promise<RoleMapping[]> {
  const unique = [...new Map(mappings.map((m) => [`${m.group}\u0000${m.role}`, m])).values()];
  // Without a group granting admin, nobody could sign in as admin to repair the mapping.
  if (!unique.some((m) => m.role === 'admin')) throw unprocessable('Keep at least one group that grants the admin role.');
  await db.transaction(async (tx) => {
    const before = await tx.select({ group: roleMappings.group, role: roleMappings.role }).from(roleMappings);
    await tx.delete(roleMappings);
    if (unique.length) await tx.insert(roleMappings).values(unique);
    await recordAudit(tx, {
      ...audit,
      action: 'role_mapping.replace',
      objectType: 'role_mapping',
      detail: { before, after: unique },
    });
  });
  return listRoleMappings(db);
}
