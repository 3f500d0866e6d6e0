import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { buildDemoSky } from '../../seeds/demo-sky.js';
import { DEMO_TOMOGRAPHY } from '../../seeds/demo.js';
import { icrsToGalactic } from '../../server/science/frames.js';
import { ang2pixNest, maxPixelRadiusDeg, pix2angNest, pixelCornersNest } from '../../server/science/healpix.js';
import { galacticToIcrs } from '../../server/science/frames.js';
import { angularSeparationDeg } from '../../server/science/separation.js';
import { createApp } from '../../server/app.js';
import { tomographyService } from '../../server/tomography/service.js';

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

/** A run row as a stopped server leaves it (no live fit behind it). */
async function orphanRun(state: 'queued' | 'running', params: object = { ...DEMO_TOMOGRAPHY, draws: 2, region: { ra: 10, dec: 10, radius: 1 } }) {
  const curator = await t.db('users').where({ email: 'curator@kestrel.example' }).first('id');
  const [id] = await t.db('tomography_runs').insert({ state, params_json: JSON.stringify({ minStars: 10, jumpThresholdDeg: 30, minSegmentLength: 3, ...params }), started_by: curator.id, created_at: new Date().toISOString(), started_at: state === 'running' ? new Date().toISOString() : null, cells_total: 12 });
  return id as number;
}

describe('runs a restart left open, and cancel', () => {
  it('on start, a run left running is marked interrupted with the reason; a queued one runs again', async () => {
    const stuck = await orphanRun('running');
    const waiting = await orphanRun('queued');
    // a second app on the same database = the server starting again
    const again = createApp({ db: t.db, readDb: t.db, config: t.config });
    await again.services.tomography.ready();
    const curator = await signedIn(again, 'curator');
    const s = (await curator.get(`/api/v1/tomography/runs/${stuck}`)).body;
    expect(s.state).toBe('interrupted');
    expect(s.error).toMatch(/server stopped while this run was fitting; no result of it was kept/);
    expect(s.progress.cellsDone).toBe(0);
    expect(Number((await t.db('tomography_cells').where({ run_id: stuck }).count({ n: '*' }))[0].n)).toBe(0);
    // nothing partial is served: the interrupted run answers 409
    const sl = await curator.get(`/api/v1/sightlines?run=${stuck}&ra=10&dec=10&radius=1`);
    expect(sl.status).toBe(409);
    expect(await t.db('audit_log').where({ entity_type: 'tomography_run', entity_id: String(stuck), action: 'tomography.interrupted' }).first()).toBeTruthy();
    const w = await waitForRun(curator, waiting);
    expect(w.state).toBe('done');
    // an interrupted run is finished: cancel refuses it
    expect((await curator.post(`/api/v1/tomography/runs/${stuck}/cancel`)).status).toBe(409);
    await again.services.close();
  }, 120_000);

  it('cancel ends a run with no live fit behind it (orphaned running, or queued)', async () => {
    const curator = await signedIn(t.app, 'curator');
    for (const state of ['running', 'queued'] as const) {
      const id = await orphanRun(state);
      const res = await curator.post(`/api/v1/tomography/runs/${id}/cancel`);
      expect(res.status).toBe(200);
      expect(res.body.state).toBe('cancelled');
      expect((await curator.get(`/api/v1/tomography/runs/${id}`)).body.state).toBe('cancelled');
    }
  });

  it('cancel of a run waiting in the queue behind another ends it before it starts', async () => {
    const curator = await signedIn(t.app, 'curator');
    const first = await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, draws: 50 });
    const second = await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, draws: 3 });
    expect(second.status).toBe(202);
    const c = await curator.post(`/api/v1/tomography/runs/${second.body.id}/cancel`);
    expect(c.body.state).toBe('cancelled');
    await curator.post(`/api/v1/tomography/runs/${first.body.id}/cancel`);
    expect((await waitForRun(curator, first.body.id)).state).toBe('cancelled');
    expect((await waitForRun(curator, second.body.id)).state).toBe('cancelled');
    expect(Number((await t.db('tomography_cells').whereIn('run_id', [first.body.id, second.body.id]).count({ n: '*' }))[0].n)).toBe(0);
  }, 120_000);
});

describe('limits on runs', () => {
  it('no body is a 400 naming it; {} would start with the defaults', async () => {
    const curator = await signedIn(t.app, 'curator');
    const res = await curator.post('/api/v1/tomography/runs');
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields[0].field).toBe('body');
  });

  it('at most 2 runs queued or running per person (429 naming the limit)', async () => {
    const curator = await signedIn(t.app, 'curator');
    const a = await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, draws: 50 });
    const b = await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, draws: 50 });
    const c = await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, draws: 50 });
    expect([a.status, b.status]).toEqual([202, 202]);
    expect(c.status).toBe(429);
    expect(c.body.error.message).toMatch(/limit is 2 per person/);
    for (const r of [a, b]) await curator.post(`/api/v1/tomography/runs/${r.body.id}/cancel`);
    for (const r of [a, b]) await waitForRun(curator, r.body.id);
  }, 120_000);

  it('draws × cells above the limit is a 400 naming draws and the limit', async () => {
    const curator = await t.db('users').where({ email: 'curator@kestrel.example' }).first('id');
    const small = tomographyService(t.db, t.db, { maxDrawCells: 10_000 });
    // 7,200 R-band stars ÷ minStars 10 = at most 720 cells; × 100 draws = 72,000 > 10,000
    await expect(small.start(curator.id, { ...DEMO_TOMOGRAPHY, draws: 100 })).rejects.toMatchObject({ status: 400, details: { fields: [{ field: 'draws' }] } });
    await expect(small.start(curator.id, { ...DEMO_TOMOGRAPHY, draws: 100 })).rejects.toThrow(/720 cells .* × 100 draws = 72,000; the limit is 10,000/);
  });
});

