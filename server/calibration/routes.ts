import { Router } from 'express';
import type { Knex } from 'knex';
import { guard, hasRole } from '../auth/roles.js';
import { badRequest, notFound } from '../errors.js';
import { validateBody } from '../lib/validate.js';
import type { CalibrationService } from './service.js';
import type { PlausibilityService } from './plausibility.js';

const positiveId = (v: unknown) => {
  const id = Number(v);
  if (!Number.isInteger(id) || id < 1) throw badRequest('The batch id in the path must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
  return id;
};

/** Standard stars, a batch's calibration (derive, apply, revert), an instrument's calibration history, plausibility settings. */
export function calibrationRoutes(deps: { db: Knex; calibration: CalibrationService; plausibility: PlausibilityService }): Router {
  const { db, calibration, plausibility } = deps;
  const r = Router();
  const curator = guard(['curator']);

  r.get('/standard-stars', guard('signed-in'), async (_req, res) => {
    res.json({ standards: await calibration.standards() });
  });

  r.post('/standard-stars', curator, validateBody('api/calibration-standard-star'), async (req, res) => {
    res.status(201).json(await calibration.addStandard(req.user!.id, req.body));
  });

  r.get('/batches/:id/calibration', guard(['observer', 'curator']), async (req, res) => {
    const id = positiveId(req.params.id);
    if (!hasRole(req.user, ['curator'])) {
      const b = await db('batches').where({ id }).first('uploaded_by');
      if (!b || b.uploaded_by !== req.user!.id) throw notFound('Batch');
    }
    res.json(await calibration.forBatch(id));
  });

  r.post('/batches/:id/calibration/apply', curator, validateBody('api/calibration-action'), async (req, res) => {
    res.json(await calibration.apply(req.user!.id, positiveId(req.params.id), req.body?.reason ?? null));
  });

  r.post('/batches/:id/calibration/revert', curator, validateBody('api/calibration-action'), async (req, res) => {
    res.json(await calibration.revert(req.user!.id, positiveId(req.params.id), req.body?.reason ?? null));
  });

  r.get('/instruments/:code/calibrations', guard('signed-in'), async (req, res) => {
    res.json(await calibration.history(String(req.params.code)));
  });

  r.get('/plausibility', guard('signed-in'), async (_req, res) => {
    res.json(await plausibility.settings());
  });

  r.patch('/plausibility', curator, validateBody('api/calibration-plausibility'), async (req, res) => {
    res.json(await plausibility.update(req.user!.id, req.body));
  });

  return r;
}
