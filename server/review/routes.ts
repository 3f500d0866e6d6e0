import { Router } from 'express';
import type { Knex } from 'knex';
import { guard, hasRole } from '../auth/roles.js';
import { badRequest, notFound } from '../errors.js';
import { validateBody } from '../lib/validate.js';
import { singleValuedQuery } from '../lib/query.js';
import type { MeasurementService } from '../measurements/service.js';
import type { ReviewService } from './service.js';

const positiveId = (v: unknown, what: string) => {
  const id = Number(v);
  if (!Number.isInteger(id) || id < 1) throw badRequest(`The ${what} id in the path must be a positive integer.`, { fields: [{ field: 'id', message: 'expected a positive integer' }] });
  return id;
};

export function reviewRoutes(deps: { db: Knex; review: ReviewService; measurements: MeasurementService }): Router {
  const { db, review, measurements } = deps;
  const r = Router();
  const curator = guard(['curator']);

  r.get('/review/queue', curator, singleValuedQuery, async (req, res) => {
    const state = String(req.query.state ?? 'awaiting_review');
    if (!['awaiting_review', 'approved', 'returned', 'needs_mapping', 'failed', 'checking'].includes(state)) throw badRequest('state must be awaiting_review, approved, returned, needs_mapping, checking or failed', { fields: [{ field: 'state', message: 'unknown state' }] });
    const sort = (['age', 'rows', 'uploader'].includes(String(req.query.sort)) ? req.query.sort : 'age') as 'age' | 'rows' | 'uploader';
    res.json(await review.queue({ state, sort, order: req.query.order === 'asc' ? 'asc' : 'desc' }));
  });

  // the review table: observers may read their own batch's measurements, curators every batch's
  r.get('/batches/:id/measurements', guard(['observer', 'curator']), singleValuedQuery, async (req, res) => {
    const id = positiveId(req.params.id, 'batch');
    if (!hasRole(req.user, ['curator'])) {
      const b = await db('batches').where({ id }).first('uploaded_by');
      if (!b || b.uploaded_by !== req.user!.id) throw notFound('Batch');
    }
    const q = req.query as Record<string, any>;
    const limit = q.limit === undefined ? 500 : Number(q.limit);
    const offset = q.offset === undefined ? 0 : Number(q.offset);
    if (!Number.isInteger(limit) || limit < 1 || limit > 5000) throw badRequest('limit must be an integer from 1 to 5000', { fields: [{ field: 'limit', message: 'expected 1–5000' }] });
    if (!Number.isSafeInteger(offset) || offset < 0) throw badRequest('offset must be an integer from 0 to 2^53 − 1', { fields: [{ field: 'offset', message: 'expected an integer ≥ 0' }] });
    const filters: Record<string, string> = {};
    for (const [k, v] of Object.entries(q)) {
      const m = /^filter\.(\w+)$/.exec(k) ?? /^filter\[(\w+)\]$/.exec(k);
      if (m && typeof v === 'string' && v !== '') filters[m[1]] = v;
    }
    if (q.filter && typeof q.filter === 'object') for (const [k, v] of Object.entries(q.filter)) if (typeof v === 'string' && v !== '') filters[k] = v;
    res.json(await review.measurements(id, { sort: String(q.sort ?? 'line'), order: q.order === 'desc' ? 'desc' : 'asc', limit, offset, filters, search: q.search ? String(q.search) : undefined }, req.user!));
  });

  r.patch('/measurements/:id', curator, validateBody('api/measurement-patch'), async (req, res) => {
    const { measurement, warnings } = await measurements.edit(req.user!.id, positiveId(req.params.id, 'measurement'), req.body.changes, req.body.version, req.body.reason ?? null);
    res.json({ measurement, warnings });
  });

  r.get('/measurements/:id/history', guard(['observer', 'curator']), async (req, res) => {
    const id = positiveId(req.params.id, 'measurement');
    const m = await measurements.load(id);
    if (!hasRole(req.user, ['curator'])) {
      const b = await db('batches').where({ id: m.batch_id }).first('uploaded_by');
      if (b?.uploaded_by !== req.user!.id) throw notFound('Measurement');
    }
    res.json({ history: await review.history('measurement', id, req.user!) });
  });

  r.post('/measurements/approve', curator, validateBody('api/measurement-ids'), async (req, res) => {
    res.json(await measurements.setState(req.user!.id, req.body.ids, 'approved', req.body.reason ?? null, { from: ['pending', 'approved', 'rejected', 'withdrawn'] }));
  });

  r.post('/measurements/reject', curator, validateBody('api/measurement-ids'), async (req, res) => {
    res.json(await measurements.setState(req.user!.id, req.body.ids, 'rejected', req.body.reason ?? null, { from: ['pending', 'approved', 'rejected', 'withdrawn', 'conflict', 'ambiguous'] }));
  });

  r.post('/measurements/:id/resolve', curator, validateBody('api/measurement-resolve'), async (req, res) => {
    const id = positiveId(req.params.id, 'measurement');
    const reason = req.body.reason ?? null;
    if ('keep' in req.body) res.json(await measurements.resolveConflict(req.user!.id, id, req.body.keep, reason));
    else if ('starId' in req.body) res.json(await measurements.attach(req.user!.id, id, { starId: req.body.starId }, reason));
    else res.json(await measurements.attach(req.user!.id, id, { newStar: true, name: req.body.name }, reason));
  });

  r.post('/audit/:id/revert', curator, async (req, res) => {
    const { measurement } = await measurements.revert(req.user!.id, positiveId(req.params.id, 'audit entry'), typeof req.body?.reason === 'string' ? req.body.reason : null);
    res.json({ measurement });
  });

  r.post('/batches/:id/approve', curator, validateBody('api/batch-decision'), async (req, res) => {
    res.json(await review.decide(req.user!.id, positiveId(req.params.id, 'batch'), 'approved', req.body?.note ?? null));
  });

  r.post('/batches/:id/reject', curator, validateBody('api/batch-decision'), async (req, res) => {
    res.json(await review.decide(req.user!.id, positiveId(req.params.id, 'batch'), 'returned', req.body?.note ?? null));
  });

  return r;
}
