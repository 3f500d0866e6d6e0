import type { Knex } from 'knex';
import { hasRole, type SessionUser } from '../auth/roles.js';
import { recordAudit } from '../audit/service.js';
import { AppError, badRequest, notFound } from '../errors.js';

/** Data access of the review routes: who may read a batch, and a batch's decision as its uploader reads it. */

/** A batch the person may see: curators any, observers their own (another's is "not found"). */
export async function visibleBatch(db: Knex | Knex.Transaction, user: SessionUser, id: number, what = `Batch ${id}`) {
  const b = await db('batches').where({ id }).first();
  if (!b || (!hasRole(user, ['curator']) && b.uploaded_by !== user.id)) throw notFound(what);
  return b;
}

/** Observers read their own batch's measurements and history only; curators every batch's. */
export async function assertMayReadBatch(db: Knex, user: SessionUser, batchId: number, what: string): Promise<void> {
  if (hasRole(user, ['curator'])) return;
  const b = await db('batches').where({ id: batchId }).first('uploaded_by');
  if (!b || b.uploaded_by !== user.id) throw notFound(what);
}

/** The curator's decision on a batch as its uploader reads it: note, who and when, measurements by state, corrected files. */
export async function decisionOf(db: Knex, user: SessionUser, id: number) {
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

/** Link batch `id` (a new upload) as the corrected file of the returned batch `oldId`; audited in the same transaction. */
export async function linkCorrectedFile(db: Knex, user: SessionUser, id: number, oldId: number): Promise<void> {
  await db.transaction(async (trx) => {
    const fresh = await visibleBatch(trx, user, id);
    const old = await trx('batches').where({ id: oldId }).first();
    if (!old || (!hasRole(user, ['curator']) && old.uploaded_by !== user.id)) throw badRequest(`batchId: batch ${oldId} is not one of your batches`, { fields: [{ field: 'batchId', message: 'not found' }] });
    if (oldId === id) throw badRequest('batchId: a batch cannot replace itself', { fields: [{ field: 'batchId', message: 'expected another batch' }] });
    if (old.state !== 'returned') throw new AppError(409, 'not_returned', `Batch ${oldId} is ${old.state}; only a returned batch is replaced by a corrected file.`);
    if (fresh.replaces_batch_id) throw new AppError(409, 'already_linked', `Batch ${id} already replaces batch ${fresh.replaces_batch_id}.`);
    await trx('batches').where({ id }).update({ replaces_batch_id: oldId, updated_at: new Date().toISOString() });
    await recordAudit(trx, { actorId: user.id, action: 'batch.replaces', entityType: 'batch', entityId: id, after: { replaces: oldId } });
  });
}
