import { Router } from 'express';
import { z } from 'zod';
import { roleSchema } from '@shared/roles.ts';
import type { AppDeps } from '../app.ts';
import { auditContext, currentUser } from '../auth/context.ts';
import { issueApiToken, listApiTokens, revokeApiToken } from '../services/api-tokens.ts';

const issueBody = z.object({
  name: z.string().trim().min(1, 'give the token a name').max(100).regex(/^[^\p{Cc}]+$/u, 'a token name cannot contain control characters'),
  roles: z.array(roleSchema).min(1, 'a token needs at least one role').max(4),
});
const idParam = z.object({ id: z.uuid({ message: 'token id must be a UUID' }) });

/**
 * GET, POST /api/admin/api-tokens and DELETE /api/admin/api-tokens/:id (admins only, through the
 * permission table). POST answers the token's plaintext once; nothing can show it again.
 */
export function apiTokensRouter({ db }: AppDeps): Router {
  const router = Router();
  router.get('/admin/api-tokens', async (_req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json({ tokens: await listApiTokens(db.db) });
  });
  router.post('/admin/api-tokens', async (req, res) => {
    const { name, roles } = issueBody.parse(req.body);
    const user = currentUser(req);
    const issued = await issueApiToken(db.db, { name, roles, createdBy: req.apiToken ? null : user.id }, auditContext(req));
    res.setHeader('Cache-Control', 'no-store');
    res.status(201).json(issued);
  });
  router.delete('/admin/api-tokens/:id', async (req, res) => {
    const { id } = idParam.parse(req.params);
    res.json({ apiToken: await revokeApiToken(db.db, id, auditContext(req)) });
  });
  return router;
}
