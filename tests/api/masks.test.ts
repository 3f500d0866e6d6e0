import { execFileSync, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { DEMO_TOMOGRAPHY } from '../../seeds/demo.js';
import { icrsToGalactic, galacticToIcrs } from '../../server/science/frames.js';
import { ang2pixNest, npixForNside, pix2angNest } from '../../server/science/healpix.js';
import { mocFromPixels, mocPixelsAt, mocToAscii, mocToJson, parseMocAscii, parseMocJson } from '../../server/science/moc.js';
import { polarizationAngleDeg } from '../../server/science/polarization.js';

const PYTHON = '/usr/bin/python3';
const READER = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../reference/read_mask.py');
const HAVE_HEALPY = spawnSync(PYTHON, ['-c', 'import healpy, astropy, numpy'], { stdio: 'ignore' }).status === 0;
// Under CI a missing healpy fails these tests (they run and the reader fails); elsewhere they are skipped.
const withHealpy = HAVE_HEALPY || process.env.CI === 'true' ? it : it.skip;
if (!HAVE_HEALPY) console.warn(`masks.test.ts: ${PYTHON} cannot import healpy/astropy; the healpy read-back checks are ${process.env.CI === 'true' ? 'FAILING (CI=true)' : 'skipped'}`);

type Agent = Awaited<ReturnType<typeof signedIn>>;
interface Layer { index: number; meanQ: number; meanU: number; deltaQ: number; deltaU: number; thetaDeg: number; distancePc: number }
interface Jump { fromLayer: number; toLayer: number; deltaThetaDeg: number; significance: number }
interface Cell { ipix: number; nStars: number; nLayers: number; layers: Layer[]; jumps: Jump[]; centre: { lonDeg: number; latDeg: number; raDeg: number; decDeg: number } }
interface HealpyMap { healpy: string; unseen: number; nside: number; npix: number; ordering: string; coordsys: string; header: Record<string, string | number | boolean>; columns: string[]; values: Record<string, number[]> }

let t: TestApp;
let modeler: Agent;
let runId: number;
let tmp: string;
beforeAll(async () => {
  t = await makeTestApp({}, { tomography: true });
  modeler = await signedIn(t.app, 'modeler');
  runId = (await modeler.get('/api/v1/tomography/runs')).body.runs[0].id;
  tmp = fs.mkdtempSync(path.join(t.dir, 'masks-'));
}, 120_000);
afterAll(async () => t.close());

const binary = (res: NodeJS.ReadableStream & { setEncoding: (e: string) => void }, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};
async function getBytes(agent: Agent, url: string): Promise<Buffer> {
  const res = await agent.get(url).buffer(true).parse(binary as never);
  expect(res.status, `${url}: ${res.status}`).toBe(200);
  return res.body as Buffer;
}

let fileNo = 0;
function healpyRead(bytes: Buffer): HealpyMap {
  const file = path.join(tmp, `mask-${fileNo++}.fits`);
  fs.writeFileSync(file, bytes);
  return JSON.parse(execFileSync(PYTHON, [READER, 'map', file], { maxBuffer: 256 * 1024 * 1024 }).toString());
}

/** Every cell of a run by walking GET /sky to the end. */
async function allCells(query = ''): Promise<Cell[]> {
  const out: Cell[] = [];
  let cursor: string | null = null;
  do {
    const res = await modeler.get(`/api/v1/sky?run=${runId}&limit=5000${query}${cursor ? `&cursor=${cursor}` : ''}`);
    expect(res.status).toBe(200);
    out.push(...res.body.cells);
    cursor = res.body.next;
  } while (cursor);
  return out;
}

const relClose = (a: number, b: number, rel: number) => Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b));

