import { Router } from 'express';
import { guard } from '../auth/roles.js';
import { validateBody } from '../lib/validate.js';
import type { InstrumentService } from './service.js';

/** The instrument registry: everyone signed in reads it; admins register and change instruments. */
export function instrumentRoutes(deps: { instruments: InstrumentService }): Router {
  const { instruments } = deps;
  const r = Router();
  const admin = guard(['admin']);

  r.get('/instruments', guard('signed-in'), async (_req, res) => {
    res.json({ instruments: await instruments.list() });
  });

  r.get('/instruments/:code', guard('signed-in'), async (req, res) => {
    res.json(await instruments.get(String(req.params.code)));
  });

  r.post('/instruments', admin, validateBody('api/instrument-create'), async (req, res) => {
    res.status(201).json(await instruments.create(req.user!.id, req.body));
  });

  r.patch('/instruments/:code', admin, validateBody('api/instrument-update'), async (req, res) => {
    res.json(await instruments.update(req.user!.id, String(req.params.code), req.body));
  });

  return r;
}
