/** People who sign in: created or updated at each sign-in, roles re-read from the group mapping then. */
import { eq, sql } from 'drizzle-orm';
import type { Role } from '@shared/roles.ts';
import type { Database } from '../db/client.ts';
import { users } from '../db/schema.ts';
import { recordAudit, type AuditEventInput } from './audit.ts';
import { rolesForGroups } from './role-mapping.ts';

/** What a verified SAML assertion says about the person. */
export interface VerifiedIdentity {
  externalId: string;
  name: string;
  email: string;
  groups: string[];
}

export interface SignedInUser {
  id: string;
  name: string;
  email: string;
  roles: Role[];
}

/** Creates or updates the person, maps their groups to roles and records the sign-in, in one transaction. */
export async function signInUser(
  db: Database,
  identity: VerifiedIdentity,
  audit: Pick<AuditEventInput, 'requestId' | 'clientAddress'>,
): Promise<SignedInUser> {
  const roles = await rolesForGroups(db, identity.groups);
  return db.transaction(async (tx) => {
    const values = { externalId: identity.externalId, name: identity.name, email: identity.email, groups: identity.groups, roles, lastSignInAt: new Date() };
    const [row] = await tx
      .insert(users)
      .values(values)
      .onConflictDoUpdate({
        target: users.externalId,
        set: { name: values.name, email: values.email, groups: values.groups, roles: values.roles, lastSignInAt: sql`now()` },
      })
      .returning({ id: users.id });
    await recordAudit(tx, {
      ...audit,
      action: 'auth.sign_in',
      actorId: row.id,
      actorLabel: identity.name,
      objectType: 'user',
      objectId: row.id,
      detail: { email: identity.email, groups: identity.groups, roles },
    });
    return { id: row.id, name: identity.name, email: identity.email, roles };
  });
}

export async function findUser(db: Database, id: string): Promise<SignedInUser | null> {
  const [row] = await db.select({ id: users.id, name: users.name, email: users.email, roles: users.roles }).from(users).where(eq(users.id, id));
  return row ? { ...row, roles: row.roles as Role[] } : null;
}
