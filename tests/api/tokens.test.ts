import crypto from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, signedIn, DEMO, type TestApp } from '../helpers/app.js';
import { shouldRecordUse, LAST_USED_RESOLUTION_MS } from '../../server/tokens/service.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({}, { tomography: true });
}, 120_000);
afterAll(async () => t.close());

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
const sha256 = (s: string) => crypto.createHash('sha256').update(s).digest('hex');

async function newToken(role: keyof typeof DEMO, name = 'script') {
  const agent = await signedIn(t.app, role);
  const res = await agent.post('/api/v1/tokens').send({ name });
  expect(res.status).toBe(201);
  return { agent, ...(res.body as { id: number; name: string; token: string; createdAt: string }) };
}

describe('creating and listing tokens', () => {
  it('shows the secret once, stores only its sha256, and audits the creation', async () => {
    const { agent, id, name, token, createdAt } = await newToken('modeler', 'laptop notebook');
    expect(name).toBe('laptop notebook');
    expect(token).toMatch(/^sv_[A-Za-z0-9_-]{43}$/); // sv_ + 32 bytes base64url
    expect(Date.parse(createdAt)).not.toBeNaN();

    const list = await agent.get('/api/v1/tokens');
    expect(list.status).toBe(200);
    expect(list.body.tokens).toEqual([{ id, name, createdAt, lastUsedAt: null, revokedAt: null }]);
    expect(list.text).not.toContain(token);

    const row = await t.db('api_tokens').where({ id }).first();
    expect(row.token_hash).toBe(sha256(token));
    expect(JSON.stringify(row)).not.toContain(token);
    const audit = await t.db('audit_log').where({ entity_type: 'api_token', entity_id: String(id) });
    expect(audit.map((a) => a.action)).toEqual(['token.create']);
    expect(JSON.stringify(audit)).not.toContain(token);
    expect(JSON.stringify(audit)).not.toContain(row.token_hash);
  });

  it('two tokens never share a secret; each person sees only their own', async () => {
    const a = await newToken('modeler', 'a');
    const b = await newToken('modeler', 'b');
    expect(a.token).not.toBe(b.token);
    const observer = await signedIn(t.app, 'observer');
    const theirs = (await observer.get('/api/v1/tokens')).body.tokens;
    expect(theirs.map((x: { id: number }) => x.id)).not.toContain(a.id);
    // someone else's token cannot be revoked: it is not found for them
    expect((await observer.delete(`/api/v1/tokens/${a.id}`)).status).toBe(404);
    expect((await t.db('api_tokens').where({ id: a.id }).first()).revoked_at).toBeNull();
  });

  it('refuses a missing or blank name, naming the field', async () => {
    const agent = await signedIn(t.app, 'modeler');
    for (const body of [{}, { name: '' }, { name: '   ' }, { name: 'x'.repeat(101) }]) {
      const res = await agent.post('/api/v1/tokens').send(body);
      expect(res.status).toBe(400);
      expect(res.body.error.details.fields[0].field).toBe('name');
    }
    expect((await agent.delete('/api/v1/tokens/abc')).status).toBe(400);
  });
});

