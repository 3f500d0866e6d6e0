import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { angularSeparationDeg } from '../../server/science/separation.js';
import { DEFAULT_RUN, gatherStars } from '../../server/tomography/service.js';

const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';
let t: TestApp;
let batchId: number;
beforeAll(async () => {
  t = await makeTestApp();
  batchId = (await t.db('batches').where({ filename: 'kestrel-night-hawk-R.csv' }).first()).id;
});
afterAll(async () => t.close());

async function firstMeasurement() {
  return t.db('measurements').where({ batch_id: batchId }).orderBy('id').first();
}

describe('editing a measurement', () => {
  it('a good edit is validated, re-derived, versioned and audited', async () => {
    const curator = await signedIn(t.app, 'curator');
    const m = await firstMeasurement();
    const res = await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { q: 0.03, u: 0.04 }, version: m.version, reason: 'transcription error in the night log' });
    expect(res.status).toBe(200);
    expect(res.body.measurement.version).toBe(m.version + 1);
    // p = sqrt(0.03² + 0.04²) = 0.05 exactly; θ = ½·atan2(0.04, 0.03) = 26.565° (common practice)
    expect(res.body.measurement.p).toBeCloseTo(0.05, 12);
    expect(res.body.measurement.theta_deg).toBeCloseTo(26.56505118, 6);
    expect(Math.hypot(res.body.measurement.q_gal, res.body.measurement.u_gal)).toBeCloseTo(0.05, 12);
    const hist = (await curator.get(`/api/v1/measurements/${m.id}/history`)).body.history;
    const edit = hist.find((h: { action: string }) => h.action === 'measurement.edit');
    expect(edit.before).toMatchObject({ q: m.q, u: m.u, version: m.version });
    expect(edit.after).toMatchObject({ q: 0.03, u: 0.04, version: m.version + 1 });
    expect(edit.reason).toBe('transcription error in the night log');
    expect(edit.actor.email).toBe('curator@kestrel.example');
  });

  it('an edit returns the re-derived warnings', async () => {
    const curator = await signedIn(t.app, 'curator');
    const m = await t.db('measurements').where({ batch_id: batchId }).orderBy('id').offset(5).first();
    const res = await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { q: 0.0001, u: 0.0001 }, version: m.version });
    expect(res.status).toBe(200);
    expect(res.body.warnings.map((w: { message: string }) => w.message).join(' ')).toMatch(/p\/σp = .* below 5/);
  });

  it('a bad value is refused with its reason and changes nothing', async () => {
    const curator = await signedIn(t.app, 'curator');
    const m = await firstMeasurement();
    const res = await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { q: 2 }, version: m.version });
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields[0]).toMatchObject({ field: 'q' });
    expect(res.body.error.message).toMatch(/≤ 1/);
    expect(await firstMeasurement()).toEqual(m);
    const band = await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { band: 'I' }, version: m.version });
    expect(band.status).toBe(400);
    expect(band.body.error.message).toMatch(/KR-HAWK observes in R,V only/);
    const unknown = await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { colour: 'red' }, version: m.version });
    expect(unknown.status).toBe(400);
  });

  it('a stale version gets 409 with the current row, never a silent overwrite', async () => {
    const curator = await signedIn(t.app, 'curator');
    const m = await firstMeasurement();
    const res = await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { mjd: 61001 }, version: m.version - 1 });
    expect(res.status).toBe(409);
    expect(res.body.error.details.current.version).toBe(m.version);
    expect((await firstMeasurement()).mjd).toBe(m.mjd);
  });

  it('an edit can be reverted, and the revert is itself audited', async () => {
    const curator = await signedIn(t.app, 'curator');
    const m = await t.db('measurements').where({ batch_id: batchId }).orderBy('id').offset(1).first();
    await curator.patch(`/api/v1/measurements/${m.id}`).send({ changes: { theta_deg: 10, p: 0.02 }, version: m.version });
    const hist = (await curator.get(`/api/v1/measurements/${m.id}/history`)).body.history;
    const edit = hist.find((h: { action: string }) => h.action === 'measurement.edit');
    const res = await curator.post(`/api/v1/audit/${edit.id}/revert`).send({});
    expect(res.status).toBe(200);
    expect(res.body.measurement.p).toBeCloseTo(m.p, 9);
    expect(res.body.measurement.theta_deg).toBeCloseTo(m.theta_deg, 6);
    expect(res.body.measurement.version).toBe(m.version + 2);
    const after = (await curator.get(`/api/v1/measurements/${m.id}/history`)).body.history.map((h: { action: string }) => h.action);
    expect(after.slice(-2)).toEqual(['measurement.edit', 'measurement.revert']);
    const audits = await t.db('audit_log').count({ n: '*' });
    expect(Number(audits[0].n)).toBeGreaterThan(0);
  });

  it('observers and modelers cannot edit', async () => {
    const m = await firstMeasurement();
    for (const role of ['observer', 'modeler'] as const) {
      const agent = await signedIn(t.app, role);
      expect((await agent.patch(`/api/v1/measurements/${m.id}`).send({ changes: { q: 0.01 }, version: m.version })).status).toBe(403);
    }
  });
});

