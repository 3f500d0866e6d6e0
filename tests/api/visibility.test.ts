import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { browserLikeAgent, makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { recordAudit } from '../../server/audit/service.js';

// Two observers. B uploads a new star SECRET-B2-STAR awaiting review; A uploads a row at the same
// position (0.1″ away) and a copy of B's row. Until a curator approves B's batch, nothing A can read
// may show B's star, its values or that it exists; curators see both.
const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';
const B_ROW = 'SECRET-B2-STAR,4611686018427387911,123.456789,77.654321,R,0.0123,-0.0045,0.0008,0.0008,1.234,0.02,61100.5,KR-HAWK';
// 0.1″ in declination from B's star, well inside the 1″ match radius
const A_NEAR = 'A-NEAR-STAR,,123.456789,77.65434878,R,0.0201,0.0077,0.0009,0.0009,1.1,0.03,61101.5,KR-HAWK';

let t: TestApp;
type Agent = Awaited<ReturnType<typeof signedIn>>;
let curator: Agent, modeler: Agent, observerA: Agent, observerB: Agent;
let bBatch: number, aBatch: number, bStar: number, bMeasurement: number;

async function waitForReview(agent: Agent, id: number) {
  // the check may run after the upload answers: wait on the state, not a fixed time
  for (;;) {
    const b = (await agent.get(`/api/v1/batches/${id}`)).body;
    if (!['received', 'checking'].includes(b.state)) return b;
    await new Promise((r) => setTimeout(r, 50));
  }
}

async function upload(agent: Agent, lines: string[], name: string) {
  const res = await agent.post('/api/v1/batches').attach('file', Buffer.from([HEADER, ...lines].join('\n') + '\n'), name);
  expect(res.status, JSON.stringify(res.body)).toBeLessThan(300);
  const b = await waitForReview(agent, res.body.id);
  expect(b.state).toBe('awaiting_review');
  return b.id as number;
}

const ids = (body: { stars: { id: number }[] }) => body.stars.map((s) => s.id);

beforeAll(async () => {
  t = await makeTestApp();
  curator = await signedIn(t.app, 'curator');
  modeler = await signedIn(t.app, 'modeler');
  observerA = await signedIn(t.app, 'observer');
  const admin = await signedIn(t.app, 'admin');
  const created = await admin.post('/api/v1/admin/users').send({ email: 'b2.observer@kestrel.example', name: 'Second Observer', role: 'observer', password: 'b2-observer-password' });
  expect(created.status).toBe(201);
  observerB = browserLikeAgent(t.app);
  expect((await observerB.post('/api/v1/auth/login').send({ email: 'b2.observer@kestrel.example', password: 'b2-observer-password' })).status).toBe(200);
});
afterAll(async () => t.close());

describe("another observer's unapproved star", () => {
  let overviewA0 = 0, overviewCurator0 = 0;

  it('B uploads SECRET-B2-STAR; the overview counts of A and the modeler do not change, the curator’s do', async () => {
    overviewA0 = (await observerA.get('/api/v1/overview')).body.counts.stars;
    overviewCurator0 = (await curator.get('/api/v1/overview')).body.counts.stars;
    const modeler0 = (await modeler.get('/api/v1/overview')).body.counts.stars;
    bBatch = await upload(observerB, [B_ROW], 'b2-night.csv');
    const m = await t.db('measurements').where({ batch_id: bBatch }).first();
    bMeasurement = m.id;
    bStar = m.star_id;
    expect((await t.db('stars').where({ id: bStar }).first()).name).toBe('SECRET-B2-STAR');
    expect((await observerA.get('/api/v1/overview')).body.counts.stars).toBe(overviewA0);
    expect((await modeler.get('/api/v1/overview')).body.counts.stars).toBe(modeler0);
    expect((await curator.get('/api/v1/overview')).body.counts.stars).toBe(overviewCurator0 + 1);
    // B sees their own star
    expect(ids((await observerB.get('/api/v1/stars?q=SECRET')).body)).toEqual([bStar]);
  });

  it('A uploads a row at the same position and a copy of B’s row; A’s review table shows nothing of B’s', async () => {
    aBatch = await upload(observerA, [A_NEAR, B_ROW], 'a-night.csv');
    const table = await observerA.get(`/api/v1/batches/${aBatch}/measurements?limit=100`);
    expect(table.status).toBe(200);
    expect(table.body.rows).toHaveLength(2);
    for (const row of table.body.rows) {
      if (row.line === 2) expect(row.star_name).not.toBe('SECRET-B2-STAR'); // A's own row never shows B's name
      expect(row.star_id).not.toBe(bStar);
      expect(row.star_source_id === '4611686018427387911' && row.line === 2).toBe(false);
      expect(row.conflicts_with).not.toBe(bMeasurement);
      if (row.competing) {
        expect(row.competing.id).not.toBe(bMeasurement);
        expect(row.competing.batch_id).toBe(aBatch);
      }
      for (const c of row.candidates) expect(c.id).not.toBe(bStar);
    }
    // searching A's own table for B's star's name finds nothing A did not upload under that name
    const search = (await observerA.get(`/api/v1/batches/${aBatch}/measurements?search=SECRET-B2`)).body;
    for (const row of search.rows) expect(row.star_id).not.toBe(bStar);
  });

  it('even a row of A’s tied to B’s star (as an older check did) shows neither the star nor B’s values', async () => {
    // the review layer must hold on its own, whatever intake decided
    const row = await t.db('batch_rows').where({ batch_id: aBatch, line: 2 }).first();
    const before = await t.db('measurements').where({ id: row.measurement_id }).first();
    await t.db('measurements').where({ id: row.measurement_id }).update({ star_id: bStar, state: 'conflict', conflicts_with: bMeasurement });
    await t.db('batch_rows').where({ id: row.id }).update({ candidates_json: JSON.stringify([{ id: bStar, name: 'SECRET-B2-STAR', sourceId: '4611686018427387911', separationArcsec: 0.1 }]) });
    try {
      const mine = (await observerA.get(`/api/v1/batches/${aBatch}/measurements?limit=100`)).body.rows.find((r: { line: number }) => r.line === 2);
      expect(mine.state).toBe('conflict');
      expect(mine).toMatchObject({ star_id: null, star_name: null, star_source_id: null, conflicts_with: null, competing: null, candidates: [] });
      expect((await observerA.get(`/api/v1/batches/${aBatch}/measurements?search=SECRET`)).body.total).toBe(0);
      expect(ids((await observerA.get('/api/v1/stars?q=SECRET')).body)).not.toContain(bStar);
      expect((await observerA.get(`/api/v1/stars/${bStar}`)).status).toBe(404);
      // the curator sees the tie and B's competing values
      const cur = (await curator.get(`/api/v1/batches/${aBatch}/measurements?limit=100`)).body.rows.find((r: { line: number }) => r.line === 2);
      expect(cur).toMatchObject({ star_id: bStar, star_name: 'SECRET-B2-STAR', conflicts_with: bMeasurement });
      expect(cur.competing).toMatchObject({ id: bMeasurement, q: 0.0123 });
      expect(cur.candidates.map((c: { id: number }) => c.id)).toEqual([bStar]);
    } finally {
      await t.db('measurements').where({ id: row.measurement_id }).update({ star_id: before.star_id, state: before.state, conflicts_with: before.conflicts_with });
      await t.db('batch_rows').where({ id: row.id }).update({ candidates_json: row.candidates_json });
    }
  });

  it('catalog search, cone search and the star page do not reveal it to A or the modeler', async () => {
    for (const who of [observerA, modeler]) {
      const byName = await who.get('/api/v1/stars?q=SECRET');
      expect(byName.status).toBe(200);
      expect(ids(byName.body)).not.toContain(bStar);
      expect(ids((await who.get('/api/v1/stars?q=4611686018427387911')).body)).not.toContain(bStar);
      expect(ids((await who.get('/api/v1/stars?ra=123.456789&dec=77.654321&radius=0.01')).body)).not.toContain(bStar);
      expect(ids((await who.get('/api/v1/stars?sort=n_measurements&order=desc&limit=1000')).body)).not.toContain(bStar);
      const page = await who.get(`/api/v1/stars/${bStar}`);
      const none = await who.get('/api/v1/stars/987654321');
      expect(page.status).toBe(404);
      expect(page.body.error.code).toBe(none.body.error.code);
    }
    // the modeler sees none of A's unapproved rows either
    expect(ids((await modeler.get('/api/v1/stars?ra=123.456789&dec=77.654321&radius=0.01')).body)).toEqual([]);
    // A still finds A's own new star
    const own = (await observerA.get('/api/v1/stars?ra=123.456789&dec=77.654321&radius=0.01')).body.stars;
    expect(own.length).toBeGreaterThan(0);
    for (const s of own) expect(s.name).not.toBe('SECRET-B2-STAR');
  });

  it('curators see both', async () => {
    expect(ids((await curator.get('/api/v1/stars?q=SECRET')).body)).toContain(bStar);
    expect((await curator.get(`/api/v1/stars/${bStar}`)).status).toBe(200);
    const cone = (await curator.get('/api/v1/stars?ra=123.456789&dec=77.654321&radius=0.01')).body.stars;
    expect(cone.map((s: { id: number }) => s.id)).toContain(bStar);
    const bRows = (await curator.get(`/api/v1/batches/${bBatch}/measurements`)).body.rows;
    expect(bRows[0].star_name).toBe('SECRET-B2-STAR');
  });

  it('once a curator approves B’s batch, A and the modeler see the star; returning it hides it again', async () => {
    expect((await curator.post(`/api/v1/batches/${bBatch}/approve`).send({})).status).toBe(200);
    expect(ids((await observerA.get('/api/v1/stars?q=SECRET')).body)).toContain(bStar);
    expect(ids((await modeler.get('/api/v1/stars?q=SECRET')).body)).toContain(bStar);
    expect((await observerA.get('/api/v1/overview')).body.counts.stars).toBeGreaterThan(overviewA0);
    const back = await curator.post(`/api/v1/batches/${bBatch}/reject`).send({ note: 'wrong night' });
    expect(back.status).toBe(200);
    expect(back.body.counts.withdrawn).toBe(1);
    expect(ids((await observerA.get('/api/v1/stars?q=SECRET')).body)).not.toContain(bStar);
    expect(ids((await modeler.get('/api/v1/stars?q=SECRET')).body)).not.toContain(bStar);
    expect((await modeler.get(`/api/v1/stars/${bStar}`)).status).toBe(404);
  });

  it('the audit trail of A’s own measurement does not name B’s measurement or star', async () => {
    const mine = await t.db('measurements').where({ batch_id: aBatch }).orderBy('id').first();
    await recordAudit(t.db, [
      { actorId: null, action: 'measurement.resolve', entityType: 'measurement', entityId: mine.id, before: { state: 'conflict', conflictsWith: bMeasurement }, after: { kept: mine.id, rejected: bMeasurement } },
      { actorId: null, action: 'measurement.attach', entityType: 'measurement', entityId: mine.id, before: { state: 'ambiguous', starId: null }, after: { state: 'pending', starId: bStar }, reason: `conflict with ${bMeasurement} resolved` },
    ]);
    const hist = (await observerA.get(`/api/v1/measurements/${mine.id}/history`)).body.history;
    const resolve = hist.find((h: { action: string }) => h.action === 'measurement.resolve');
    expect(resolve.before.conflictsWith).toBeNull();
    expect(resolve.after).toEqual({ kept: mine.id, rejected: null });
    const attach = hist.find((h: { action: string }) => h.action === 'measurement.attach');
    expect(attach.after.starId).toBeNull();
    expect(attach.reason).toBe('conflict with another measurement resolved');
    const cur = (await curator.get(`/api/v1/measurements/${mine.id}/history`)).body.history;
    expect(cur.find((h: { action: string }) => h.action === 'measurement.resolve').after.rejected).toBe(bMeasurement);
    expect(cur.find((h: { action: string }) => h.action === 'measurement.attach').after.starId).toBe(bStar);
  });
});