describe('FITS masks read back with healpy', () => {
  withHealpy('healpy 1.16 reads NSIDE, ORDERING, COORDSYS and every pixel as the API reports the cells', async () => {
    const cells = await allCells();
    // the flag, computed here from the layers and jumps themselves
    const flagged = new Set(cells.filter((c) => c.nLayers >= 2 && c.jumps.some((j) => Math.abs(j.deltaThetaDeg) >= 30 && j.significance >= 3)).map((c) => c.ipix));
    expect(flagged.size).toBeGreaterThan(10);
    expect(flagged.size).toBeLessThan(cells.length);
    const bytes = await getBytes(modeler, `/api/v1/masks?run=${runId}&format=fits&minLayers=2&minJumpDeg=30&minSignificance=3`);
    expect(bytes.length % 2880).toBe(0);
    const m = healpyRead(bytes);
    expect(m.healpy).toMatch(/^1\./);
    expect(m).toMatchObject({ nside: 32, npix: 12288, ordering: 'NESTED', coordsys: 'G', columns: ['MASK', 'MAX_JUMP', 'N_LAYERS'] });
    expect(m.header).toMatchObject({ PIXTYPE: 'HEALPIX', INDXSCHM: 'IMPLICIT', OBJECT: 'FULLSKY', FIRSTPIX: 0, LASTPIX: 12287, RUN_ID: runId, RELEASE: 'none', POLCCONV: 'IAU', MINLAYER: 2, MINJUMP: 30, MINSIGNF: 3, MINSTARS: 0, TUNIT2: 'deg' });
    // HEALPix UNSEEN = −1.6375e30 (healpy 1.16: healpy.UNSEEN); stored as float32, so compared to 1e-7
    expect(relClose(m.unseen, -1.6375e30, 1e-12)).toBe(true);
    const byIpix = new Map(cells.map((c) => [c.ipix, c]));
    const wrong: string[] = [];
    for (let p = 0; p < m.npix; p++) {
      const c = byIpix.get(p);
      const mask = m.values.MASK[p];
      const jump = m.values.MAX_JUMP[p];
      const layers = m.values.N_LAYERS[p];
      const maxJump = c && c.jumps.length ? Math.max(...c.jumps.map((j) => Math.abs(j.deltaThetaDeg))) : null;
      const expMask = flagged.has(p) ? 1 : 0;
      const expLayers = c ? c.nLayers : -1;
      // float32 keeps 24 bits: 1e-7 relative (IEEE 754)
      const jumpOk = maxJump === null ? relClose(jump, m.unseen, 1e-7) : relClose(jump, maxJump, 1e-7);
      if (mask !== expMask || layers !== expLayers || !jumpOk) wrong.push(`${p}: ${mask}/${jump}/${layers}`);
    }
    expect(wrong).toEqual([]);
  }, 60_000);

  withHealpy('a finer NSIDE holds each run cell in its 4^k NESTED children; a coarser one is refused', async () => {
    const base = healpyRead(await getBytes(modeler, `/api/v1/masks?run=${runId}&format=fits`));
    const fine = healpyRead(await getBytes(modeler, `/api/v1/masks?run=${runId}&format=fits&nside=128`));
    expect(fine).toMatchObject({ nside: 128, npix: 196608, ordering: 'NESTED' });
    expect(fine.header.RUNNSIDE).toBe(32);
    let differ = 0;
    for (let p = 0; p < fine.npix; p++) {
      const parent = Math.floor(p / 16); // NESTED: the parent two orders up is p div 4²
      for (const col of ['MASK', 'MAX_JUMP', 'N_LAYERS']) if (fine.values[col][p] !== base.values[col][parent]) differ++;
    }
    expect(differ).toBe(0);
    expect(base.values.MASK.reduce((a, b) => a + b, 0) * 16).toBe(fine.values.MASK.reduce((a, b) => a + b, 0));
    for (const [nside, msg] of [['16', /coarser/], ['48', /power of two/], ['1024', /at most 512/], ['abc', /integer/]] as const) {
      const res = await modeler.get(`/api/v1/masks?run=${runId}&format=fits&nside=${nside}`);
      expect(res.status).toBe(400);
      expect(res.body.error.message).toMatch(msg);
      expect(res.body.error.details.fields[0].field).toBe('nside');
    }
  }, 60_000);

  withHealpy('convention=cosmo is stated in POLCCONV; mask values do not depend on it', async () => {
    const iau = healpyRead(await getBytes(modeler, `/api/v1/masks?run=${runId}&format=fits`));
    const cosmo = healpyRead(await getBytes(modeler, `/api/v1/masks?run=${runId}&format=fits&convention=cosmo`));
    expect(iau.header.POLCCONV).toBe('IAU');
    expect(cosmo.header.POLCCONV).toBe('COSMO');
    expect(cosmo.values).toEqual(iau.values);
  }, 60_000);
});

