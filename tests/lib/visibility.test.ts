import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../helpers/app';
import { whereApprovedSettled } from '../../server/lib/visibility';

// The demo seed has approved batches; a batch whose decision is being written in short
// transactions (batches.settling set) must show none of its rows as approved until it flips.
describe('whereApprovedSettled', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await makeTestApp();
  });
  afterAll(async () => t?.close());

  const approvedIds = async () => (await whereApprovedSettled(t.db('measurements'), t.db).pluck('id')) as number[];

  it('keeps approved rows and drops every row of a settling batch until it flips', async () => {
    const batch = await t.db('batches').where({ state: 'approved' }).first();
    expect(batch).toBeTruthy();
    const ofBatch = (await t.db('measurements').where({ batch_id: batch.id, state: 'approved' }).pluck('id')) as number[];
    expect(ofBatch.length).toBeGreaterThan(0);
    const all = (await t.db('measurements').where({ state: 'approved' }).pluck('id')) as number[];
    expect((await approvedIds()).sort()).toEqual(all.sort());

    await t.db('batches').where({ id: batch.id }).update({ settling: 'returned' });
    const during = new Set(await approvedIds());
    expect(ofBatch.some((id) => during.has(id))).toBe(false);
    expect(during.size).toBe(all.length - ofBatch.length);

    await t.db('batches').where({ id: batch.id }).update({ settling: null });
    expect((await approvedIds()).length).toBe(all.length);
  });

});
