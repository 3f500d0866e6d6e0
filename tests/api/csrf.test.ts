import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { browserLikeAgent, makeTestApp, signedIn, DEMO, type TestApp } from '../helpers/app.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';

// Cookie-authenticated writes must come from this site's pages: the Origin header (or the Referer's
// origin when Origin is absent) must be PUBLIC_URL's origin or the request's own host (OWASP CSRF
// prevention cheat sheet, "Verifying origin with standard headers"; neither header → refused).
const PUBLIC = 'https://starveil.kestrel.example';
const EVIL = 'https://elsewhere.example';
let t: TestApp;
let cookie: string;
let editId: number;
let measurementId: number;

beforeAll(async () => {
  t = await makeTestApp({ publicUrl: PUBLIC });
  const login = await request(t.app).post('/api/v1/auth/login').send({ email: DEMO.curator, password: DEMO_PASSWORD });
  expect(login.status).toBe(200);
  cookie = String(login.headers['set-cookie']).split(';')[0];
  // one recorded edit to try reverting from elsewhere
  const m = await t.db('measurements').orderBy('id').first();
  measurementId = m.id;
  const edit = await request(t.app).patch(`/api/v1/measurements/${m.id}`).set('Cookie', cookie).set('Origin', PUBLIC).send({ changes: { q: 0.031 }, version: m.version, reason: 'probe' });
  expect(edit.status).toBe(200);
  editId = (await t.db('audit_log').where({ entity_type: 'measurement', entity_id: String(m.id), action: 'measurement.edit' }).orderBy('id', 'desc').first()).id;
});
afterAll(async () => t.close());

const qOf = async () => (await t.db('measurements').where({ id: measurementId }).first()).q;

describe('cross-site writes with the session cookie', () => {
  it.each([
    ['text/plain', 'x'],
    ['application/x-www-form-urlencoded', 'reason=x'],
    ['application/json', '{"reason":"x"}'],
    ['multipart/form-data; boundary=zz', '--zz\r\nContent-Disposition: form-data; name="reason"\r\n\r\nx\r\n--zz--\r\n'],
  ])('a revert from another site as %s is a 403 and changes nothing', async (type, body) => {
    const res = await request(t.app).post(`/api/v1/audit/${editId}/revert`).set('Cookie', cookie).set('Origin', EVIL).set('Content-Type', type).send(body);
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('cross_origin');
    expect(res.body.error.details.fields[0].field).toBe('Origin');
    expect(await qOf()).toBeCloseTo(0.031, 12);
  });

  it('a Referer from another site (no Origin) is refused; PUT, PATCH and DELETE too', async () => {
    const viaReferer = await request(t.app).post(`/api/v1/audit/${editId}/revert`).set('Cookie', cookie).set('Referer', `${EVIL}/page.html`).send({});
    expect(viaReferer.status).toBe(403);
    expect(viaReferer.body.error.details.fields[0].field).toBe('Referer');
    expect((await request(t.app).patch(`/api/v1/measurements/${measurementId}`).set('Cookie', cookie).set('Origin', EVIL).send({ changes: { q: 0.5 }, version: 1 })).status).toBe(403);
    expect((await request(t.app).delete('/api/v1/tokens/1').set('Cookie', cookie).set('Origin', EVIL)).status).toBe(403);
    expect((await request(t.app).put('/api/v1/tokens/1').set('Cookie', cookie).set('Origin', EVIL)).status).toBe(403);
    expect(await qOf()).toBeCloseTo(0.031, 12);
  });

  it('"null", a look-alike host, another scheme or port are not this site', async () => {
    for (const origin of ['null', 'https://starveil.kestrel.example.evil.example', 'http://starveil.kestrel.example', 'https://starveil.kestrel.example:8443', 'file://']) {
      const res = await request(t.app).post(`/api/v1/audit/${editId}/revert`).set('Cookie', cookie).set('Origin', origin).send({});
      expect(res.status, origin).toBe(403);
    }
  });

  it('with neither Origin nor Referer, a write with the cookie is refused (403 origin_missing)', async () => {
    const res = await request(t.app).post(`/api/v1/audit/${editId}/revert`).set('Cookie', cookie).send({});
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('origin_missing');
    expect(res.body.error.message).toContain(PUBLIC);
    expect(await qOf()).toBeCloseTo(0.031, 12);
  });

  it('reads are not affected', async () => {
    const res = await request(t.app).get('/api/v1/me').set('Cookie', cookie).set('Origin', EVIL);
    expect(res.status).toBe(200);
  });

  it('signing in from another site is refused; from a script with no cookie and no Origin it works', async () => {
    const evil = await request(t.app).post('/api/v1/auth/login').set('Origin', EVIL).send({ email: DEMO.modeler, password: DEMO_PASSWORD });
    expect(evil.status).toBe(403);
    expect(evil.headers['set-cookie']).toBeUndefined();
    expect((await request(t.app).post('/api/v1/auth/login').send({ email: DEMO.modeler, password: DEMO_PASSWORD })).status).toBe(200);
    const reset = await request(t.app).post('/api/v1/auth/password-reset/request').set('Origin', EVIL).send({ email: DEMO.modeler });
    expect(reset.status).toBe(403);
  });
});

