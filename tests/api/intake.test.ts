import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { icrsToGalactic } from '../../server/science/frames.js';
import { ang2pixNest } from '../../server/science/healpix.js';
import { INDEX_NSIDE } from '../../server/measurements/derive.js';

const MESSY = fs.readFileSync(path.resolve('seeds/demo-batches/kestrel-night-messy.csv'));
const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({ uploadMaxBytes: 64 * 1024 });
});
afterAll(async () => t.close());

async function tableCounts() {
  const out: Record<string, number> = {};
  for (const table of ['batches', 'batch_rows', 'measurements', 'stars']) out[table] = Number((await t.db(table).count({ n: '*' }))[0].n);
  return out;
}

async function upload(agent: request.Agent, body: Buffer | string, name = 'night.csv', fields: Record<string, string> = {}) {
  let req = agent.post('/api/v1/batches');
  for (const [k, v] of Object.entries(fields)) req = req.field(k, v);
  return req.attach('file', Buffer.isBuffer(body) ? body : Buffer.from(body), name);
}

describe('bad input is refused with a clear message and changes nothing', () => {
  const cases: [string, Buffer | string, number, RegExp][] = [
    ['an empty file', '', 400, /empty/i],
    ['a header-only file', `${HEADER}\r\n`, 400, /header line.* but no data rows/],
    ['a binary file', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d]), 415, /not a CSV text file/],
    ['a Latin-1 file', Buffer.from(`${HEADER}\nStern \xe9toile,1,10,20,V,0.01,0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n`, 'latin1'), 415, /not valid UTF-8/],
    ['text with no delimiter', 'just some words\nand more words\n', 415, /no comma, semicolon or tab/],
    ['a file over the size limit', `${HEADER}\n${'x'.repeat(70 * 1024)}\n`, 413, /larger than the limit/],
  ];
  it.each(cases)('%s', async (_label, body, status, message) => {
    const agent = await signedIn(t.app, 'observer');
    const before = await tableCounts();
    const res = await upload(agent, body);
    expect(res.status).toBe(status);
    expect(res.body.error.message).toMatch(message);
    expect(res.body.error.details.fields[0].field).toBe('file');
    expect(await tableCounts()).toEqual(before);
    expect(fs.readdirSync(path.join(t.dir, 'uploads', 'tmp'))).toEqual([]);
  });

  it('no file at all', async () => {
    const agent = await signedIn(t.app, 'observer');
    const res = await agent.post('/api/v1/batches').field('instrument', 'KR-HAWK');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/field "file"/);
  });

  it('an unknown instrument and a mapping that is not JSON', async () => {
    const agent = await signedIn(t.app, 'observer');
    const before = await tableCounts();
    const a = await upload(agent, `${HEADER}\nA,,10,20,V,0.01,0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n`, 'a.csv', { instrument: 'KR-DOVE' });
    expect(a.status).toBe(400);
    expect(a.body.error.message).toMatch(/Unknown instrument "KR-DOVE".*KR-HAWK/);
    const b = await upload(agent, `${HEADER}\nA,,10,20,V,0.01,0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n`, 'b.csv', { mapping: '{ra_deg:' });
    expect(b.status).toBe(400);
    expect(b.body.error.details.fields[0].field).toBe('mapping');
    const c = await upload(agent, `${HEADER}\nA,,10,20,V,0.01,0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n`, 'c.csv', { mapping: JSON.stringify({ ra_deg: 'RAJ2000' }) });
    expect(c.status).toBe(400);
    expect(c.body.error.message).toMatch(/header "RAJ2000" is not in the file/);
    expect(await tableCounts()).toEqual(before);
  });
});

