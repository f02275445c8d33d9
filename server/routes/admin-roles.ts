import { Router } from 'express';
import { roleMappingsSchema, type RoleMappings } from '@shared/api/auth.ts';
import type { AppDeps } from '../app.ts';
import { auditContext } from '../auth/context.ts';
import { listRoleMappings, replaceRoleMappings } from '../services/role-mapping.ts';

/** GET and PUT /api/admin/role-mappings: the identity-provider group -> role table (admins only). */
export function adminRolesRouter({ db }: AppDeps): Router {
  const router = Router();
  router.get('/admin/role-mappings', async (_req, res) => {
    const body: RoleMappings = { mappings: await listRoleMappings(db.db) };
    res.json(body);
  });
  router.put('/admin/role-mappings', async (req, res) => {
    const { mappings } = roleMappingsSchema.parse(req.body);
    const body: RoleMappings = { mappings: await replaceRoleMappings(db.db, mappings, auditContext(req)) };
    res.json(body);
  });
  return router;
}
