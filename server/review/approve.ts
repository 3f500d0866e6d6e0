/**
 * Approving or returning a whole batch, for ten rows or a million.
 *
 * Approving: every pending measurement, and every one a return withdrew, becomes approved.
 * Returning: every pending measurement becomes rejected, and every approved one is withdrawn
 * (state `withdrawn`): out of the approved catalog, so catalog reads, new tomography runs, masks
 * and new releases stop using it. Approving the batch again restores exactly those. Held rows
 * (conflict, ambiguous) stay held. Every changed measurement gets its audit entry.
 *
 * Up to SYNC_DECISION_ROWS changed measurements this is one transaction, answered at once. A
 * larger batch is marked `settling` in one short transaction (from then on readers of approved
 * data skip all of its rows: lib/visibility.ts), then its measurements change in chunks of
 * SETTLE_CHUNK rows, each one short transaction with its audit entries, on a worker thread with
 * its own connection (settle-worker.ts); one last short transaction flips the batch's state and
 * clears `settling`. A restart resumes where it stopped: each chunk picks the rows still in their
 * old state.
 */
import type { Knex } from 'knex';
import { recordAudit } from '../audit/service.js';
import { AppError, notFound } from '../errors.js';
import type { Decision, Settle } from '../lib/settling.js';

export type { Decision };

/** Batches with at most this many measurements to change are decided in the request's own transaction. */
export const SYNC_DECISION_ROWS = 20_000;
/** Measurements per short transaction of a settling batch (a few tens of milliseconds of writes). */
export const SETTLE_CHUNK = 1_000;

export interface DecisionCounts {
  changed: number;
  conflicts: number;
  ambiguous: number;
  restored?: number;
  withdrawn?: number;
}


export type DecisionStart =
  | { done: true; batch: { id: number; filename: string; uploaded_by: number }; counts: DecisionCounts }
  | { done: false; batch: { id: number; filename: string; uploaded_by: number; state: string }; total: number };

const targetOf = (d: Decision) => (d === 'approved' ? 'approved' : 'rejected');
/** the state a decision moves besides pending: approving restores what a return withdrew; returning withdraws what is approved */
const movedFrom = (d: Decision) => (d === 'approved' ? 'withdrawn' : 'approved');
const movedTo = (d: Decision) => (d === 'approved' ? 'approved' : 'withdrawn');

/** Change up to `limit` rows with id > afterId; returns how many and the last id changed. */
async function changeChunk(trx: Knex.Transaction, batchId: number, d: Decision, actorId: number, from: 'pending' | 'moved', limit: number, afterId = 0): Promise<{ n: number; last: number }> {
  const fromState = from === 'pending' ? 'pending' : movedFrom(d);
  const toState = from === 'pending' ? targetOf(d) : movedTo(d);
  const ids = (await trx('measurements').where({ batch_id: batchId, state: fromState }).where('id', '>', afterId).orderBy('id').limit(limit).pluck('id')) as number[];
  if (!ids.length) return { n: 0, last: afterId };
  const now = new Date().toISOString();
  for (let i = 0; i < ids.length; i += 900) await trx('measurements').whereIn('id', ids.slice(i, i + 900)).update({ state: toState, version: trx.raw('version + 1'), updated_at: now, updated_by: actorId });
  await recordAudit(
    trx,
    ids.map((id) =>
      from === 'pending'
        ? { actorId, action: `measurement.${d === 'approved' ? 'approve' : 'reject'}`, entityType: 'measurement', entityId: id, before: { state: 'pending' }, after: { state: toState }, reason: `batch ${batchId} ${d}` }
        : d === 'approved'
          ? { actorId, action: 'measurement.restore', entityType: 'measurement', entityId: id, before: { state: 'withdrawn' }, after: { state: 'approved' }, reason: `batch ${batchId} approved again` }
          : { actorId, action: 'measurement.withdraw', entityType: 'measurement', entityId: id, before: { state: 'approved' }, after: { state: 'withdrawn' }, reason: `batch ${batchId} returned` },
    ),
  );
  return { n: ids.length, last: ids[ids.length - 1] };
}

/** The last step, in the caller's transaction: held counts, the batch's new state, its audit entry. */
async function flip(trx: Knex.Transaction, b: { id: number; state: string }, s: Settle): Promise<DecisionCounts> {
  const held = (await trx('measurements').where({ batch_id: b.id }).whereIn('state', ['conflict', 'ambiguous']).select('state').count({ n: '*' }).groupBy('state')) as { state: string; n: number }[];
  const counts: DecisionCounts = { changed: s.changed, conflicts: 0, ambiguous: 0, [s.decision === 'approved' ? 'restored' : 'withdrawn']: s.moved };
  for (const h of held) counts[h.state === 'conflict' ? 'conflicts' : 'ambiguous'] = Number(h.n);
  const now = new Date().toISOString();
  await trx('batches').where({ id: b.id }).update({ state: s.decision, settling: null, settle_json: null, reviewed_by: s.actorId, reviewed_at: now, review_note: s.note, updated_at: now });
  await recordAudit(trx, { actorId: s.actorId, action: `batch.${s.decision === 'approved' ? 'approve' : 'return'}`, entityType: 'batch', entityId: b.id, before: { state: s.from }, after: { state: s.decision, ...counts }, reason: s.note });
  return counts;
}

/**
 * Check that the batch may be decided and either decide it at once (small) or mark it settling
 * (large; then call settleChunks, off the request thread). Allowed: awaiting_review → approved |
 * returned; approved → returned; returned → approved.
 */