describe('review table, conflicts and ambiguous matches', () => {
  it('pages, sorts and filters a batch on the server', async () => {
    const curator = await signedIn(t.app, 'curator');
    const page = (await curator.get(`/api/v1/batches/${batchId}/measurements?limit=100&offset=100&sort=p&order=desc`)).body;
    expect(page.total).toBe(7200);
    expect(page.rows).toHaveLength(100);
    for (let i = 1; i < page.rows.length; i++) expect(page.rows[i - 1].p).toBeGreaterThanOrEqual(page.rows[i].p);
    const filtered = (await curator.get(`/api/v1/batches/${batchId}/measurements?filter.distance_method=edsd_mode&limit=5000`)).body;
    expect(filtered.rows.every((r: { distance_method: string }) => r.distance_method === 'edsd_mode')).toBe(true);
    expect((await curator.get(`/api/v1/batches/${batchId}/measurements?sort=colour`)).status).toBe(400);
  });

  it('resolves a conflict by keeping one value, and attaches an ambiguous row', async () => {
    const curator = await signedIn(t.app, 'curator');
    const up = async (lines: string[], name: string) => (await curator.post('/api/v1/batches').attach('file', Buffer.from([HEADER, ...lines].join('\n')), name)).body;
    await up(['c1,,200.0,10.0,V,0.01,0.0,0.001,0.001,1,0.05,61000,KR-HAWK'], 'c1.csv');
    const second = await up(['c1 again,,200.0,10.0,V,0.02,0.0,0.001,0.001,1,0.05,61000,KR-HAWK'], 'c2.csv');
    expect(second.counts.conflicts).toBe(1);
    const rows = (await curator.get(`/api/v1/batches/${second.id}/measurements`)).body.rows;
    expect(rows[0].state).toBe('conflict');
    expect(rows[0].competing.q).toBeCloseTo(0.01, 12); // side by side with the earlier value
    const res = await curator.post(`/api/v1/measurements/${rows[0].id}/resolve`).send({ keep: 'this', reason: 'second night has the better calibration' });
    expect(res.status).toBe(200);
    expect((await t.db('measurements').where({ id: rows[0].id }).first()).state).toBe('pending');
    expect((await t.db('measurements').where({ id: rows[0].competing.id }).first()).state).toBe('rejected');

    // two distinct stars 0.72″ apart (distinct source_ids: rows of one batch that close without them are one star repeated)
    await up(['tw1,9000000000000000001,201.0,10.0,V,0.01,0.0,0.001,0.001,1,0.05,61000,KR-HAWK', 'tw2,9000000000000000002,201.0,10.0002,V,0.01,0.0,0.001,0.001,1,0.05,61000,KR-HAWK'], 'tw.csv');
    const amb = await up(['which,,201.0,10.0001,V,0.01,0.0,0.001,0.001,1,0.05,61002,KR-HAWK'], 'tw-which.csv');
    const arow = (await curator.get(`/api/v1/batches/${amb.id}/measurements`)).body.rows[0];
    expect(arow.state).toBe('ambiguous');
    expect(arow.candidates).toHaveLength(2);
    const attach = await curator.post(`/api/v1/measurements/${arow.id}/resolve`).send({ starId: arow.candidates[1].id });
    expect(attach.status).toBe(200);
    expect(attach.body.star_id).toBe(arow.candidates[1].id);
    expect(attach.body.state).toBe('pending');
    // approving rows that are held is refused; rejecting them is allowed
    const held = await up(['c1 third,,200.0,10.0,V,0.03,0.0,0.001,0.001,1,0.05,61000,KR-HAWK'], 'c3.csv');
    const hrow = (await curator.get(`/api/v1/batches/${held.id}/measurements`)).body.rows[0];
    expect((await curator.post('/api/v1/measurements/approve').send({ ids: [hrow.id] })).status).toBe(409);
    expect((await curator.post('/api/v1/measurements/reject').send({ ids: [hrow.id], reason: 'outlier' })).body.changed).toBe(1);
  });
});

