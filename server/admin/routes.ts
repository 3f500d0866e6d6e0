import { Router } from 'express';
import { guard } from '../auth/roles.js';
import type { AuthService } from '../auth/service.js';
import { badRequest } from '../errors.js';
import { validateBody } from '../lib/validate.js';

export function adminRoutes(deps: { auth: AuthService }): Router {
  const r = Router();
  const admin = guard(['admin']);

  r.get('/admin/users', admin, async (_req, res) => {
    res.json({ users: await deps.auth.list() });
  });

  r.post('/admin/users', admin, validateBody('api/user-create'), async (req, res) => {
    res.status(201).json(await deps.auth.create(req.user!.id, req.body));
  });

  r.patch('/admin/users/:id', admin, validateBody('api/user-update'), async (req, res) => {
    const id = Number(req.params.id);
    if (!Number.isInteger(id)) throw badRequest('The account id in the path must be an integer.', { fields: [{ field: 'id', message: 'must be an integer' }] });
    res.json(await deps.auth.update(req.user!.id, id, req.body));
  });

  return r;
}
