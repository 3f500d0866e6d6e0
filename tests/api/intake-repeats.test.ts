// Real nights: repeats inside one batch never fail it; another observer's pending stars never
// meet an observer's rows; a failed batch can be uploaded again. The expected counts follow from
// the de-duplication rule in ../shared/METHODS.md (same star, band, instrument and epoch within
// the MJD tolerance = the same observation) and the 1″ match radius (common practice).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';

const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(async () => t.close());

async function upload(agent: request.Agent, lines: string[], name: string) {
  return agent.post('/api/v1/batches').set('Origin', t.config.publicUrl).attach('file', Buffer.from([HEADER, ...lines].join('\n') + '\n'), name);
}
async function rows(agent: request.Agent, id: number) {
  const res = await agent.get(`/api/v1/batches/${id}/rows?limit=5000`);
  expect(res.status).toBe(200);
  return res.body.rows as any[];
}

describe('repeats inside one batch', () => {
  it('an exact repeated row is a duplicate that points at the line it repeats', async () => {
    const agent = await signedIn(t.app, 'observer');
    const row = 'Repeat star,5100000000000000001,31.0,-11.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK';
    const res = await upload(agent, [row, row], 'exact-repeat.csv');
    expect(res.status).toBe(201);
    expect(res.body.state).toBe('awaiting_review');
    expect(res.body.counts).toMatchObject({ rows: 2, accepted: 1, duplicates: 1, conflicts: 0, newStars: 1, rejected: 0 });
    const r = await rows(agent, res.body.id);
    expect(r[1].state).toBe('duplicate');
    expect(r[1].duplicateOf).toBe(r[0].measurementId);
    expect(r[1].duplicateOfLine).toBe(2);
    expect(await t.db('stars').where({ source_id: '5100000000000000001' }).count({ n: '*' })).toEqual([{ n: 1 }]);
  });

  it('the same new star at another epoch is one star with two measurements', async () => {
    const agent = await signedIn(t.app, 'observer');
    const res = await upload(agent, [
      'Two-epoch star,5100000000000000002,32.0,-12.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK',
      'Two-epoch star,5100000000000000002,32.0,-12.0,V,0.0104,0.0019,0.0005,0.0005,2.0,0.05,61101.25,KR-HAWK',
    ], 'two-epochs.csv');
    expect(res.status).toBe(201);
    expect(res.body.counts).toMatchObject({ rows: 2, accepted: 2, duplicates: 0, conflicts: 0, newStars: 1 });
    const r = await rows(agent, res.body.id);
    expect(r[0].star.id).toBe(r[1].star.id);
    expect(r.map((x) => x.star.match)).toEqual(['new', 'source_id']);
  });

  it('two rows without source_id within the radius of each other and of no catalog star make one new star', async () => {
    const agent = await signedIn(t.app, 'observer');
    // 0.36″ apart in declination (0.0001°): inside the 1″ radius
    const res = await upload(agent, [
      'Pair star,,33.0,-13.0000,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK',
      'Pair star,,33.0,-13.0001,V,0.0101,0.0021,0.0005,0.0005,2.0,0.05,61102.25,KR-HAWK',
    ], 'pair.csv');
    expect(res.status).toBe(201);
    expect(res.body.counts).toMatchObject({ rows: 2, accepted: 2, newStars: 1, ambiguous: 0 });
    const r = await rows(agent, res.body.id);
    expect(r[1].star).toMatchObject({ id: r[0].star.id, match: 'position' });
  });

  it('repeats across the 2,000-row chunks of a larger night are found too', async () => {
    const agent = await signedIn(t.app, 'observer');
    const lines: string[] = [];
    for (let i = 0; i < 2100; i++) lines.push(`Chunk star ${i},${5200000000000000000n + BigInt(i)},${(40 + i * 0.01).toFixed(4)},-20.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK`);
    lines.push(lines[0]); // line 2102 repeats line 2 exactly
    lines.push(lines[1].replace('61100.25', '61105.25')); // line 2103: star of line 3 at another epoch
    lines.push(`Chunk pair,,50.0,-30.0000,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK`);
    lines.unshift(`Chunk pair,,50.0,-30.0001,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61101.25,KR-HAWK`);
    const res = await upload(agent, lines, 'chunks.csv');
    expect(res.status).toBe(201);
    expect(res.body.state).toBe('awaiting_review');
    expect(res.body.counts).toMatchObject({ rows: 2104, duplicates: 1, accepted: 2103, newStars: 2101, conflicts: 0, rejected: 0 });
    const r = await rows(agent, res.body.id);
    const dup = r.find((x) => x.state === 'duplicate');
    expect(dup.line).toBe(2103);
    expect(dup.duplicateOfLine).toBe(3);
  });
});