describe('MOC masks (IVOA MOC 2.0, ICRS)', () => {
  it('JSON and ASCII carry the same normalised MOC at the stated order', async () => {
    const json = await modeler.get(`/api/v1/masks?run=${runId}&format=moc-json`);
    const ascii = await modeler.get(`/api/v1/masks?run=${runId}&format=moc-ascii`);
    expect(json.headers['content-type']).toMatch(/application\/json/);
    expect(ascii.headers['content-type']).toMatch(/text\/plain/);
    const order = Number(json.headers['starveil-moc-order']);
    expect(order).toBe(8); // Galactic run at NSIDE 32 (order 5) + 3
    expect(json.headers['starveil-run']).toBe(String(runId));
    const fromJson = parseMocJson(JSON.parse(json.text));
    const fromAscii = parseMocAscii(ascii.text);
    expect(fromJson).toEqual(fromAscii);
    expect(fromJson.maxOrder).toBe(order);
    expect(Object.keys(JSON.parse(json.text))).toContain(String(order));
    // already normalised: reading and writing again changes nothing
    expect(json.text).toBe(JSON.stringify(mocToJson(fromJson)));
    expect(ascii.text.trim()).toBe(mocToAscii(fromAscii));
  });

  it('a Galactic run: exactly the equatorial cells whose centres fall in flagged Galactic cells', async () => {
    const summary = (await modeler.get(`/api/v1/masks?run=${runId}&format=json`)).body;
    const flagged = new Set<number>(summary.cells.filter((c: { flagged: boolean }) => c.flagged).map((c: { ipix: number }) => c.ipix));
    expect(flagged.size).toBe(summary.counts.flagged);
    const moc = parseMocJson(JSON.parse((await modeler.get(`/api/v1/masks?run=${runId}&format=moc-json`)).text));
    const covered = mocPixelsAt(moc, 8);
    // brute force over the whole sky at order 8 (786 432 cells), independent of the server's disc search
    const expected: number[] = [];
    for (let p = 0; p < npixForNside(256); p++) {
      const eq = pix2angNest(256, p);
      const g = icrsToGalactic(eq.lonDeg, eq.latDeg);
      if (flagged.has(ang2pixNest(32, g.lDeg, g.bDeg))) expected.push(p);
    }
    expect(covered.length).toBe(expected.length);
    expect(covered).toEqual(expected);
    expect(summary.moc.cells).toBe(expected.length);
  }, 60_000);

  withHealpy('agrees with healpy + astropy (ICRS → Galactic) on the same mask, up to cells on a Galactic cell edge', async () => {
    const bytes = await getBytes(modeler, `/api/v1/masks?run=${runId}&format=fits`);
    const file = path.join(tmp, 'galactic-mask.fits');
    fs.writeFileSync(file, bytes);
    const ref = JSON.parse(execFileSync(PYTHON, [READER, 'moc', file, '8'], { maxBuffer: 64 * 1024 * 1024 }).toString()) as { inside: number[]; ambiguous: number[] };
    const moc = parseMocJson(JSON.parse((await modeler.get(`/api/v1/masks?run=${runId}&format=moc-json`)).text));
    const ours = new Set(mocPixelsAt(moc, 8));
    const theirs = new Set(ref.inside);
    const ambiguous = new Set(ref.ambiguous);
    const disagree = [...ours].filter((p) => !theirs.has(p)).concat(ref.inside.filter((p) => !ours.has(p)));
    // a disagreement is allowed only for a cell centre within 2e-5° of a Galactic cell edge, where the
    // ~7e-6° between astropy's Galactic frame (via FK5) and the Hipparcos rotation can move it across
    expect(disagree.filter((p) => !ambiguous.has(p))).toEqual([]);
    expect(theirs.size).toBeGreaterThan(1000);
    expect(disagree.length).toBeLessThan(theirs.size / 1000);
  }, 60_000);

  it('an equatorial run: the flagged cells themselves, exactly', async () => {
    const curator = await signedIn(t.app, 'curator');
    const started = (await curator.post('/api/v1/tomography/runs').send({ ...DEMO_TOMOGRAPHY, coordsys: 'C', draws: 5 })).body;
    let run = started;
    for (let i = 0; i < 600 && ['queued', 'running'].includes(run.state); i++) {
      await new Promise((r) => setTimeout(r, 100));
      run = (await curator.get(`/api/v1/tomography/runs/${started.id}`)).body;
    }
    expect(run.state).toBe('done');
    const summary = (await modeler.get(`/api/v1/masks?run=${run.id}&format=json&minLayers=1`)).body;
    expect(summary.frame).toBe('C');
    const flagged = summary.cells.filter((c: { flagged: boolean }) => c.flagged).map((c: { ipix: number }) => c.ipix);
    expect(flagged.length).toBeGreaterThan(10);
    const res = await modeler.get(`/api/v1/masks?run=${run.id}&format=moc-ascii&minLayers=1`);
    expect(res.headers['starveil-moc-order']).toBe('5');
    expect(parseMocAscii(res.text)).toEqual(mocFromPixels(5, flagged));
    const finer = await modeler.get(`/api/v1/masks?run=${run.id}&format=moc-json&minLayers=1&nside=64`);
    const fm = parseMocJson(JSON.parse(finer.text));
    expect(fm.maxOrder).toBe(6);
    // a deeper MOC of the same cells: the same coverage, children merged back into the cells
    expect(fm.cells).toEqual(mocFromPixels(5, flagged).cells);
    expect(mocPixelsAt(fm, 6)).toEqual(mocPixelsAt(mocFromPixels(5, flagged), 6));
  }, 120_000);
});

