import { Router } from 'express';
import type { Me } from '@shared/api/auth.ts';
import type { AppDeps } from '../app.ts';
import { currentUser } from '../auth/context.ts';

/** GET /api/me: the signed-in person, their roles and the CSRF token (401 when signed out, from the gate). */
export function meRouter(_deps: AppDeps): Router {
  const router = Router();
  router.get('/me', (req, res) => {
    const user = currentUser(req);
    const body: Me = { id: user.id, name: user.name, email: user.email, roles: user.roles, csrfToken: req.session.csrfToken ?? '' };
    res.setHeader('Cache-Control', 'no-store');
    res.json(body);
  });
  return router;
}