describe('whole-batch decisions', () => {
  it('approving a batch approves every pending row; observers cannot approve', async () => {
    const observer = await signedIn(t.app, 'observer');
    const lines = [HEADER];
    for (let i = 0; i < 40; i++) lines.push(`night star ${i},,${(120 + i * 0.01).toFixed(4)},-40.0,V,0.01,0.002,0.001,0.001,1.5,0.05,61100,KR-HAWK`);
    const up = (await observer.post('/api/v1/batches').attach('file', Buffer.from(lines.join('\n')), 'night-40.csv')).body;
    expect((await observer.post(`/api/v1/batches/${up.id}/approve`).send({ note: 'mine' })).status).toBe(403);
    const curator = await signedIn(t.app, 'curator');
    const queue = (await curator.get('/api/v1/review/queue')).body.batches;
    expect(queue.map((b: { id: number }) => b.id)).toContain(up.id);
    const res = await curator.post(`/api/v1/batches/${up.id}/approve`).send({ note: 'Good night.' });
    expect(res.status).toBe(200);
    expect(res.body.counts.changed).toBe(40);
    expect(Number((await t.db('measurements').where({ batch_id: up.id, state: 'approved' }).count({ n: '*' }))[0].n)).toBe(40);
    expect((await observer.get(`/api/v1/batches/${up.id}`)).body.state).toBe('approved');
    const again = await curator.post(`/api/v1/batches/${up.id}/approve`).send({});
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('already_decided');
    const queueAfter = (await curator.get('/api/v1/review/queue')).body.batches;
    expect(queueAfter.map((x: { id: number }) => x.id)).not.toContain(up.id);
    // the seeded R night was approved by the demo curator
    expect((await observer.get(`/api/v1/batches/${batchId}`)).body.state).toBe('approved');
  });
});

describe('returning an approved batch', () => {
  it('withdraws its measurements from the approved catalog (audited) and approving again restores them', async () => {
    const observer = await signedIn(t.app, 'observer');
    const curator = await signedIn(t.app, 'curator');
    const modeler = await signedIn(t.app, 'modeler');
    const lines = [HEADER];
    for (let i = 0; i < 4; i++) lines.push(`withdraw star ${i},,${(140 + i * 0.01).toFixed(4)},-55.0,R,0.01,0.002,0.001,0.001,1.5,0.05,61200,KR-HAWK`);
    const up = (await observer.post('/api/v1/batches').attach('file', Buffer.from(lines.join('\n')), 'withdraw-4.csv')).body;
    for (let b = up; ['received', 'checking'].includes(b.state); ) b = (await observer.get(`/api/v1/batches/${up.id}`)).body;
    const ids: number[] = await t.db('measurements').where({ batch_id: up.id }).orderBy('id').pluck('id');
    expect(ids).toHaveLength(4);
    // one row is rejected on its own before the batch is approved: it must stay rejected throughout
    expect((await curator.post('/api/v1/measurements/reject').send({ ids: [ids[3]], reason: 'cosmic ray' })).status).toBe(200);
    expect((await curator.post(`/api/v1/batches/${up.id}/approve`).send({})).body.counts).toMatchObject({ changed: 3, restored: 0 });
    const region = { ra: 140.015, dec: -55, radius: 0.2 };
    const used = async () => (await gatherStars(t.db, { ...DEFAULT_RUN, minStars: 1, region })).measurementsUsed;
    expect(await used()).toBe(3);
    const starOf = async (id: number) => (await t.db('measurements').where({ id }).first()).star_id;
    expect((await modeler.get(`/api/v1/stars/${await starOf(ids[0])}`)).status).toBe(200);

    const back = await curator.post(`/api/v1/batches/${up.id}/reject`).send({ note: 'the flat field was wrong' });
    expect(back.status).toBe(200);
    expect(back.body.counts).toMatchObject({ changed: 0, withdrawn: 3 });
    const states = await t.db('measurements').whereIn('id', ids).orderBy('id').pluck('state');
    expect(states).toEqual(['withdrawn', 'withdrawn', 'withdrawn', 'rejected']);
    // modelers, new tomography runs (and so masks and releases, which read the same approved rows) no longer use them
    expect(await used()).toBe(0);
    expect((await modeler.get(`/api/v1/stars/${await starOf(ids[0])}`)).status).toBe(404);
    expect((await modeler.get('/api/v1/stars?ra=140.015&dec=-55&radius=0.2')).body.total).toBe(0);
    const hist = (await curator.get(`/api/v1/measurements/${ids[0]}/history`)).body.history;
    expect(hist.at(-1)).toMatchObject({ action: 'measurement.withdraw', before: { state: 'approved' }, after: { state: 'withdrawn' }, reason: `batch ${up.id} returned` });
    // the observer sees the state on their own rows
    const own = (await observer.get(`/api/v1/batches/${up.id}/measurements?filter.state=withdrawn`)).body;
    expect(own.total).toBe(3);
    expect((await curator.post(`/api/v1/batches/${up.id}/reject`).send({})).status).toBe(409);

    const again = await curator.post(`/api/v1/batches/${up.id}/approve`).send({ note: 'flat field redone' });
    expect(again.body.counts).toMatchObject({ changed: 0, restored: 3 });
    expect(await t.db('measurements').whereIn('id', ids).orderBy('id').pluck('state')).toEqual(['approved', 'approved', 'approved', 'rejected']);
    expect(await used()).toBe(3);
    const restored = (await curator.get(`/api/v1/measurements/${ids[0]}/history`)).body.history.at(-1);
    expect(restored).toMatchObject({ action: 'measurement.restore', before: { state: 'withdrawn' }, after: { state: 'approved' } });
    const batchAudit = await t.db('audit_log').where({ entity_type: 'batch', entity_id: String(up.id) }).orderBy('id').pluck('action');
    expect(batchAudit.slice(-3)).toEqual(['batch.approve', 'batch.return', 'batch.approve']);
  });

  it('a withdrawn measurement can be approved or rejected on its own', async () => {
    const curator = await signedIn(t.app, 'curator');
    const m = await t.db('measurements').where({ state: 'approved' }).orderBy('id', 'desc').first();
    await t.db('measurements').where({ id: m.id }).update({ state: 'withdrawn' });
    expect((await curator.post('/api/v1/measurements/approve').send({ ids: [m.id] })).body.changed).toBe(1);
    await t.db('measurements').where({ id: m.id }).update({ state: 'withdrawn' });
    expect((await curator.post('/api/v1/measurements/reject').send({ ids: [m.id] })).body.changed).toBe(1);
  });
});

