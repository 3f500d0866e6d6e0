import type { Knex } from 'knex';
import { hasRole, type SessionUser } from '../auth/roles.js';
import { notFound } from '../errors.js';

/** Curators read every batch's calibration; an observer only their own batch's (another's is "not found"). */
export async function assertMayReadBatch(db: Knex, user: SessionUser, batchId: number): Promise<void> {
  if (hasRole(user, ['curator'])) return;
  const b = await db('batches').where({ id: batchId }).first('uploaded_by');
  if (!b || b.uploaded_by !== user.id) throw notFound('Batch');
}