describe('conventions', () => {
  it('convention=cosmo flips every U-like value and reflects the angles (sightlines, sky, CSV)', async () => {
    const cells = await allCells();
    const two = cells.find((c) => c.nLayers >= 2)!;
    const url = `/api/v1/sightlines?run=${runId}&nside=32&ipix=${two.ipix}&include=stars`;
    const iau = (await modeler.get(url)).body;
    const cosmo = (await modeler.get(`${url}&convention=cosmo`)).body;
    expect(iau.convention).toBe('iau');
    expect(cosmo.convention).toBe('cosmo');
    expect(cosmo.conventions.angles).toMatch(/COSMO/);
    const [a, b] = [iau.cells[0], cosmo.cells[0]];
    expect(b.layers).toHaveLength(a.layers.length);
    a.layers.forEach((l: Layer, i: number) => {
      const c = b.layers[i] as Layer;
      expect(c.meanQ).toBe(l.meanQ);
      expect(c.deltaQ).toBe(l.deltaQ);
      expect(c.meanU).toBe(-l.meanU);
      expect(c.deltaU).toBe(-l.deltaU);
      expect(c.thetaDeg).toBeCloseTo((180 - l.thetaDeg) % 180, 10);
      // and it is the angle of the layer's COSMO Stokes contribution: ½·atan2(ΔU_COSMO, ΔQ)
      expect(c.thetaDeg).toBeCloseTo(polarizationAngleDeg(c.deltaQ, c.deltaU), 9);
    });
    a.jumps.forEach((j: Jump, i: number) => {
      expect(b.jumps[i].deltaThetaDeg).toBeCloseTo(j.deltaThetaDeg === 90 ? 90 : -j.deltaThetaDeg, 12);
      expect(b.jumps[i].significance).toBe(j.significance);
    });
    expect(a.segments.length).toBeGreaterThan(1);
    a.segments.forEach((seg: { meanQ: number; meanU: number }, i: number) => {
      expect(b.segments[i].meanU).toBe(-seg.meanU);
      expect(b.segments[i].meanQ).toBe(seg.meanQ);
    });
    a.stars.forEach((s: { u: number; q: number }, i: number) => {
      expect(b.stars[i].u).toBe(-s.u);
      expect(b.stars[i].q).toBe(s.q);
    });
    // the sky listing and its CSV the same way
    const skyCosmo = (await modeler.get(`/api/v1/sky?run=${runId}&convention=cosmo&limit=5000`)).body.cells.find((c: Cell) => c.ipix === two.ipix);
    expect(skyCosmo.layers.map((l: Layer) => l.deltaU)).toEqual(a.layers.map((l: Layer) => -l.deltaU));
    const csv = (fmt: string) => modeler.get(`/api/v1/sightlines?run=${runId}&nside=32&ipix=${two.ipix}&format=csv${fmt}`);
    const rows = (text: string) => text.split('\n').filter((l) => l && !l.startsWith('#'));
    const [hi, ri] = [rows((await csv('')).text), rows((await csv('&convention=cosmo')).text)];
    const col = hi[0].split(',').indexOf('delta_u');
    for (let i = 1; i < hi.length; i++) expect(Number(ri[i].split(',')[col])).toBe(-Number(hi[i].split(',')[col]));
    expect((await modeler.get(`/api/v1/sky?convention=healpix`)).body.error.details.fields[0].field).toBe('convention');
  });
});

