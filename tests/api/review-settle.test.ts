import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../helpers/app.js';
import { beginDecision, settleChunks } from '../../server/review/approve.js';
import { settleInBackground } from '../../server/review/settle.js';

// A large decision is applied in short transactions off the request thread; the outcome must be
// exactly what the one-transaction decision gives (same states, versions, counts and audit
// entries), and an interruption resumes where it stopped. The reference is the one-transaction
// path on an identical copy of the seeded demo.
let sync: TestApp, chunked: TestApp, resumed: TestApp;
let batchId: number;
let curatorId: number;

const snapshot = async (t: TestApp) => ({
  measurements: await t.db('measurements').where({ batch_id: batchId }).orderBy('id').select('id', 'state', 'version'),
  audit: await t.db('audit_log').where({ entity_type: 'measurement' }).whereIn('action', ['measurement.approve', 'measurement.reject', 'measurement.withdraw', 'measurement.restore']).count({ n: '*' }),
  batch: await t.db('batches').where({ id: batchId }).first('state', 'settling', 'settle_json', 'review_note'),
});

beforeAll(async () => {
  [sync, chunked, resumed] = await Promise.all([makeTestApp(), makeTestApp(), makeTestApp()]);
  const b = await sync.db('batches').where({ state: 'awaiting_review' }).orderBy('id').first('id');
  batchId = b.id;
  curatorId = (await sync.db('users').where({ email: 'curator@kestrel.example' }).first('id')).id;
  const pending = await sync.db('measurements').where({ batch_id: batchId, state: 'pending' }).count({ n: '*' });
  expect(Number(pending[0].n)).toBeGreaterThan(10); // enough rows for several chunks of 3–5
});
afterAll(async () => Promise.all([sync?.close(), chunked?.close(), resumed?.close()]));

describe('a batch decision applied in short transactions', () => {
  it('marks the batch settling at once, then ends exactly as the one-transaction decision', async () => {
    const one = await beginDecision(sync.db, curatorId, batchId, 'approved', 'looks good');
    expect(one.done).toBe(true);
    const start = await beginDecision(chunked.db, curatorId, batchId, 'approved', 'looks good', 5);
    expect(start.done).toBe(false);
    const during = await chunked.db('batches').where({ id: batchId }).first('state', 'settling');
    expect(during).toEqual({ state: 'awaiting_review', settling: 'approved' });
    // a second decision while it settles is refused, naming the batch
    await expect(beginDecision(chunked.db, curatorId, batchId, 'returned', null, 5)).rejects.toMatchObject({ status: 409, code: 'decision_in_progress' });
    const counts = await settleInBackground(chunked.db, chunked.config.dbFile, batchId); // on a worker thread
    expect(one.done && counts).toEqual(one.done ? one.counts : null);
    const [a, b] = [await snapshot(sync), await snapshot(chunked)];
    expect(b.measurements).toEqual(a.measurements);
    expect(b.audit).toEqual(a.audit);
    expect(b.batch).toEqual({ ...a.batch, settling: null, settle_json: null });
    expect(b.batch.state).toBe('approved');
  });

  it('resumes after an interruption and returns (withdraws) as the one-transaction path does', async () => {
    await beginDecision(resumed.db, curatorId, batchId, 'approved', 'looks good', 5);
    // stop after two chunks of 3, as a crash would
    let chunks = 0;
    await expect(settleChunks(resumed.db, batchId, () => {
      if (++chunks === 2) throw new Error('simulated crash');
    }, 3)).rejects.toThrow('simulated crash');
    const mid = await resumed.db('batches').where({ id: batchId }).first('state', 'settling');
    expect(mid).toEqual({ state: 'awaiting_review', settling: 'approved' });
    await settleChunks(resumed.db, batchId, () => {}, 3);
    expect((await snapshot(resumed)).measurements).toEqual((await snapshot(sync)).measurements);
    // now return it, chunked on one side and in one transaction on the other
    const ret = await beginDecision(sync.db, curatorId, batchId, 'returned', 'wrong filter');
    await beginDecision(resumed.db, curatorId, batchId, 'returned', 'wrong filter', 5);
    const counts = await settleChunks(resumed.db, batchId, () => {}, 4);
    expect(ret.done && counts).toEqual(ret.done ? ret.counts : null);
    expect(counts?.withdrawn).toBeGreaterThan(0);
    const [a, b] = [await snapshot(sync), await snapshot(resumed)];
    expect(b.measurements).toEqual(a.measurements);
    expect(b.audit).toEqual(a.audit);
    expect(b.batch.state).toBe('returned');
  });
});