describe('a clean batch', () => {
  const body = '\ufeff' + [
    HEADER,
    'Kestrel test star A,4295806720123456789,10.0,20.0,V,0.0100,0.0000,0.0005,0.0005,2.0,0.05,61000.5,KR-HAWK',
    '"Kestrel test star B, the second",,10.5,20.5,V,0.0000,0.0200,0.0005,0.0005,0.5,0.2,61000.5,KR-HAWK',
    'Kestrel test star C,,10.2,-0.5,V,-0.0150,0.0000,0.0005,0.0005,,,61000.5,KR-HAWK',
  ].join('\r\n') + '\r\n\r\n\r\n';
  let id: number;

  it('is checked on upload: 201 with counts, derived values and the 64-bit id kept as text', async () => {
    const agent = await signedIn(t.app, 'observer');
    const res = await upload(agent, body, 'clean.csv');
    expect(res.status).toBe(201);
    expect(res.body.state).toBe('awaiting_review');
    expect(res.body.counts).toMatchObject({ rows: 3, accepted: 3, rejected: 0, duplicates: 0, newStars: 3, matchedStars: 0 });
    id = res.body.id;
    const rows = (await agent.get(`/api/v1/batches/${id}/rows`)).body.rows;
    expect(rows.map((r: { line: number }) => r.line)).toEqual([2, 3, 4]);
    expect(rows[0].star.sourceId).toBe('4295806720123456789'); // above 2^53: would read ...456800 as a JS number
    expect((await t.db('stars').where({ source_id: '4295806720123456789' }).first()).name).toBe('Kestrel test star A');
    expect(rows[1].values.name).toBe('Kestrel test star B, the second');
    const d = rows[0].derived;
    // q = 0.01, u = 0: p = 0.01, θ = 0° (½·atan2(0, 0.01)); σθ = 28.65°·σ/p = 1.4324° (Serkowski 1962)
    expect(d.p).toBeCloseTo(0.01, 12);
    expect(d.theta_deg).toBeCloseTo(0, 10);
    expect(d.theta_err_deg).toBeCloseTo(28.6479 * 0.0005 / 0.01, 3);
    // MAS estimator at p/σ = 20: p − σ²/(2p)·(1 − e^(−p²/σ²)) (Plaszczynski et al. 2014)
    expect(d.p_debiased).toBeCloseTo(0.01 - (0.0005 ** 2 / (2 * 0.01)) * (1 - Math.exp(-400)), 12);
    // ϖ = 2.0 + 0.017 mas (Lindegren et al. 2021), S/N > 5 → 1/ϖ
    expect(d.distance_pc).toBeCloseTo(1000 / 2.017, 6);
    expect(d.distance_method).toBe('inverse_parallax');
    expect(rows[1].derived.distance_method).toBe('edsd_mode'); // ϖ/σ = 2.6
    expect(rows[1].warnings.map((w: { column: string }) => w.column)).toContain('parallax_mas');
    expect(rows[2].derived.distance_pc).toBeNull();
    expect(rows[2].warnings.map((w: { message: string }) => w.message).join(' ')).toMatch(/no parallax or distance/);
    // Galactic values exist and preserve p (a rotation)
    expect(Math.hypot(d.q_gal, d.u_gal)).toBeCloseTo(d.p, 12);
  });

  it('identical bytes again → 200 with the same batch, nothing added', async () => {
    const agent = await signedIn(t.app, 'observer');
    const before = await tableCounts();
    const res = await upload(agent, body, 'clean-again.csv');
    expect(res.status).toBe(200);
    expect(res.body.id).toBe(id);
    expect(await tableCounts()).toEqual(before);
  });

  it('keeps the raw file as received', async () => {
    const agent = await signedIn(t.app, 'observer');
    const raw = await agent.get(`/api/v1/batches/${id}/raw`).buffer(true).parse((res, cb) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => cb(null, Buffer.concat(chunks)));
    });
    expect(Buffer.compare(raw.body as Buffer, Buffer.from(body))).toBe(0);
    const b = (await agent.get(`/api/v1/batches/${id}`)).body;
    expect(b.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(b.sizeBytes).toBe(Buffer.byteLength(body));
  });

  it('a repeat of the same star and epoch with other values is a conflict; another epoch is a repeat', async () => {
    const agent = await signedIn(t.app, 'curator');
    const res = await upload(agent, [HEADER, 'x,4295806720123456789,10.0,20.0,V,0.0110,0.0000,0.0005,0.0005,2.0,0.05,61000.5002,KR-HAWK', 'y,4295806720123456789,10.0,20.0,V,0.0110,0.0000,0.0005,0.0005,2.0,0.05,61003.5,KR-HAWK'].join('\n'), 'repeat.csv');
    expect(res.status).toBe(201);
    expect(res.body.counts).toMatchObject({ rows: 2, conflicts: 1, accepted: 1, matchedStars: 1, newStars: 0 });
    const rows = (await agent.get(`/api/v1/batches/${res.body.id}/rows?state=conflict`)).body.rows;
    expect(rows[0].star.match).toBe('source_id');
    expect(rows[0].duplicateOf).toBeGreaterThan(0);
  });

  it('two catalog stars within the tolerance → ambiguous, listed, never guessed', async () => {
    const agent = await signedIn(t.app, 'curator');
    // two catalog stars 0.6" apart (rows of one upload that close would be one star), then a row between them without a source_id
    const now = new Date().toISOString();
    for (const [name, dec] of [['twin 1', -10.0], ['twin 2', -9.99983]] as const) {
      const g = icrsToGalactic(150.0, dec);
      await t.db('stars').insert({ name, source_id: null, ra_deg: 150.0, dec_deg: dec, glon_deg: g.lDeg, glat_deg: g.bDeg, parallax_mas: 1, parallax_err_mas: 0.05, hpx15: ang2pixNest(INDEX_NSIDE, 150.0, dec), created_at: now });
    }
    const res = await upload(agent, [HEADER, 'which,,150.0,-9.99992,V,0.01,0.0,0.001,0.001,1,0.05,61001,KR-HAWK'].join('\n'), 'which.csv');
    expect(res.body.counts).toMatchObject({ rows: 1, ambiguous: 1, accepted: 0 });
    const row = (await agent.get(`/api/v1/batches/${res.body.id}/rows`)).body.rows[0];
    expect(row.state).toBe('ambiguous');
    expect(row.candidates.map((c: { name: string }) => c.name).sort()).toEqual(['twin 1', 'twin 2']);
    expect(row.star).toBeNull();
  });
});

