// The instrument registry: admins register and change instruments; everyone signed in reads them;
// uploads accept exactly the registered codes and bands.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';

const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';
let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp();
});
afterAll(async () => t.close());

describe('instruments', () => {
  it('everyone signed in reads the registry, with the fields it always had', async () => {
    for (const role of ['observer', 'curator', 'modeler', 'admin'] as const) {
      const res = await (await signedIn(t.app, role)).get('/api/v1/instruments');
      expect(res.status).toBe(200);
      const hawk = res.body.instruments.find((i: { code: string }) => i.code === 'KR-HAWK');
      expect(hawk).toMatchObject({ code: 'KR-HAWK', bands: expect.arrayContaining(['V']) });
      expect(Object.keys(hawk)).toEqual(expect.arrayContaining(['id', 'code', 'name', 'bands', 'description', 'createdAt', 'updatedAt', 'measurements']));
      expect(hawk.measurements).toBeGreaterThan(0);
    }
  });

  it('an admin registers one (201), the same code again in any case is a 409, bad input a 400', async () => {
    const admin = await signedIn(t.app, 'admin');
    const o = t.config.publicUrl;
    const res = await admin.post('/api/v1/instruments').set('Origin', o).send({ code: 'KR-KITE', name: 'Kite imaging polarimeter', bands: ['R', 'V'], description: 'Second camera on the 0.6 m' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ code: 'KR-KITE', name: 'Kite imaging polarimeter', bands: ['V', 'R'], description: 'Second camera on the 0.6 m', measurements: 0 });
    const again = await admin.post('/api/v1/instruments').set('Origin', o).send({ code: 'kr-kite', name: 'Another', bands: ['V'] });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/KR-KITE is already registered/);
    const bad = await admin.post('/api/v1/instruments').set('Origin', o).send({ code: 'KR OWL!', name: '', bands: ['Z'] });
    expect(bad.status).toBe(400);
    const fields = bad.body.error.details.fields.map((f: { field: string }) => f.field);
    expect(fields).toEqual(expect.arrayContaining(['code', 'name']));
    expect(fields.some((f: string) => f.startsWith('bands'))).toBe(true);
    const audit = await t.db('audit_log').where({ action: 'instrument.create', entity_id: 'KR-KITE' }).first();
    expect(audit).toBeTruthy();
  });

  it('only admins write', async () => {
    for (const role of ['observer', 'curator', 'modeler'] as const) {
      const agent = await signedIn(t.app, role);
      expect((await agent.post('/api/v1/instruments').set('Origin', t.config.publicUrl).send({ code: 'KR-X', name: 'X', bands: ['V'] })).status).toBe(403);
      expect((await agent.patch('/api/v1/instruments/KR-HAWK').set('Origin', t.config.publicUrl).send({ name: 'X' })).status).toBe(403);
    }
  });

  it('an upload naming a new instrument works; its bands are enforced; an admin can add a band', async () => {
    const observer = await signedIn(t.app, 'observer');
    const o = t.config.publicUrl;
    const body = (band: string, sid: string) => Buffer.from(`${HEADER}\nKite star,${sid},80.0,15.0,${band},0.0100,0.0020,0.0005,0.0005,2.0,0.05,61300.5,KR-KITE\n`);
    const ok = await observer.post('/api/v1/batches').set('Origin', o).attach('file', body('V', '5500000000000000001'), 'kite-v.csv');
    expect(ok.status).toBe(201);
    expect(ok.body.counts).toMatchObject({ rows: 1, accepted: 1 });
    const bBand = await observer.post('/api/v1/batches').set('Origin', o).attach('file', body('B', '5500000000000000002'), 'kite-b.csv');
    expect(bBand.body.counts).toMatchObject({ rows: 1, rejected: 1 });
    const admin = await signedIn(t.app, 'admin');
    const patched = await admin.patch('/api/v1/instruments/kr-kite').set('Origin', o).send({ bands: ['B', 'V', 'R'] });
    expect(patched.status).toBe(200);
    expect(patched.body).toMatchObject({ code: 'KR-KITE', bands: ['B', 'V', 'R'] });
    expect(patched.body.updatedAt).toEqual(expect.any(String));
    const later = await observer.post('/api/v1/batches').set('Origin', o).attach('file', body('B', '5500000000000000003'), 'kite-b2.csv');
    expect(later.body.counts).toMatchObject({ rows: 1, accepted: 1 });
    expect((await admin.patch('/api/v1/instruments/KR-NONE').set('Origin', o).send({ name: 'x' })).status).toBe(404);
  });

  it('an upload naming an unknown instrument is a 400 that says an admin can register it', async () => {
    const observer = await signedIn(t.app, 'observer');
    const res = await observer.post('/api/v1/batches').set('Origin', t.config.publicUrl).field('instrument', 'KR-HERON').attach('file', Buffer.from(`${HEADER}\nA,,10,20,V,0.01,0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n`), 'heron.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/Unknown instrument "KR-HERON".*admin can register/);
  });
});