export async function beginDecision(db: Knex, actorId: number, batchId: number, decision: Decision, note: string | null, syncRows = SYNC_DECISION_ROWS): Promise<DecisionStart> {
  return db.transaction(async (trx) => {
    const b = await trx('batches').where({ id: batchId }).first();
    if (!b) throw notFound(`Batch ${batchId}`);
    if (b.settling) throw new AppError(409, 'decision_in_progress', `Batch ${batchId} is being ${b.settling === 'approved' ? 'approved' : 'returned'} now; decide again once that has finished (GET /batches/${batchId} shows its progress).`);
    if (!['awaiting_review', 'approved', 'returned'].includes(b.state)) throw new AppError(409, 'not_reviewable', `Batch ${batchId} is ${b.state}; only a checked batch can be approved or returned.`);
    if (b.state === decision) throw new AppError(409, 'already_decided', `Batch ${batchId} is already ${decision}.`);
    // a calibration being written (or rolled back) in short transactions finishes first
    const moving = await trx('calibrations').where({ batch_id: batchId }).whereIn('state', ['applying', 'reverting']).first('id', 'state');
    if (moving) throw new AppError(409, 'calibration_in_progress', `Batch ${batchId} has calibration ${moving.id} ${moving.state === 'applying' ? 'being applied' : 'being reverted'} now; decide once it has finished.`);
    // counted only up to the threshold here (the request's thread); a large batch is counted by the worker
    const upTo = async (state: string, limit: number) =>
      Number(((await trx.from(trx('measurements').where({ batch_id: batchId, state }).select(trx.raw('1')).limit(limit + 1).as('x')).count({ n: '*' })) as { n: number }[])[0].n);
    const pending = await upTo('pending', syncRows);
    const moved = pending > syncRows ? 0 : await upTo(movedFrom(decision), syncRows - pending);
    const s: Settle = { decision, actorId, note, from: b.state, total: pending + moved, changed: 0, moved: 0, startedAt: new Date().toISOString() };
    if (s.total <= syncRows) {
      s.changed = (await changeChunk(trx, batchId, decision, actorId, 'pending', Number.MAX_SAFE_INTEGER)).n;
      s.moved = (await changeChunk(trx, batchId, decision, actorId, 'moved', Number.MAX_SAFE_INTEGER)).n;
      return { done: true as const, batch: b, counts: await flip(trx, b, s) };
    }
    // until the worker has counted: the batch's accepted rows, the usual size of a decision
    s.total = Math.max(s.total, Number((b.counts_json ? JSON.parse(b.counts_json) : {}).accepted ?? 0));
    await trx('batches').where({ id: batchId }).update({ settling: decision, settle_json: JSON.stringify(s), updated_at: new Date().toISOString() });
    await recordAudit(trx, { actorId, action: `batch.${decision === 'approved' ? 'approve' : 'return'}_started`, entityType: 'batch', entityId: batchId, before: { state: b.state }, after: { settling: decision, measurements: s.total }, reason: note });
    return { done: false as const, batch: b, total: s.total };
  });
}

/**
 * Apply a settling batch's decision in short transactions until it flips (resumable: each chunk
 * takes the rows still in their old state). Returns the counts, or null when the batch is not
 * settling (already done, or never started).
 */
export async function settleChunks(db: Knex, batchId: number, onProgress: (done: number, total: number) => void = () => {}, chunk = SETTLE_CHUNK): Promise<DecisionCounts | null> {
  // the exact total, counted once here (a read: no write lock), for the progress
  const b0 = await db('batches').where({ id: batchId }).first('settling', 'settle_json');
  if (b0?.settling && b0.settle_json) {
    const s = JSON.parse(b0.settle_json) as Settle;
    const n = async (state: string) => Number(((await db('measurements').where({ batch_id: batchId, state }).count({ n: '*' })) as { n: number }[])[0].n);
    const total = s.changed + s.moved + (await n('pending')) + (await n(movedFrom(s.decision)));
    if (total !== s.total) await db('batches').where({ id: batchId, settling: s.decision }).update({ settle_json: JSON.stringify({ ...s, total }) });
  }
  for (;;) {
    const t0 = performance.now();
    const step = await db.transaction(async (trx) => {
      const b = await trx('batches').where({ id: batchId }).first('id', 'state', 'settling', 'settle_json');
      if (!b?.settling || !b.settle_json) return { end: true as const, counts: null };
      const s = JSON.parse(b.settle_json) as Settle;
      let r = await changeChunk(trx, batchId, s.decision, s.actorId, 'pending', chunk, s.afterPending ?? 0);
      let n = r.n;
      if (n) {
        s.changed += n;
        s.afterPending = r.last;
      } else {
        r = await changeChunk(trx, batchId, s.decision, s.actorId, 'moved', chunk, s.afterMoved ?? 0);
        n = r.n;
        s.moved += n;
        s.afterMoved = r.last;
      }
      if (!n) return { end: true as const, counts: await flip(trx, b, s) };
      await trx('batches').where({ id: batchId }).update({ settle_json: JSON.stringify(s) });
      return { end: false as const, done: s.changed + s.moved, total: s.total };
    });
    if (step.end) return step.counts;
    onProgress(step.done, step.total);
    // a pause as long as the transaction was: a writer waiting on another connection (an edit, a
    // sign-in) gets the lock instead of finding it taken again at each of its retries
    await new Promise((r) => setTimeout(r, Math.max(5, performance.now() - t0)));
  }
}
