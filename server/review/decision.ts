import { Router } from 'express';
import type { Knex } from 'knex';
import { guard, hasRole, type SessionUser } from '../auth/roles.js';
import { recordAudit } from '../audit/service.js';
import { AppError, badRequest, notFound } from '../errors.js';
import { validateBody } from '../lib/validate.js';

const positiveId = (v: unknown) => {
  const id = Number(v);
  if (!Number.isInteger(id) || id < 1) throw badRequest('The batch id in the path must be a positive integer.', { fields: [{ field: 'id', message: 'expected a positive integer' }] });
  return id;
};

/** A batch the person may see: curators any, observers their own (another's is "not found"). */
async function visibleBatch(db: Knex, user: SessionUser, id: number) {
  const b = await db('batches').where({ id }).first();
  if (!b || (!hasRole(user, ['curator']) && b.uploaded_by !== user.id)) throw notFound(`Batch ${id}`);
  return b;
}

/** The curator's decision on a batch as its uploader reads it, and the corrected file sent for a returned batch. */
export function decisionRoutes(deps: { db: Knex }): Router {
  const { db } = deps;
  const r = Router();

  async function decisionOf(user: SessionUser, id: number) {
    const b = await visibleBatch(db, user, id);
    const reviewer = b.reviewed_by ? await db('users').where({ id: b.reviewed_by }).first('name') : null;
    const byState = (await db('measurements').where({ batch_id: id }).select('state').count({ n: '*' }).groupBy('state')) as { state: string; n: number }[];
    const counts = Object.fromEntries(['approved', 'rejected', 'withdrawn', 'conflict', 'ambiguous', 'pending'].map((s) => [s, Number(byState.find((x) => x.state === s)?.n ?? 0)]));
    const replaces = b.replaces_batch_id ? await db('batches').where({ id: b.replaces_batch_id }).first('id', 'filename', 'state') : null;
    const replacedBy = await db('batches').where({ replaces_batch_id: id }).orderBy('id').select('id', 'filename', 'state');
    return {
      batchId: id,
      state: b.state,
      decision: b.state === 'approved' || b.state === 'returned' ? b.state : null,
      note: b.review_note ?? null,
      reviewedAt: b.reviewed_at ?? null,
      reviewedBy: reviewer ? { name: reviewer.name } : null,
      counts,
      replaces: replaces ?? null,
      replacedBy,
    };
  }

  r.get('/batches/:id/decision', guard(['observer', 'curator']), async (req, res) => {
    res.json(await decisionOf(req.user!, positiveId(req.params.id)));
  });

  // the uploader sends a corrected file (a new upload) for a returned batch, and links it here
  r.post('/batches/:id/replaces', guard(['observer', 'curator']), validateBody('api/calibration-replaces'), async (req, res) => {
    const id = positiveId(req.params.id);
    const oldId = req.body.batchId as number;
    await db.transaction(async (trx) => {
      const fresh = await visibleBatch(trx as unknown as Knex, req.user!, id);
      const old = await trx('batches').where({ id: oldId }).first();
      if (!old || (!hasRole(req.user, ['curator']) && old.uploaded_by !== req.user!.id)) throw badRequest(`batchId: batch ${oldId} is not one of your batches`, { fields: [{ field: 'batchId', message: 'not found' }] });
      if (oldId === id) throw badRequest('batchId: a batch cannot replace itself', { fields: [{ field: 'batchId', message: 'expected another batch' }] });
      if (old.state !== 'returned') throw new AppError(409, 'not_returned', `Batch ${oldId} is ${old.state}; only a returned batch is replaced by a corrected file.`);
      if (fresh.replaces_batch_id) throw new AppError(409, 'already_linked', `Batch ${id} already replaces batch ${fresh.replaces_batch_id}.`);
      await trx('batches').where({ id }).update({ replaces_batch_id: oldId, updated_at: new Date().toISOString() });
      await recordAudit(trx, { actorId: req.user!.id, action: 'batch.replaces', entityType: 'batch', entityId: id, after: { replaces: oldId } });
    });
    res.json(await decisionOf(req.user!, id));
  });

  return r;
}