describe('the messy demo batch', () => {
  let id: number;
  it('needs a mapping: RA is ambiguous, the rest is recognised from synonyms', async () => {
    const agent = await signedIn(t.app, 'observer');
    const res = await upload(agent, MESSY, 'kestrel-night-messy.csv', { instrument: 'KR-OWL' });
    expect(res.status).toBe(200); // the demo seed already holds these bytes, awaiting their mapping
    expect(res.body.state).toBe('needs_mapping');
    id = res.body.id;
    const p = res.body.proposal;
    expect(p.ambiguous.ra_deg.sort()).toEqual(['RA', 'RAJ2000']);
    expect(p.mapping).toMatchObject({ name: 'Star', dec_deg: 'DEJ2000', band: 'Filter', p_pct: 'P%', p_err_pct: 'e_P%', theta_deg: 'PA', theta_err_deg: 'e_PA', parallax_mas: 'plx', parallax_err_mas: 'e_plx', mjd: 'MJD', instrument: 'Instrument' });
    expect(p.missing).toEqual(['a position: ra_deg and dec_deg (or glon_deg and glat_deg)']);
    expect(p.preview[0][0]).toMatch(/^KRS J/);
  });

  it('an incomplete mapping is refused and nothing is written', async () => {
    const agent = await signedIn(t.app, 'observer');
    const before = await tableCounts();
    const res = await agent.post(`/api/v1/batches/${id}/mapping`).send({ mapping: { dec_deg: 'DEJ2000' } });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/still lacks/);
    expect(await tableCounts()).toEqual(before);
  });

  it('after the mapping: percent, sexagesimal, duplicates, a conflict, a wrapped angle, a bad row, a new star', async () => {
    const agent = await signedIn(t.app, 'observer');
    const b = (await agent.get(`/api/v1/batches/${id}`)).body;
    const res = await agent.post(`/api/v1/batches/${id}/mapping`).send({ mapping: { ...b.proposal.mapping, ra_deg: 'RAJ2000' }, saveForInstrument: true });
    expect(res.status).toBe(200);
    expect(res.body.state).toBe('awaiting_review');
    // 90 field stars + 2 exact repeats + 1 conflicting repeat + 1 wrapped-angle repeat (other epoch) + 1 bad row + 1 new star
    expect(res.body.counts).toMatchObject({ rows: 96, rejected: 1, duplicates: 2, conflicts: 1, newStars: 1, matchedStars: 90, accepted: 92 });

    const bad = (await agent.get(`/api/v1/batches/${id}/rows?state=rejected`)).body.rows[0];
    expect(bad.line).toBe(96);
    const byColumn = Object.fromEntries(bad.errors.map((e: { column: string; message: string }) => [e.column, e.message]));
    expect(byColumn.RAJ2000).toMatch(/minutes/);
    expect(byColumn.DEJ2000).toMatch(/90/);
    expect(byColumn['P%']).toMatch(/expected a number/);

    const rows = (await agent.get(`/api/v1/batches/${id}/rows?limit=200`)).body.rows;
    const first = rows[0];
    // P% in the file (e.g. 0.811) → p as a fraction (0.00811)
    const pPct = Number(MESSY.toString('utf8').replace(/^\ufeff/, '').split('\r\n')[1].split(',')[5]);
    expect(first.derived.p).toBeCloseTo(pPct / 100, 9);
    expect(first.star.match).toBe('position'); // the messy file has no source_id column
    const wrapped = rows.find((r: { warnings: { message: string }[] }) => r.warnings.some((w) => /wrapped/.test(w.message)));
    expect(wrapped.warnings.find((w: { message: string }) => /wrapped/.test(w.message)).column).toBe('PA');
    expect(wrapped.derived.theta_deg).toBeGreaterThanOrEqual(0);
    expect(wrapped.derived.theta_deg).toBeLessThan(180);

    const csv = (await agent.get(`/api/v1/batches/${id}/errors.csv`)).text;
    expect(csv.split('\r\n')[0]).toBe('line,state,column,field,value,message');
    expect(csv).toMatch(/^96,rejected,RAJ2000,ra_deg,25:61:00,/m);

    const saved = await t.db('instrument_mappings').where({ instrument: 'KR-OWL' }).first();
    expect(JSON.parse(saved.mapping_json).ra_deg).toBe('RAJ2000');
  });
});