describe('Authorization: Bearer', () => {
  it('reads GET routes as the token’s owner, under the same role guards', async () => {
    const { token } = await newToken('modeler');
    const me = await request(t.app).get('/api/v1/me').set(bearer(token));
    expect(me.status).toBe(200);
    expect(me.body.email).toBe(DEMO.modeler);
    const cells = (await request(t.app).get('/api/v1/sky?limit=5').set(bearer(token)));
    expect(cells.status).toBe(200);
    expect(cells.body.cells).toHaveLength(5);
    const one = cells.body.cells[0];
    expect((await request(t.app).get(`/api/v1/sightlines?nside=32&ipix=${one.ipix}`).set(bearer(token))).status).toBe(200);
    const moc = await request(t.app).get('/api/v1/masks?format=moc-ascii').set(bearer(token));
    expect(moc.status).toBe(200);
    expect(moc.text).toMatch(/^\d+\//);
    // the modeler's role still decides: admin pages stay closed
    expect((await request(t.app).get('/api/v1/admin/users').set(bearer(token))).status).toBe(403);
    const admin = await newToken('admin');
    expect((await request(t.app).get('/api/v1/admin/users').set(bearer(admin.token))).status).toBe(200);
    // no session is created for a bearer request
    expect(me.headers['set-cookie']).toBeUndefined();
  });

  it('never authorises a write, even for a role that could write with a session', async () => {
    const curator = await newToken('curator');
    const m = await t.db('measurements').first('id', 'version');
    const cases = [
      request(t.app).post('/api/v1/tokens').set(bearer(curator.token)).send({ name: 'minted by a token' }),
      request(t.app).patch(`/api/v1/measurements/${m.id}`).set(bearer(curator.token)).send({ changes: { q: 0.01 }, version: m.version }),
      request(t.app).post('/api/v1/releases').set(bearer(curator.token)).send({ tag: 'BY-TOKEN' }),
      request(t.app).delete(`/api/v1/tokens/${curator.id}`).set(bearer(curator.token)),
    ];
    for (const res of await Promise.all(cases)) {
      expect(res.status).toBe(403);
      expect(res.body.error.code).toBe('token_read_only');
      expect(res.body.error.message).toMatch(/only read/);
    }
    expect((await t.db('measurements').where({ id: m.id }).first()).version).toBe(m.version);
    expect(await t.db('releases').where({ tag: 'BY-TOKEN' }).first()).toBeUndefined();
    expect((await t.db('api_tokens').where({ id: curator.id }).first()).revoked_at).toBeNull();
    expect(await t.db('api_tokens').where({ name: 'minted by a token' }).first()).toBeUndefined();
  });

  it('a revoked token answers 401; revoking is audited and idempotent', async () => {
    const { agent, id, token } = await newToken('modeler', 'to revoke');
    expect((await request(t.app).get('/api/v1/me').set(bearer(token))).status).toBe(200);
    expect((await agent.delete(`/api/v1/tokens/${id}`)).status).toBe(204);
    const res = await request(t.app).get('/api/v1/me').set(bearer(token));
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('invalid_token');
    const listed = (await agent.get('/api/v1/tokens')).body.tokens.find((x: { id: number }) => x.id === id);
    expect(Date.parse(listed.revokedAt)).not.toBeNaN();
    expect((await agent.delete(`/api/v1/tokens/${id}`)).status).toBe(204);
    const audit = await t.db('audit_log').where({ entity_type: 'api_token', entity_id: String(id) }).orderBy('id');
    expect(audit.map((a) => a.action)).toEqual(['token.create', 'token.revoke']);
  });

  it('an unknown, malformed or non-Bearer credential answers 401, even beside a valid session', async () => {
    const fake = `sv_${crypto.randomBytes(32).toString('base64url')}`;
    for (const header of [`Bearer ${fake}`, 'Bearer abc', 'Bearer', `Basic ${Buffer.from('a:b').toString('base64')}`]) {
      const res = await request(t.app).get('/api/v1/me').set('Authorization', header);
      expect(res.status).toBe(401);
      expect(res.body.error.message).toMatch(/token|Bearer/);
    }
    const agent = await signedIn(t.app, 'modeler');
    expect((await agent.get('/api/v1/me').set(bearer(fake))).status).toBe(401);
    expect((await agent.get('/api/v1/me')).status).toBe(200);
  });

  it('stops working when its account is disabled', async () => {
    const { token } = await newToken('observer');
    expect((await request(t.app).get('/api/v1/me').set(bearer(token))).status).toBe(200);
    const admin = await signedIn(t.app, 'admin');
    const observer = await t.db('users').where({ email: DEMO.observer }).first();
    expect((await admin.patch(`/api/v1/admin/users/${observer.id}`).send({ disabled: true })).status).toBe(200);
    expect((await request(t.app).get('/api/v1/me').set(bearer(token))).status).toBe(401);
    await admin.patch(`/api/v1/admin/users/${observer.id}`).send({ disabled: false });
  });
});

describe('last used', () => {
  it('is recorded on use, at most once a minute', async () => {
    const { id, token } = await newToken('modeler', 'usage');
    expect((await t.db('api_tokens').where({ id }).first()).last_used_at).toBeNull();
    await request(t.app).get('/api/v1/me').set(bearer(token));
    const first = (await t.db('api_tokens').where({ id }).first()).last_used_at;
    expect(Date.parse(first)).not.toBeNaN();

    // a use 30 s after the recorded one is not written; one 2 min after is
    const thirtyAgo = new Date(Date.now() - 30_000).toISOString();
    await t.db('api_tokens').where({ id }).update({ last_used_at: thirtyAgo });
    await request(t.app).get('/api/v1/me').set(bearer(token));
    expect((await t.db('api_tokens').where({ id }).first()).last_used_at).toBe(thirtyAgo);
    const twoMinAgo = new Date(Date.now() - 120_000).toISOString();
    await t.db('api_tokens').where({ id }).update({ last_used_at: twoMinAgo });
    await request(t.app).get('/api/v1/me').set(bearer(token));
    const after = (await t.db('api_tokens').where({ id }).first()).last_used_at;
    expect(Date.parse(after)).toBeGreaterThan(Date.parse(twoMinAgo) + 60_000);
  });

  it('shouldRecordUse: never used, within the minute, after it', () => {
    const now = Date.parse('2026-06-01T12:00:00Z');
    expect(LAST_USED_RESOLUTION_MS).toBe(60_000);
    expect(shouldRecordUse(null, now)).toBe(true);
    expect(shouldRecordUse('2026-06-01T11:59:30Z', now)).toBe(false);
    expect(shouldRecordUse('2026-06-01T11:59:00Z', now)).toBe(true);
  });
});

describe('per-token rate limit', () => {
  let small: TestApp;
  beforeAll(async () => {
    small = await makeTestApp({ tokenRateLimit: { windowMs: 60_000, max: 3 } });
  });
  afterAll(async () => small.close());

  it('answers 429 with Retry-After and the JSON error after TOKEN_RATE_MAX requests, per token', async () => {
    const agent = await signedIn(small.app, 'modeler');
    const a = (await agent.post('/api/v1/tokens').send({ name: 'busy' })).body.token;
    const b = (await agent.post('/api/v1/tokens').send({ name: 'quiet' })).body.token;
    for (let i = 0; i < 3; i++) expect((await request(small.app).get('/api/v1/me').set(bearer(a))).status).toBe(200);
    const limited = await request(small.app).get('/api/v1/me').set(bearer(a));
    expect(limited.status).toBe(429);
    const retry = Number(limited.headers['retry-after']);
    expect(Number.isInteger(retry)).toBe(true);
    expect(retry).toBeGreaterThan(0);
    expect(retry).toBeLessThanOrEqual(60);
    expect(limited.body.error.code).toBe('rate_limited');
    expect(limited.body.error.message).toMatch(/3 requests in 60 s/);
    // the other token of the same person, and the session, are not limited
    expect((await request(small.app).get('/api/v1/me').set(bearer(b))).status).toBe(200);
    expect((await agent.get('/api/v1/me')).status).toBe(200);
  });
});
