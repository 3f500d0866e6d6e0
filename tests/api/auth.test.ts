import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { browserLikeAgent, makeTestApp, signedIn, DEMO, type TestApp } from '../helpers/app.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({ loginRateLimit: { windowMs: 60_000, max: 5 } });
});
afterAll(async () => t.close());

describe('sign-in', () => {
  it('signs in with the demo account and returns the person', async () => {
    const agent = request.agent(t.app);
    const res = await agent.post('/api/v1/auth/login').send({ email: DEMO.curator, password: DEMO_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ email: DEMO.curator, role: 'curator' });
    const cookie = String(res.headers['set-cookie']);
    expect(cookie).toMatch(/starveil\.sid=/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    const me = await agent.get('/api/v1/me');
    expect(me.status).toBe(200);
    expect(me.body).toEqual({ id: expect.any(Number), email: DEMO.curator, name: expect.any(String), role: 'curator' });
  });

  it('accepts the e-mail in any case', async () => {
    const res = await request(t.app).post('/api/v1/auth/login').send({ email: 'Modeler@Kestrel.Example', password: DEMO_PASSWORD });
    expect(res.status).toBe(200);
  });

  it('a wrong password and an unknown e-mail get the same 401 message', async () => {
    const a = await request(t.app).post('/api/v1/auth/login').send({ email: DEMO.observer, password: 'wrong-one' });
    const b = await request(t.app).post('/api/v1/auth/login').send({ email: 'nobody@kestrel.example', password: 'wrong-one' });
    expect(a.status).toBe(401);
    expect(b.status).toBe(401);
    expect(a.body.error.code).toBe('bad_credentials');
    expect(a.body.error.message).toBe(b.body.error.message);
    expect(a.body.error.message).not.toMatch(/password is wrong|unknown e-mail|no such/i);
  });

  it('a malformed body is a 400 naming the field', async () => {
    const res = await request(t.app).post('/api/v1/auth/login').send({ email: DEMO.observer });
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields).toContainEqual({ field: 'password', message: 'password is required' });
    const bad = await request(t.app).post('/api/v1/auth/login').set('Content-Type', 'application/json').send('{"email":');
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('bad_json');
  });

  it('regenerates the session id at sign-in', async () => {
    const agent = request.agent(t.app);
    const first = await agent.post('/api/v1/auth/login').send({ email: DEMO.observer, password: DEMO_PASSWORD });
    const second = await agent.post('/api/v1/auth/login').send({ email: DEMO.observer, password: DEMO_PASSWORD });
    const sid = (r: request.Response) => String(r.headers['set-cookie']).match(/starveil\.sid=([^;]+)/)?.[1];
    expect(sid(first)).toBeTruthy();
    expect(sid(second)).toBeTruthy();
    expect(sid(second)).not.toBe(sid(first));
  });

  it('without a session /me is 401 in the error shape', async () => {
    const res = await request(t.app).get('/api/v1/me');
    expect(res.status).toBe(401);
    expect(res.body).toEqual({ error: { code: 'unauthenticated', message: expect.any(String) } });
  });

  it('sign-out ends the session', async () => {
    const agent = await signedIn(t.app, 'modeler');
    expect((await agent.get('/api/v1/me')).status).toBe(200);
    expect((await agent.post('/api/v1/auth/logout')).status).toBe(204);
    expect((await agent.get('/api/v1/me')).status).toBe(401);
  });

  it('rate-limits repeated failures for one e-mail', async () => {
    const email = 'ratelimit@kestrel.example';
    const codes: number[] = [];
    for (let i = 0; i < 7; i++) codes.push((await request(t.app).post('/api/v1/auth/login').send({ email, password: 'nope' })).status);
    expect(codes.slice(0, 5)).toEqual([401, 401, 401, 401, 401]);
    expect(codes[5]).toBe(429);
    // a different account from the same address is not locked out by it
    expect((await request(t.app).post('/api/v1/auth/login').send({ email: DEMO.admin, password: DEMO_PASSWORD })).status).toBe(200);
  });

  it('unknown API routes are JSON 404s', async () => {
    const res = await request(t.app).get('/api/v1/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe('not_found');
  });
});

describe('roles', () => {
  it('an observer gets 403 on the admin routes', async () => {
    const agent = await signedIn(t.app, 'observer');
    const res = await agent.get('/api/v1/admin/users');
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('forbidden');
  });

  it.each(['curator', 'modeler'] as const)('a %s gets 403 on the admin routes', async (role) => {
    const agent = await signedIn(t.app, role);
    expect((await agent.get('/api/v1/admin/users')).status).toBe(403);
    expect((await agent.post('/api/v1/admin/users').send({ email: 'x@kestrel.example', name: 'X', role: 'admin', password: 'long-enough-1' })).status).toBe(403);
  });

  it('every role may read the overview; nobody without a session may', async () => {
    for (const role of ['observer', 'curator', 'modeler', 'admin'] as const) {
      const agent = await signedIn(t.app, role);
      const res = await agent.get('/api/v1/overview');
      expect(res.status).toBe(200);
      expect(res.body.counts.stars).toBeGreaterThan(200);
    }
    expect((await request(t.app).get('/api/v1/overview')).status).toBe(401);
  });
});

describe('accounts (admin)', () => {
  it('creates an account, changes its role, disables it; a disabled account cannot sign in', async () => {
    const admin = await signedIn(t.app, 'admin');
    const created = await admin.post('/api/v1/admin/users').send({ email: 'new.observer@kestrel.example', name: 'New Observer', role: 'observer', password: 'a-long-password' });
    expect(created.status).toBe(201);
    const id = created.body.id;

    const person = request.agent(t.app);
    expect((await person.post('/api/v1/auth/login').send({ email: 'new.observer@kestrel.example', password: 'a-long-password' })).status).toBe(200);
    expect((await person.get('/api/v1/me')).body.role).toBe('observer');

    const promoted = await admin.patch(`/api/v1/admin/users/${id}`).send({ role: 'curator' });
    expect(promoted.body.role).toBe('curator');
    expect((await person.get('/api/v1/me')).body.role).toBe('curator');

    expect((await admin.patch(`/api/v1/admin/users/${id}`).send({ disabled: true })).status).toBe(200);
    // the live session ends and a new sign-in is refused
    expect((await person.get('/api/v1/me')).status).toBe(401);
    const again = await request(t.app).post('/api/v1/auth/login').send({ email: 'new.observer@kestrel.example', password: 'a-long-password' });
    expect(again.status).toBe(401);

    const audit = await t.db('audit_log').where({ entity_type: 'user', entity_id: String(id) }).orderBy('id');
    expect(audit.map((a) => a.action)).toEqual(['user.create', 'user.update', 'user.update']);
    expect(JSON.parse(audit[1].after_json).role).toBe('curator');
  });

  it('refuses a duplicate e-mail with 409 and a bad role with 400 naming the field', async () => {
    const admin = await signedIn(t.app, 'admin');
    const dup = await admin.post('/api/v1/admin/users').send({ email: DEMO.curator, name: 'Dup', role: 'curator', password: 'a-long-password' });
    expect(dup.status).toBe(409);
    const bad = await admin.post('/api/v1/admin/users').send({ email: 'z@kestrel.example', name: 'Z', role: 'captain', password: 'a-long-password' });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.fields[0].field).toBe('role');
  });

  it('an admin cannot disable their own account', async () => {
    const admin = await signedIn(t.app, 'admin');
    const me = (await admin.get('/api/v1/me')).body;
    const res = await admin.patch(`/api/v1/admin/users/${me.id}`).send({ disabled: true });
    expect(res.status).toBe(400);
  });
});