describe('a large batch is checked in the background', () => {
  it('answers 201 while checking, reports progress, then lands in one piece', async () => {
    const big = await makeTestApp({ intake: { crossmatchArcsec: 1, mjdToleranceDays: 0.001, syncBytes: 1000 } });
    try {
      const agent = await signedIn(big.app, 'observer');
      const lines = [HEADER];
      for (let i = 0; i < 3000; i++) lines.push(`bg ${i},,${(i * 0.01).toFixed(4)},${(-60 + i * 0.001).toFixed(4)},V,0.01,0.002,0.001,0.001,1.5,0.05,61000,KR-HAWK`);
      const res = await agent.post('/api/v1/batches').attach('file', Buffer.from(lines.join('\n')), 'big.csv');
      expect(res.status).toBe(201);
      expect(res.body.state).toBe('checking');
      expect(res.body.progress.bytesTotal).toBeGreaterThan(100_000);
      let b = res.body;
      for (let i = 0; i < 200 && b.state === 'checking'; i++) {
        await new Promise((r) => setTimeout(r, 50));
        b = (await agent.get(`/api/v1/batches/${res.body.id}`)).body;
      }
      expect(b.state).toBe('awaiting_review');
      expect(b.counts).toMatchObject({ rows: 3000, accepted: 3000, newStars: 3000 });
      expect(b.progress.bytesDone).toBe(b.progress.bytesTotal);
    } finally {
      await big.app.services.intake.idle();
      await big.close();
    }
  });
});