describe('same-site writes', () => {
  it('PUBLIC_URL as Origin, or as Referer, passes', async () => {
    const viaReferer = await request(t.app).post('/api/v1/tokens').set('Cookie', cookie).set('Referer', `${PUBLIC}/tokens`).send({ name: 'from the tokens page' });
    expect(viaReferer.status).toBe(201);
    const res = await request(t.app).post(`/api/v1/audit/${editId}/revert`).set('Cookie', cookie).set('Origin', PUBLIC).set('Content-Type', 'application/json').send({ reason: 'undo the probe' });
    expect(res.status).toBe(200);
    expect(await qOf()).not.toBeCloseTo(0.031, 12);
  });

  it("the request's own host passes (the Vite dev proxy keeps the browser's Host)", async () => {
    const res = await request(t.app).post('/api/v1/tokens').set('Cookie', cookie).set('Host', 'localhost:5173').set('Origin', 'http://localhost:5173').send({ name: 'dev server' });
    expect(res.status).toBe(201);
  });

  it('X-Forwarded-Proto is believed only when TRUST_PROXY names the proxy', async () => {
    const host = 'starveil.behind.proxy';
    const untrusted = await request(t.app).post('/api/v1/tokens').set('Cookie', cookie).set('Host', host).set('X-Forwarded-Proto', 'https').set('Origin', `https://${host}`).send({ name: 'x' });
    expect(untrusted.status).toBe(403);
    const proxied = await makeTestApp({ trustProxy: 'loopback' });
    try {
      const agent = browserLikeAgent(proxied.app);
      await agent.post('/api/v1/auth/login').send({ email: DEMO.curator, password: DEMO_PASSWORD });
      const trusted = await agent.post('/api/v1/tokens').set('Host', host).set('X-Forwarded-Proto', 'https').set('Origin', `https://${host}`).send({ name: 'x' });
      expect(trusted.status).toBe(201);
    } finally {
      await proxied.close();
    }
  });

  it('ALLOWED_ORIGINS adds origins', async () => {
    const extra = await makeTestApp({ allowedOrigins: ['https://console.kestrel.example'] });
    try {
      const agent = await signedIn(extra.app, 'modeler');
      expect((await agent.post('/api/v1/tokens').set('Origin', 'https://console.kestrel.example').send({ name: 'console' })).status).toBe(201);
      expect((await agent.post('/api/v1/tokens').set('Origin', EVIL).send({ name: 'evil' })).status).toBe(403);
    } finally {
      await extra.close();
    }
  });

  it('bearer-token requests are unaffected: a token never writes, whatever the Origin', async () => {
    const created = await request(t.app).post('/api/v1/tokens').set('Cookie', cookie).set('Origin', PUBLIC).send({ name: 'script' });
    const bearer = `Bearer ${created.body.token}`;
    expect((await request(t.app).get('/api/v1/me').set('Authorization', bearer).set('Origin', EVIL)).status).toBe(200);
    const write = await request(t.app).post('/api/v1/tokens').set('Authorization', bearer).set('Origin', PUBLIC).send({ name: 'nope' });
    expect(write.status).toBe(403);
    expect(write.body.error.code).toBe('token_read_only');
  });
});
