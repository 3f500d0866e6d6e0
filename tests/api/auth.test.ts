import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { browserLikeAgent, makeTestApp, signedIn, DEMO, type TestApp } from '../helpers/app.js';
import bcrypt from 'bcryptjs';
import { COST, DEMO_PASSWORD } from '../../server/auth/passwords.js';
import { dummyHashRounds } from '../../server/auth/service.js';

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

describe('sign-in limits', () => {
  const fail = (email: string, headers: Record<string, string> = {}) => request(t.app).post('/api/v1/auth/login').set(headers).send({ email, password: 'not-the-password' });

  it('key on the trimmed, lowercased address: padding and case neither dodge a lockout nor let the right password in', async () => {
    const admin = await signedIn(t.app, 'admin');
    await admin.post('/api/v1/admin/users').send({ email: 'padded@kestrel.example', name: 'Padded', role: 'modeler', password: 'padded-password' });
    const variants = ['padded@kestrel.example', '   padded@kestrel.example', 'PADDED@kestrel.example  ', '\tPadded@Kestrel.Example', ' padded@kestrel.example '];
    for (const v of variants) expect((await fail(v)).status).toBe(401);
    // limit 5 per window in this app: every spelling is now locked out, the right password too
    for (const v of ['padded@kestrel.example', '   padded@kestrel.example', 'Padded@kestrel.example']) {
      const res = await request(t.app).post('/api/v1/auth/login').send({ email: v, password: 'padded-password' });
      expect(res.status, JSON.stringify(v)).toBe(429);
      expect(res.body.error.code).toBe('rate_limited');
    }
  });

  it('X-Forwarded-For is not believed unless TRUST_PROXY is set', async () => {
    const email = 'forwarded@kestrel.example';
    for (let i = 0; i < 5; i++) expect((await fail(email, { 'X-Forwarded-For': `203.0.113.${i + 1}` })).status).toBe(401);
    expect((await fail(email, { 'X-Forwarded-For': '198.51.100.7' })).status).toBe(429);

    const proxied = await makeTestApp({ trustProxy: 'loopback', loginRateLimit: { windowMs: 60_000, max: 2 } });
    try {
      const at = (ip: string) => request(proxied.app).post('/api/v1/auth/login').set('X-Forwarded-For', ip).send({ email, password: 'nope' });
      expect((await at('203.0.113.1')).status).toBe(401);
      expect((await at('203.0.113.1')).status).toBe(401);
      expect((await at('203.0.113.1')).status).toBe(429);
      // behind a trusted proxy, another client address has its own count
      expect((await at('203.0.113.2')).status).toBe(401);
    } finally {
      await proxied.close();
    }
  });

  it('an unknown e-mail is checked against a dummy hash of the same bcrypt cost as real accounts', async () => {
    const real = await t.db('users').where({ email: DEMO.observer }).first();
    // equal cost → equal work for known and unknown addresses (bench/signin-timing.ts prints the times)
    expect(dummyHashRounds()).toBe(bcrypt.getRounds(real.password_hash));
    expect(dummyHashRounds()).toBe(COST);
  });
});

describe('password change ends other access', () => {
  it('wrong current passwords are limited like failed sign-ins', async () => {
    const admin = await signedIn(t.app, 'admin');
    await admin.post('/api/v1/admin/users').send({ email: 'guess@kestrel.example', name: 'Guess', role: 'modeler', password: 'guess-password-1' });
    const agent = browserLikeAgent(t.app);
    expect((await agent.post('/api/v1/auth/login').send({ email: 'guess@kestrel.example', password: 'guess-password-1' })).status).toBe(200);
    const codes: number[] = [];
    for (let i = 0; i < 6; i++) codes.push((await agent.post('/api/v1/me/password').send({ currentPassword: `guess-${i}`, newPassword: 'guess-password-2' })).status);
    expect(codes).toEqual([400, 400, 400, 400, 400, 429]); // limit 5 in this app
    expect((await agent.post('/api/v1/me/password').send({ currentPassword: 'guess-password-1', newPassword: 'guess-password-2' })).status).toBe(429);
  });

  it('other sessions end, this one stays, API tokens are revoked, older reset links die', async () => {
    const admin = await signedIn(t.app, 'admin');
    const email = 'rotate@kestrel.example';
    await admin.post('/api/v1/admin/users').send({ email, name: 'Rotate', role: 'modeler', password: 'rotate-password-1' });
    const here = browserLikeAgent(t.app);
    const elsewhere = browserLikeAgent(t.app);
    expect((await here.post('/api/v1/auth/login').send({ email, password: 'rotate-password-1' })).status).toBe(200);
    expect((await elsewhere.post('/api/v1/auth/login').send({ email, password: 'rotate-password-1' })).status).toBe(200);
    const token = (await here.post('/api/v1/tokens').send({ name: 'laptop script' })).body.token;
    const bearer = { Authorization: `Bearer ${token}` };
    expect((await request(t.app).get('/api/v1/me').set(bearer)).status).toBe(200);
    // a reset link asked for before the change
    expect((await request(t.app).post('/api/v1/auth/password-reset/request').send({ email })).status).toBe(202);
    await t.app.services.mail.idle();
    const mail = await t.db('outbox').where({ to_address: email }).orderBy('id', 'desc').first();
    const resetToken = /reset-password\?token=([A-Za-z0-9_-]+)/.exec(mail.text_body)?.[1];
    expect(resetToken).toBeTruthy();

    expect((await here.post('/api/v1/me/password').send({ currentPassword: 'rotate-password-1', newPassword: 'rotate-password-2' })).status).toBe(204);
    expect((await here.get('/api/v1/me')).status).toBe(200);
    expect((await elsewhere.get('/api/v1/me')).status).toBe(401);
    const afterToken = await request(t.app).get('/api/v1/me').set(bearer);
    expect(afterToken.status).toBe(401);
    expect(afterToken.body.error.code).toBe('invalid_token');
    const listed = (await here.get('/api/v1/tokens')).body.tokens;
    expect(listed[0].revokedAt).toEqual(expect.any(String));
    const late = await request(t.app).post('/api/v1/auth/password-reset/confirm').send({ token: resetToken, newPassword: 'attacker-chosen-1' });
    expect(late.status).toBe(400);
    expect(late.body.error.details.fields[0].field).toBe('token');
    expect((await request(t.app).post('/api/v1/auth/login').send({ email, password: 'rotate-password-2' })).status).toBe(200);
    const userId = (await t.db('users').where({ email }).first()).id;
    const audit = await t.db('audit_log').where({ action: 'user.password_change', entity_id: String(userId) }).first();
    expect(JSON.parse(audit.after_json)).toEqual({ endedSessions: 1, revokedTokens: 1, spentResets: 1 });
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
