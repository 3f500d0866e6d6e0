import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';

const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';
let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({}, { tomography: true });
}, 120_000);
afterAll(async () => t.close());

describe('frozen releases', () => {
  it('freezes the latest run with copies of the approved catalog; tags never repeat', async () => {
    const curator = await signedIn(t.app, 'curator');
    const res = await curator.post('/api/v1/releases').send({ tag: 'KRPS-DR1', notes: 'first demo release' });
    expect(res.status).toBe(201);
    expect(res.body.counts).toMatchObject({ measurements: 7200, stars: 7200 });
    expect(res.body.counts.cells).toBeGreaterThan(200);
    expect((await curator.post('/api/v1/releases').send({ tag: 'KRPS-DR1' })).status).toBe(409);
    expect((await curator.post('/api/v1/releases').send({ tag: 'bad tag!' })).status).toBe(400);
    const modeler = await signedIn(t.app, 'modeler');
    expect((await modeler.post('/api/v1/releases').send({ tag: 'MINE' })).status).toBe(403);
    expect((await modeler.get('/api/v1/releases/KRPS-DR1')).body.runId).toBe(res.body.runId);
  });

  it('released answers stay byte-for-byte the same after new data and a new run', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const cells = (await modeler.get('/api/v1/tomography/runs/1/cells')).body.cells;
    const cell = cells.find((c: { n_layers: number }) => c.n_layers >= 2);
    const ask = () => modeler.get(`/api/v1/sightlines?nside=32&ipix=${cell.ipix}&release=KRPS-DR1&include=stars`);
    const before = (await ask()).text;
    expect(JSON.parse(before).release).toBe('KRPS-DR1');

    // new data lands in the same cell, is approved, and a new run finishes
    const curator = await signedIn(t.app, 'curator');
    const lines = [HEADER];
    for (let i = 0; i < 20; i++) lines.push(`late star ${i},,${(cell.ra_deg + i * 0.001).toFixed(5)},${cell.dec_deg.toFixed(5)},R,0.03,-0.02,0.001,0.001,${(0.3 + i * 0.1).toFixed(2)},0.01,61200,KR-HAWK`);
    const up = (await curator.post('/api/v1/batches').attach('file', Buffer.from(lines.join('\n')), 'late.csv')).body;
    expect((await curator.post(`/api/v1/batches/${up.id}/approve`).send({})).status).toBe(200);
    const run = (await curator.post('/api/v1/tomography/runs').send({ nside: 32, band: 'R', draws: 50, minStars: 10 })).body;
    for (let i = 0; i < 600; i++) {
      const r = (await curator.get(`/api/v1/tomography/runs/${run.id}`)).body;
      if (r.state === 'done') break;
      await new Promise((res) => setTimeout(res, 100));
    }
    const latest = (await modeler.get(`/api/v1/sightlines?nside=32&ipix=${cell.ipix}`)).body;
    expect(latest.run.id).toBe(run.id);
    expect(latest.cells[0].nStars).toBe(cell.n_stars + 20); // the live answer did change
    expect((await ask()).text).toBe(before); // the released one did not
  }, 120_000);
});