describe('a batch of 1 MB or more is prepared on a worker thread', () => {
  it('gives the same checks, counts and derived values as the in-thread path', async () => {
    const w = await makeTestApp();
    try {
    const agent = await signedIn(w.app, 'curator');
    const rows = (n: number, prefix: string, dec0: number) => {
      const lines: string[] = [];
      for (let i = 0; i < n; i++) lines.push(`${prefix} ${i},,${(200 + (i % 1000) * 0.01).toFixed(4)},${(dec0 + Math.floor(i / 1000) * 0.01).toFixed(4)},V,${(0.001 * (i % 17)).toFixed(4)},${(-0.0005 * (i % 13)).toFixed(4)},0.0008,0.0008,${(1 + (i % 7) * 0.3).toFixed(2)},0.04,${(61300 + i * 1e-3).toFixed(4)},KR-HAWK`);
      return lines;
    };
    const big = [HEADER, ...rows(13_000, 'w', 30), 'bad row,,400,91,V,x,0,0.001,0.001,1,0.1,61000,KR-HAWK'];
    big.push(big[5]); // an exact repeat of a row: a duplicate
    const bytes = Buffer.from(big.join('\n'));
    expect(bytes.length).toBeGreaterThan(1 << 20);
    const res = await agent.post('/api/v1/batches').attach('file', bytes, 'worker.csv');
    expect(res.status).toBe(201);
    expect(res.body.state).toBe('awaiting_review');
    expect(res.body.counts).toMatchObject({ rows: 13_002, accepted: 13_000, rejected: 1, duplicates: 1, newStars: 13_000 });
    const bad = (await agent.get(`/api/v1/batches/${res.body.id}/rows?state=rejected`)).body.rows[0];
    expect(bad.line).toBe(13_002);
    expect(bad.errors.map((e: { column: string }) => e.column).sort()).toEqual(['dec_deg', 'q', 'ra_deg']);
    // the same rows through the in-thread path (a small file) give identical derived values
    const small = await agent.post('/api/v1/batches').attach('file', Buffer.from([HEADER, ...rows(40, 'v', -50)].join('\n')), 'small.csv');
    const a = (await agent.get(`/api/v1/batches/${res.body.id}/rows?limit=40`)).body.rows.map((r: { derived: Record<string, unknown> }) => r.derived);
    const b = (await agent.get(`/api/v1/batches/${small.body.id}/rows?limit=40`)).body.rows.map((r: { derived: Record<string, unknown> }) => r.derived);
    const strip = (d: Record<string, unknown>) => ({ q: d.q, u: d.u, p: d.p, p_debiased: d.p_debiased, theta_deg: d.theta_deg, theta_err_deg: d.theta_err_deg, distance_pc: d.distance_pc, distance_method: d.distance_method });
    expect(a.map(strip)).toEqual(b.map(strip));
    } finally {
      await w.close();
    }
  }, 60_000);
});

describe('who sees batches', () => {
  it('observers see only their own; modelers none; curators all', async () => {
    const admin = await signedIn(t.app, 'admin');
    await admin.post('/api/v1/admin/users').send({ email: 'second.observer@kestrel.example', name: 'Second Observer', role: 'observer', password: 'second-observer' });
    const other = request.agent(t.app);
    await other.post('/api/v1/auth/login').send({ email: 'second.observer@kestrel.example', password: 'second-observer' });
    const mine = (await other.get('/api/v1/batches')).body;
    expect(mine.total).toBe(0);
    const observerBatch = (await (await signedIn(t.app, 'observer')).get('/api/v1/batches')).body.batches[0];
    expect((await other.get(`/api/v1/batches/${observerBatch.id}`)).status).toBe(404);
    expect((await other.get(`/api/v1/batches/${observerBatch.id}/raw`)).status).toBe(404);
    const modeler = await signedIn(t.app, 'modeler');
    expect((await modeler.get('/api/v1/batches')).status).toBe(403);
    expect((await modeler.post('/api/v1/batches').attach('file', Buffer.from('a,b\n1,2\n'), 'x.csv')).status).toBe(403);
    const curator = await signedIn(t.app, 'curator');
    expect((await curator.get('/api/v1/batches')).body.total).toBeGreaterThanOrEqual(4);
  });

  it('column guide and template list every canonical column', async () => {
    const agent = await signedIn(t.app, 'modeler');
    const cols = (await agent.get('/api/v1/intake/columns')).body.columns.map((c: { name: string }) => c.name);
    for (const c of ['name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'band', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'theta_deg', 'theta_err_deg', 'angle_frame', 'parallax_mas', 'parallax_err_mas', 'distance_pc', 'distance_err_pc', 'mjd', 'instrument', 'ebv', 'p_pct', 'q_pct']) expect(cols).toContain(c);
    const tpl = (await agent.get('/api/v1/intake/template.csv')).text.split('\r\n')[0].split(',');
    expect(tpl).toContain('theta_err_deg');
    expect(tpl).toContain('source_id');
  });
});