describe('own password', () => {
  it('changes the password; the old one stops working', async () => {
    const admin = await signedIn(t.app, 'admin');
    await admin.post('/api/v1/admin/users').send({ email: 'pw@kestrel.example', name: 'Pw', role: 'modeler', password: 'first-password' });
    const agent = browserLikeAgent(t.app);
    await agent.post('/api/v1/auth/login').send({ email: 'pw@kestrel.example', password: 'first-password' });
    const wrong = await agent.post('/api/v1/me/password').send({ currentPassword: 'not-it', newPassword: 'second-password' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.details.fields[0].field).toBe('currentPassword');
    expect((await agent.post('/api/v1/me/password').send({ currentPassword: 'first-password', newPassword: 'second-password' })).status).toBe(204);
    expect((await request(t.app).post('/api/v1/auth/login').send({ email: 'pw@kestrel.example', password: 'first-password' })).status).toBe(401);
    expect((await request(t.app).post('/api/v1/auth/login').send({ email: 'pw@kestrel.example', password: 'second-password' })).status).toBe(200);
  });
});

describe('demo password in production', () => {
  it('is refused unless explicitly allowed', async () => {
    const prod = await makeTestApp({ allowDemoPassword: false });
    try {
      const res = await request(prod.app).post('/api/v1/auth/login').send({ email: DEMO.curator, password: DEMO_PASSWORD });
      expect(res.status).toBe(401);
      expect(res.body.error.code).toBe('demo_password_refused');
    } finally {
      await prod.close();
    }
  });
});
