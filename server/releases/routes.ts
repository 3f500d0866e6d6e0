import { Router } from 'express';
import { guard } from '../auth/roles.js';
import { validateBody } from '../lib/validate.js';
import type { ReleaseService } from './service.js';

export function releaseRoutes(deps: { releases: ReleaseService }): Router {
  const r = Router();
  r.post('/releases', guard(['curator']), validateBody('api/release-create'), async (req, res) => {
    res.status(201).json(await deps.releases.freeze(req.user!.id, req.body));
  });
  r.get('/releases', guard('signed-in'), async (_req, res) => {
    res.json({ releases: await deps.releases.list() });
  });
  r.get('/releases/:tag', guard('signed-in'), async (req, res) => {
    res.json(await deps.releases.get(String(req.params.tag)));
  });
  return r;
}