describe('sightlines in a cone: every overlapping cell, through the index', () => {
  it('a 0.02° cone around a point inside a cell, 0.9° from its centre, returns that cell', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const run = (await modeler.get('/api/v1/tomography/runs')).body.runs.find((r: { state: string; params: { region: unknown; draws: number } }) => r.state === 'done' && r.params.region === null);
    const cells = (await modeler.get(`/api/v1/tomography/runs/${run.id}/cells`)).body.cells as { ipix: number; lon_deg: number; lat_deg: number }[];
    let found = 0;
    for (const cell of cells.slice(0, 40)) {
      // walk from the centre toward each corner; keep a point 0.9° out that is still inside the cell
      const centre = pix2angNest(32, cell.ipix);
      for (const corner of pixelCornersNest(32, cell.ipix)) {
        const d = angularSeparationDeg(centre.lonDeg, centre.latDeg, corner.lonDeg, corner.latDeg);
        if (d < 1) continue;
        const f = 0.9 / d; // small-angle interpolation, then the exact separation is measured
        const lon = centre.lonDeg + f * (((corner.lonDeg - centre.lonDeg + 540) % 360) - 180);
        const lat = centre.latDeg + f * (corner.latDeg - centre.latDeg);
        const sep = angularSeparationDeg(centre.lonDeg, centre.latDeg, lon, lat);
        if (Math.abs(sep - 0.9) > 0.05 || ang2pixNest(32, (lon + 360) % 360, lat) !== cell.ipix) continue;
        const { raDeg, decDeg } = galacticToIcrs((lon + 360) % 360, lat);
        const res = await modeler.get(`/api/v1/sightlines?run=${run.id}&ra=${raDeg}&dec=${decDeg}&radius=0.02`);
        expect(res.status).toBe(200);
        const hit = res.body.cells.find((c: { ipix: number }) => c.ipix === cell.ipix);
        expect(hit, `cell ${cell.ipix}`).toBeTruthy();
        expect(hit.separationDeg).toBeCloseTo(sep, 6);
        found++;
        break;
      }
      if (found >= 5) break;
    }
    expect(found).toBeGreaterThanOrEqual(5);
  }, 60_000);

  it('a 3° cone returns every cell that sampled points of the cone fall in, and none out of reach', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const run = (await modeler.get('/api/v1/tomography/runs')).body.runs.find((r: { state: string; params: { region: unknown } }) => r.state === 'done' && r.params.region === null);
    const cells = (await modeler.get(`/api/v1/tomography/runs/${run.id}/cells`)).body.cells as { ipix: number; lon_deg: number; lat_deg: number; ra_deg: number; dec_deg: number }[];
    const have = new Set(cells.map((c) => c.ipix));
    const c0 = cells[Math.floor(cells.length / 2)];
    const g0 = { l: c0.lon_deg + 0.7, b: c0.lat_deg - 0.4 };
    const radius = 3;
    const { raDeg, decDeg } = galacticToIcrs(g0.l, g0.b);
    const res = await modeler.get(`/api/v1/sightlines?run=${run.id}&ra=${raDeg}&dec=${decDeg}&radius=${radius}`);
    const got = new Set<number>(res.body.cells.map((c: { ipix: number }) => c.ipix));
    // reference: a dense polar grid of points inside the cone (brute force, independent of the index)
    const expected = new Set<number>();
    for (let r = 0; r <= radius; r += 0.05) {
      for (let a = 0; a < 360; a += r === 0 ? 360 : Math.max(0.5, (0.05 / Math.max(r, 0.05)) * 57.3)) {
        const lat = g0.b + r * Math.cos((a * Math.PI) / 180);
        const lon = g0.l + (r * Math.sin((a * Math.PI) / 180)) / Math.cos((lat * Math.PI) / 180);
        if (angularSeparationDeg(g0.l, g0.b, lon, lat) > radius) continue;
        const p = ang2pixNest(32, (lon + 360) % 360, lat);
        if (have.has(p)) expected.add(p);
      }
    }
    for (const p of expected) expect(got.has(p), `cell ${p}`).toBe(true);
    for (const c of res.body.cells) expect(c.separationDeg).toBeLessThanOrEqual(radius + maxPixelRadiusDeg(32));
    const seps = res.body.cells.map((c: { separationDeg: number }) => c.separationDeg);
    expect(seps).toEqual([...seps].sort((a: number, b: number) => a - b));
  });

  it('include=stars over a wide cone is a 400 naming include and the limit', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const res = await modeler.get('/api/v1/sightlines?ra=10&dec=10&radius=30&include=stars');
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields[0].field).toBe('include');
    expect(res.body.error.message).toMatch(/radius ≤ 5°/);
  });
});