describe('the sky listing', () => {
  it('pages walk every cell of the run exactly once, in ipix order', async () => {
    const all = (await modeler.get(`/api/v1/tomography/runs/${runId}/cells`)).body.cells.map((c: { ipix: number }) => c.ipix);
    expect(all.length).toBe(240);
    const seen: number[] = [];
    let cursor: string | null = null;
    let pages = 0;
    do {
      const res = await modeler.get(`/api/v1/sky?run=${runId}&limit=37${cursor ? `&cursor=${cursor}` : ''}`);
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({ convention: 'iau', release: null, run: { id: runId }, limit: 37 });
      expect(res.body.cells.length).toBeLessThanOrEqual(37);
      seen.push(...res.body.cells.map((c: Cell) => c.ipix));
      cursor = res.body.next;
      pages++;
    } while (cursor !== null);
    expect(pages).toBe(Math.ceil(240 / 37));
    expect(seen).toEqual(all);
  });

  it('filters by stars, jump significance and distance; pages of a filter walk the filtered cells', async () => {
    const all = await allCells();
    const want = all.filter((c) => c.nStars >= 25 && c.jumps.some((j) => j.significance >= 8) && c.layers.some((l) => l.distancePc >= 300 && l.distancePc <= 800)).map((c) => c.ipix);
    expect(want.length).toBeGreaterThan(3);
    expect(want.length).toBeLessThan(all.length);
    const seen: number[] = [];
    let cursor: string | null = null;
    do {
      const res = await modeler.get(`/api/v1/sky?run=${runId}&limit=3&minStars=25&minSignificance=8&minDistancePc=300&maxDistancePc=800${cursor ? `&cursor=${cursor}` : ''}`);
      seen.push(...res.body.cells.map((c: Cell) => c.ipix));
      cursor = res.body.next;
    } while (cursor !== null);
    expect(seen).toEqual(want);
    // the same filters on GET /sightlines (a cone around the first match)
    const first = all.find((c) => c.ipix === want[0])!;
    const cone = `/api/v1/sightlines?run=${runId}&ra=${first.centre.raDeg}&dec=${first.centre.decDeg}&radius=10`;
    const unfiltered = (await modeler.get(cone)).body.cells as Cell[];
    const filtered = (await modeler.get(`${cone}&minStars=25&minSignificance=8&minDistancePc=300&maxDistancePc=800`)).body.cells as Cell[];
    expect(filtered.map((c) => c.ipix)).toEqual(unfiltered.filter((c) => want.includes(c.ipix)).map((c) => c.ipix));
    expect(filtered.length).toBeLessThan(unfiltered.length);
  });

  it('CSV: comment header with run, release, convention, frame and every column’s unit, then one row per layer', async () => {
    const res = await modeler.get(`/api/v1/sky?run=${runId}&format=csv&limit=5000`);
    expect(res.headers['content-type']).toMatch(/text\/csv/);
    const lines = res.text.trimEnd().split('\n');
    const comments = lines.filter((l) => l.startsWith('# '));
    expect(lines.slice(0, comments.length)).toEqual(comments); // comments come first
    const text = comments.join('\n');
    expect(text).toMatch(new RegExp(`# run: ${runId} `));
    expect(text).toMatch(/# release: none/);
    expect(text).toMatch(/# convention: IAU/);
    expect(text).toMatch(/# coordinate system: G = Galactic/);
    const header = lines[comments.length].split(',');
    for (const name of header) expect(text).toMatch(new RegExp(`#   ${name}: [^;]+;`));
    const cells = await allCells();
    expect(lines.length - comments.length - 1).toBe(cells.reduce((n, c) => n + Math.max(1, c.layers.length), 0));
  });

  it('refuses bad parameters naming the field', async () => {
    for (const [q, field] of [['limit=5001', 'limit'], ['limit=0', 'limit'], ['cursor=abc', 'cursor'], ['cursor=99999', 'cursor'], ['minStars=-1', 'minStars'], ['minDistancePc=500&maxDistancePc=100', 'maxDistancePc'], ['format=xml', 'format'], ['run=0', 'run']] as const) {
      const res = await modeler.get(`/api/v1/sky?${q}`);
      expect(res.status, q).toBe(400);
      expect(res.body.error.details.fields[0].field).toBe(field);
    }
    expect((await modeler.get('/api/v1/sky?release=NO-SUCH')).status).toBe(404);
    expect((await modeler.get('/api/v1/masks?format=png')).body.error.details.fields[0].field).toBe('format');
  });
});

describe('released answers', () => {
  it('masks, sightlines and the sky listing of a release stay byte-for-byte the same after new data and a new run', async () => {
    const curator = await signedIn(t.app, 'curator');
    const latest = (await curator.get('/api/v1/tomography/runs')).body.runs.find((r: { state: string; params: { coordsys: string } }) => r.state === 'done' && r.params.coordsys === 'G');
    const frozen = await curator.post('/api/v1/releases').send({ tag: 'KRPS-MASK-T1', runId: latest.id });
    expect(frozen.status).toBe(201);
    const cells = await allCells();
    const two = cells.find((c) => c.nLayers >= 2)!;
    const urls = [
      '/api/v1/masks?release=KRPS-MASK-T1&format=fits',
      '/api/v1/masks?release=KRPS-MASK-T1&format=moc-ascii',
      `/api/v1/sightlines?release=KRPS-MASK-T1&nside=32&ipix=${two.ipix}`,
      `/api/v1/sightlines?release=KRPS-MASK-T1&ra=${two.centre.raDeg}&dec=${two.centre.decDeg}&radius=5&format=csv`,
      '/api/v1/sky?release=KRPS-MASK-T1&limit=50',
    ];
    const before = await Promise.all(urls.map((u) => getBytes(modeler, u)));
    const liveFitsBefore = await getBytes(modeler, '/api/v1/masks?format=fits');

    // new stars in a cell the run does not have yet, approved, then a new run
    const have = new Set(cells.map((c) => c.ipix));
    let empty = 0;
    while (have.has(empty)) empty++;
    const centre = pix2angNest(32, empty);
    const eq = galacticToIcrs(centre.lonDeg, centre.latDeg);
    const lines = ['name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument'];
    for (let i = 0; i < 15; i++) lines.push(`mask late ${i},,${((eq.raDeg + i * 0.002 + 360) % 360).toFixed(5)},${eq.decDeg.toFixed(5)},R,0.02,0.01,0.001,0.001,${(0.5 + i * 0.2).toFixed(2)},0.02,61300,KR-HAWK`);
    const up = (await curator.post('/api/v1/batches').attach('file', Buffer.from(lines.join('\n')), 'mask-late.csv')).body;
    expect((await curator.post(`/api/v1/batches/${up.id}/approve`).send({})).status).toBe(200);
    let run = (await curator.post('/api/v1/tomography/runs').send(DEMO_TOMOGRAPHY)).body;
    const id = run.id;
    for (let i = 0; i < 600 && ['queued', 'running'].includes(run.state); i++) {
      await new Promise((r) => setTimeout(r, 100));
      run = (await curator.get(`/api/v1/tomography/runs/${id}`)).body;
    }
    expect(run.state).toBe('done');

    const after = await Promise.all(urls.map((u) => getBytes(modeler, u)));
    after.forEach((b, i) => expect(b.equals(before[i]), urls[i]).toBe(true));
    // while the live answer did change: the new cell is in the latest run's map
    const liveFitsAfter = await getBytes(modeler, '/api/v1/masks?format=fits');
    expect(liveFitsAfter.equals(liveFitsBefore)).toBe(false);
    const sky = (await modeler.get(`/api/v1/sky?run=${id}&limit=5000`)).body;
    expect(sky.cells.map((c: Cell) => c.ipix)).toContain(empty);
    expect(JSON.parse(before[2].toString()).release).toBe('KRPS-MASK-T1');
  }, 120_000);
});

describe('large CSV answers', () => {
  it('nside=512 with minLayers=0 is streamed: every flagged cell × 256 children, counted in Starveil-Rows', async () => {
    const summary = (await modeler.get(`/api/v1/masks?run=${runId}&format=json&minLayers=0`)).body;
    const res = await modeler.get(`/api/v1/masks?run=${runId}&format=csv&nside=512&minLayers=0`);
    expect(res.status).toBe(200);
    const expected = summary.counts.flagged * 256; // (512 / 32)² NESTED children per run cell
    expect(Number(res.headers['starveil-rows'])).toBe(expected);
    const lines = res.text.split('\n').filter((l: string) => l && !l.startsWith('#'));
    expect(lines[0]).toMatch(/^nside,ipix,lon_deg,/);
    expect(lines.length - 1).toBe(expected);
    // a negative number is written as a number, never with the formula guard
    expect(res.text).not.toMatch(/(^|,)'-/m);
    expect(lines.slice(1).some((l: string) => /,-\d/.test(l))).toBe(true);
  }, 120_000);

  it('a mask CSV over 1,000,000 rows is a 400 naming format and the limit', async () => {
    const { assertMaskCsvSize, MAX_MASK_CSV_ROWS } = await import('../../server/masks/mask.js');
    const run = { id: 1, params: { nside: 16 }, fingerprint: null, finishedAt: null, release: null } as never;
    // 1,000 flagged cells at NSIDE 16 written at NSIDE 512: 1,000 × 4^5 = 1,024,000 rows
    const cells = Array.from({ length: 1000 }, (_, i) => ({ ipix: i, flagged: true })) as never;
    expect(() => assertMaskCsvSize(run, cells, 512)).toThrow(/1,024,000 rows; the limit is 1,000,000/);
    try {
      assertMaskCsvSize(run, cells, 512);
    } catch (e) {
      expect((e as { details: { fields: { field: string }[] } }).details.fields[0].field).toBe('format');
    }
    expect(assertMaskCsvSize(run, cells, 256)).toBe(256_000);
    expect(MAX_MASK_CSV_ROWS).toBe(1_000_000);
  });
});
