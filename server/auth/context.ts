import type { Request } from 'express';
import type { AuditEventInput } from '../services/audit.ts';
import { unauthorized } from '../errors.ts';
import { requestUser } from './api-token.ts';
import type { SignedInUser } from '../services/users.ts';

/** The signed-in person behind a request that the authorization gate let through. */
export function currentUser(req: Request): SignedInUser {
  const user = requestUser(req);
  if (!user) throw unauthorized();
  return user;
}

/** Who, from where, under which request id: the part of every audit row that the request knows. */
export function auditContext(req: Request): Pick<AuditEventInput, 'actorId' | 'actorLabel' | 'requestId' | 'clientAddress'> {
  const user = requestUser(req);
  return {
    actorId: user?.id ?? null,
    actorLabel: user?.name ?? 'anonymous',
    requestId: req.id,
    clientAddress: req.ip ?? null,
  };
}