describe('a night of wide rows', () => {
  it('is checked on the parse worker (its heap is small) in chunks bounded by characters, every row kept', async () => {
    // 400 extra columns of 40 characters (about 16 KB a row): chunks of a few hundred rows, more
    // than the main thread prepares itself before the parse worker takes over
    const agent = await signedIn(t.app, 'observer');
    const extra = Array.from({ length: 400 }, (_, k) => `note_${k}`);
    const n = 1400;
    const lines: string[] = [];
    for (let i = 0; i < n; i++) {
      const pad = Array.from({ length: 400 }, (_, k) => `${i}-${k}-`.padEnd(40, 'w'));
      lines.push(`Wide star ${i},${5500000000000000000n + BigInt(i)},${(70 + i * 0.01).toFixed(4)},-25.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK,${pad.join(',')}`);
    }
    const body = Buffer.from([`${HEADER},${extra.join(',')}`, ...lines].join('\n') + '\n');
    expect(body.length).toBeGreaterThan(16 << 20);
    const res = await agent.post('/api/v1/batches').set('Origin', t.config.publicUrl).attach('file', body, 'wide.csv');
    expect([201, 202]).toContain(res.status);
    let b = res.body;
    while (b.state === 'checking' || b.state === 'received') {
      await new Promise((r) => setTimeout(r, 100));
      b = (await agent.get(`/api/v1/batches/${b.id}`)).body;
    }
    expect(b.state).toBe('awaiting_review');
    expect(b.counts).toMatchObject({ rows: n, accepted: n, rejected: 0, newStars: n });
    const last = (await rows(agent, b.id)).at(-1);
    expect(last.line).toBe(n + 1);
  }, 180_000);
});

describe('another observer’s pending stars stay out of an observer’s rows', () => {
  it('rows meet only approved or own stars; curators see the note', async () => {
    const first = await signedIn(t.app, 'observer');
    const a = await upload(first, [
      'SECRET-B2-STAR,5300000000000000001,60.0,10.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK',
      'SECRET-B2-NEIGHBOUR,,61.0,11.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK',
    ], 'secret.csv');
    expect(a.status).toBe(201);
    expect(a.body.state).toBe('awaiting_review');

    const admin = await signedIn(t.app, 'admin');
    const created = await admin.post('/api/v1/admin/users').set('Origin', t.config.publicUrl).send({ email: 'second.observer@kestrel.example', name: 'Second Observer', role: 'observer', password: 'a-long-test-password' });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const second = request.agent(t.app);
    expect((await second.post('/api/v1/auth/login').set('Origin', t.config.publicUrl).send({ email: 'second.observer@kestrel.example', password: 'a-long-test-password' })).status).toBe(200);

    const b = await upload(second, [
      // same source_id, same epoch and values: would be a duplicate of the pending measurement
      'My star,5300000000000000001,60.0,10.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK',
      // 0.36″ from the pending neighbour, no source_id
      'Near star,,61.0,11.0001,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK',
    ], 'second.csv');
    expect(b.status, JSON.stringify(b.body)).toBe(201);
    expect(b.body.state).toBe('awaiting_review');
    expect(b.body.counts).toMatchObject({ rows: 2, duplicates: 0, conflicts: 0, matchedStars: 0 });
    const seen = await rows(second, b.body.id);
    expect(JSON.stringify(seen)).not.toMatch(/SECRET-B2/);
    expect(seen.every((x) => !('curatorNote' in x))).toBe(true);
    // the row with the held source_id waits for a curator; the other is a new star of its own
    expect(seen[0]).toMatchObject({ state: 'ambiguous', star: null, candidates: [] });
    expect(seen[1].star).toMatchObject({ match: 'new' });

    const curator = await signedIn(t.app, 'curator');
    const forCurator = await rows(curator, b.body.id);
    expect(forCurator[0].curatorNote).toMatch(/SECRET-B2-STAR.*same source_id/);
    expect(forCurator[1].curatorNote).toMatch(/SECRET-B2-NEIGHBOUR/);

    // once the first batch is approved, the same rows meet its stars
    expect((await curator.post(`/api/v1/batches/${a.body.id}/approve`).set('Origin', t.config.publicUrl).send({})).status).toBe(200);
    const again = await upload(second, [
      'My star,5300000000000000001,60.0,10.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK',
    ], 'second-after.csv');
    expect(again.body.counts).toMatchObject({ rows: 1, duplicates: 1, matchedStars: 1 });
  });
});

describe('a failed batch', () => {
  it('can be uploaded again with the same bytes and is checked again', async () => {
    const agent = await signedIn(t.app, 'observer');
    const lines = ['Retry star,5400000000000000001,70.0,5.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61100.25,KR-HAWK'];
    const first = await upload(agent, lines, 'retry.csv');
    expect(first.status).toBe(201);
    // as if its check had failed: state failed and its rows cleared
    await t.db('measurements').where({ batch_id: first.body.id }).del();
    await t.db('batch_rows').where({ batch_id: first.body.id }).del();
    await t.db('stars').where({ batch_id: first.body.id }).del();
    await t.db('batches').where({ id: first.body.id }).update({ state: 'failed', failure: 'The batch could not be stored: test.' });
    const again = await upload(agent, lines, 'retry-again.csv');
    expect(again.status).toBe(201);
    expect(again.body.id).toBe(first.body.id);
    expect(again.body.state).toBe('awaiting_review');
    expect(again.body.failure).toBeNull();
    expect(again.body.counts).toMatchObject({ rows: 1, accepted: 1, newStars: 1 });
  });
});
