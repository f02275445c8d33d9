/**
 * The one authorization gate for /api: the permission table of shared/permissions.ts decides
 * every request. A route that is not in the table is refused as if it did not exist (deny by
 * default), even when a router would answer it.
 */
import type { RequestHandler } from 'express';
import { decide, findPermission, PERMISSIONS, type Permission } from '@shared/permissions.ts';
import { AppError, forbidden, unauthorized } from '../errors.ts';
import { requestUser } from './api-token.ts';

export function authorizeApi(table: readonly Permission[] = PERMISSIONS): RequestHandler {
  return (req, _res, next) => {
    // Mounted at /api: req.path is relative to it.
    const entry = findPermission(req.method, `/api${req.path === '/' ? '' : req.path}`, table);
    if (!entry) return next(new AppError(404, 'not_found', 'No such API route.'));
    const user = requestUser(req);
    const decision = decide(entry.access, user ? user.roles : null);
    if (decision === 'unauthenticated') return next(unauthorized());
    if (decision === 'forbidden') return next(forbidden());
    next();
  };
}
