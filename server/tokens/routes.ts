import { Router } from 'express';
import { guard } from '../auth/roles.js';
import { badRequest } from '../errors.js';
import { validateBody } from '../lib/validate.js';
import type { TokenService } from './service.js';

export function tokenRoutes(deps: { tokens: TokenService }): Router {
  const { tokens } = deps;
  const r = Router();
  const me = guard('signed-in');

  r.post('/tokens', me, validateBody('api/token-create'), async (req, res) => {
    res.status(201).json(await tokens.create(req.user!.id, req.body.name));
  });

  r.get('/tokens', me, async (req, res) => {
    res.json({ tokens: await tokens.list(req.user!.id) });
  });

  r.delete('/tokens/:id', me, async (req, res) => {
    const id = Number(req.params.id);
    if (!Number.isInteger(id) || id < 1) throw badRequest('The token id must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
    await tokens.revoke(req.user!.id, id);
    res.status(204).end();
  });

  return r;
}