describe('catalog', () => {
  it('cone search returns exactly the stars within the radius, nearest first', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const any = await t.db('stars').orderBy('id').first();
    const radius = 0.5;
    const res = (await modeler.get(`/api/v1/stars?ra=${any.ra_deg}&dec=${any.dec_deg}&radius=${radius}&limit=1000`)).body;
    const all = await t.db('stars').select('id', 'ra_deg', 'dec_deg');
    const approvedStars = new Set((await t.db('measurements').where({ state: 'approved' }).pluck('star_id')));
    const expected = all.filter((s) => approvedStars.has(s.id) && angularSeparationDeg(any.ra_deg, any.dec_deg, s.ra_deg, s.dec_deg) <= radius).map((s) => s.id).sort();
    expect(res.stars.map((s: { id: number }) => s.id).sort()).toEqual(expected);
    expect(expected.length).toBeGreaterThan(3);
    for (let i = 1; i < res.stars.length; i++) expect(res.stars[i].separation_deg).toBeGreaterThanOrEqual(res.stars[i - 1].separation_deg);
    expect((await modeler.get('/api/v1/stars?ra=10&dec=10')).status).toBe(400);
    expect((await modeler.get('/api/v1/stars?ra=10&dec=100&radius=1')).status).toBe(400);
  });

  it('a star page has every measurement and the combined value with its χ² flag', async () => {
    const curator = await signedIn(t.app, 'curator');
    const star = await t.db('stars').orderBy('id').offset(10).first();
    const res = (await curator.get(`/api/v1/stars/${star.id}`)).body;
    expect(res.star.sourceId).toBe(star.source_id);
    expect(res.measurements.length).toBeGreaterThanOrEqual(1);
    const c = res.combined.find((x: { band: string }) => x.band === 'R');
    expect(c.n).toBe(1);
    expect(c.q).toBeCloseTo(res.measurements.find((m: { band: string }) => m.band === 'R').q, 12);
    expect(res.units.theta_deg).toMatch(/east of north/);
    const search = (await curator.get(`/api/v1/stars?q=${encodeURIComponent(star.source_id)}`)).body;
    expect(search.stars[0].id).toBe(star.id);
  });
});
