import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { buildDemoSky } from '../../seeds/demo-sky.js';
import { DEMO_TOMOGRAPHY } from '../../seeds/demo.js';
import { icrsToGalactic } from '../../server/science/frames.js';
import { ang2pixNest } from '../../server/science/healpix.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({}, { tomography: true });
}, 120_000);
afterAll(async () => t.close());

async function waitForRun(agent: Awaited<ReturnType<typeof signedIn>>, id: number) {
  for (let i = 0; i < 600; i++) {
    const r = (await agent.get(`/api/v1/tomography/runs/${id}`)).body;
    if (!['queued', 'running'].includes(r.state)) return r;
    await new Promise((res) => setTimeout(res, 100));
  }
  throw new Error('run did not finish');
}

describe('the demo run', () => {
  it('finished on the seeded, approved sky with a fingerprint of its data', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const runs = (await modeler.get('/api/v1/tomography/runs')).body.runs;
    expect(runs).toHaveLength(1);
    expect(runs[0]).toMatchObject({ state: 'done', params: { nside: 32, coordsys: 'G', band: 'R' }, starsUsed: 7200 });
    expect(runs[0].fingerprint).toMatch(/^[0-9a-f]{64}$/);
  });

  it('recovers the number of clouds of the synthetic demo fields (rate reported)', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const run = (await modeler.get('/api/v1/tomography/runs')).body.runs[0];
    const cells = (await modeler.get(`/api/v1/tomography/runs/${run.id}/cells`)).body.cells as { ipix: number; n_layers: number; n_stars: number }[];
    const byIpix = new Map(cells.map((c) => [c.ipix, c]));
    const { fields } = buildDemoSky();
    let compared = 0;
    let right = 0;
    for (const f of fields) {
      const g = icrsToGalactic(f.raDeg, f.decDeg);
      const cell = byIpix.get(ang2pixNest(DEMO_TOMOGRAPHY.nside, g.lDeg, g.bDeg));
      // each demo field fills one cell (seeds/demo-sky.ts)
      if (!cell || cell.n_stars !== 30) continue;
      compared++;
      if (cell.n_layers === f.clouds.length) right++;
    }
    console.log(`demo sky: number of layers equals the number of synthetic clouds in ${right}/${compared} single-field cells`);
    expect(compared).toBeGreaterThan(200);
    expect(right / compared).toBeGreaterThan(0.6);
  });

  it('answers sightlines by pixel and by cone, with conventions and the run', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const run = (await modeler.get('/api/v1/tomography/runs')).body.runs[0];
    const cells = (await modeler.get(`/api/v1/tomography/runs/${run.id}/cells`)).body.cells;
    const two = cells.find((c: { n_layers: number }) => c.n_layers === 2);
    const byPix = (await modeler.get(`/api/v1/sightlines?nside=32&ipix=${two.ipix}&include=stars`)).body;
    expect(byPix.run.id).toBe(run.id);
    expect(byPix.conventions.angles).toMatch(/IAU/);
    const cell = byPix.cells[0];
    expect(cell.layers).toHaveLength(2);
    expect(cell.jumps).toHaveLength(1);
    expect(cell.jumps[0].deltaThetaDeg).toBeGreaterThan(-90);
    expect(cell.jumps[0].deltaThetaDeg).toBeLessThanOrEqual(90);
    expect(cell.stars.length).toBe(cell.nStars);
    for (let i = 1; i < cell.stars.length; i++) expect(cell.stars[i].distancePc).toBeGreaterThanOrEqual(cell.stars[i - 1].distancePc);
    const cone = (await modeler.get(`/api/v1/sightlines?ra=${two.ra_deg}&dec=${two.dec_deg}&radius=0.5`)).body;
    expect(cone.cells.map((c: { ipix: number }) => c.ipix)).toContain(two.ipix);
    expect((await modeler.get('/api/v1/sightlines?nside=64&ipix=1')).status).toBe(400);
    expect((await modeler.get('/api/v1/sightlines?ra=10')).status).toBe(400);
  });
});

describe('runs', () => {
  it('the same data and parameters give the same numbers', async () => {
    const curator = await signedIn(t.app, 'curator');
    const first = (await curator.get('/api/v1/tomography/runs')).body.runs[0];
    const res = await curator.post('/api/v1/tomography/runs').send(DEMO_TOMOGRAPHY);
    expect(res.status).toBe(202);
    const again = await waitForRun(curator, res.body.id);
    expect(again.state).toBe('done');
    expect(again.fingerprint).toBe(first.fingerprint);
    const a = await t.db('tomography_cells').where({ run_id: first.id }).orderBy('ipix').select('ipix', 'result_json');
    const b = await t.db('tomography_cells').where({ run_id: again.id }).orderBy('ipix').select('ipix', 'result_json');
    expect(b).toEqual(a);
  }, 120_000);

  it('a region run covers only its cone, and a run can be cancelled', async () => {
    const curator = await signedIn(t.app, 'curator');
    const star = await t.db('stars').first();
    const region = await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, draws: 5, region: { ra: star.ra_deg, dec: star.dec_deg, radius: 5 } });
    const done = await waitForRun(curator, region.body.id);
    expect(done.starsUsed).toBeGreaterThan(0);
    expect(done.starsUsed).toBeLessThan(7200);
    const big = await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, nside: 16, draws: 500, minStars: 4 });
    const cancelled = await curator.post(`/api/v1/tomography/runs/${big.body.id}/cancel`);
    expect(cancelled.status).toBe(200);
    const end = await waitForRun(curator, big.body.id);
    expect(end.state).toBe('cancelled');
    expect(Number((await t.db('tomography_cells').where({ run_id: big.body.id }).count({ n: '*' }))[0].n)).toBe(0);
  }, 120_000);

  it('refuses bad parameters naming the field, and non-curators', async () => {
    const curator = await signedIn(t.app, 'curator');
    const bad = await curator.post('/api/v1/tomography/runs').send({ nside: 100 });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.fields[0].field).toBe('nside');
    const modeler = await signedIn(t.app, 'modeler');
    expect((await modeler.post('/api/v1/tomography/runs').send({})).status).toBe(403);
  });
});
