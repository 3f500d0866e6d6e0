import crypto from 'node:crypto';
import net from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { browserLikeAgent, makeTestApp, signedIn, DEMO, type TestApp } from '../helpers/app.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';
import { createMailer } from '../../server/mail/transport.js';
import { notifyCuratorsOfNewBatch, notifyObserverOfReview } from '../../server/mail/notifications.js';

const RATE_MAX = 20;
let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({ loginRateLimit: { windowMs: 60_000, max: RATE_MAX }, publicUrl: 'http://starveil.test:8080' });
});
afterAll(async () => {
  await t.app.services.mail.idle();
  await t.close();
});

const sha256 = (s: string) => crypto.createHash('sha256').update(s).digest('hex');
const outboxTo = (email: string) => t.db('outbox').where({ to_address: email.toLowerCase() }).orderBy('id');
const countOf = async (table: string) => Number((await t.db(table).count({ n: '*' }))[0].n);

/** Ask for a reset link for `email` and return the token from the message that arrives. */
async function resetTokenFor(email: string): Promise<string> {
  const before = (await outboxTo(email)).length;
  const res = await request(t.app).post('/api/v1/auth/password-reset/request').send({ email });
  expect(res.status).toBe(202);
  await t.app.services.mail.idle();
  const rows = await outboxTo(email);
  expect(rows).toHaveLength(before + 1);
  const m = rows.at(-1).text_body.match(/http:\/\/starveil\.test:8080\/reset-password\?token=([A-Za-z0-9_-]+)/);
  expect(m, 'the message holds the reset link').not.toBeNull();
  return m![1];
}

/** A fresh account with the password 'original-password', so the demo accounts keep theirs. */
async function newAccount(email: string, role = 'observer') {
  const admin = await signedIn(t.app, 'admin');
  const res = await admin.post('/api/v1/admin/users').send({ email, name: email.split('@')[0], role, password: 'original-password' });
  expect(res.status).toBe(201);
  return res.body as { id: number; email: string };
}

const login = (email: string, password: string) => request(t.app).post('/api/v1/auth/login').send({ email, password });
const confirm = (token: string, newPassword: string) => request(t.app).post('/api/v1/auth/password-reset/confirm').send({ token, newPassword });

/** A port nothing listens on: bind an ephemeral one, then release it. */
async function closedPort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = net.createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

describe('outbox transport', () => {
  it('stores each message with the JSON nodemailer composed', async () => {
    const sent = await t.app.services.mail.send({ to: 'someone@kestrel.example', subject: 'Plain test', text: 'Line one\nLine two', html: '<p>Line one</p>' });
    expect(sent.status).toBe('stored');
    const row = await t.db('outbox').where({ id: sent.id }).first();
    expect(row).toMatchObject({
      to_address: 'someone@kestrel.example',
      from_address: t.config.mail.from,
      subject: 'Plain test',
      text_body: 'Line one\nLine two',
      html_body: '<p>Line one</p>',
      transport: 'outbox',
      status: 'stored',
      error: null,
    });
    expect(Number.isNaN(Date.parse(row.created_at))).toBe(false);
    const composed = JSON.parse(row.message_json);
    expect(composed.subject).toBe('Plain test');
    expect(composed.to).toEqual([{ address: 'someone@kestrel.example', name: '' }]);
    expect(composed.text).toBe('Line one\nLine two');
    expect(composed.messageId).toBe(row.message_id);
  });

  it('records an undeliverable address as failed instead of throwing', async () => {
    const sent = await t.app.services.mail.send({ to: 'not an address', subject: 'Nowhere', text: 'x' });
    expect(sent.status).toBe('failed');
    const row = await t.db('outbox').where({ id: sent.id }).first();
    expect(row.status).toBe('failed');
    expect(row.error).toMatch(/not an e-mail address/);
  });
});

describe('password reset', () => {
  it('answers an unknown e-mail exactly like a known one, and sends nothing for it', async () => {
    const [mailBefore, resetsBefore] = [await countOf('outbox'), await countOf('password_resets')];
    const unknown = await request(t.app).post('/api/v1/auth/password-reset/request').send({ email: 'nobody@kestrel.example' });
    await t.app.services.mail.idle();
    expect(unknown.status).toBe(202);
    expect(await countOf('outbox')).toBe(mailBefore);
    expect(await countOf('password_resets')).toBe(resetsBefore);

    const known = await request(t.app).post('/api/v1/auth/password-reset/request').send({ email: DEMO.curator });
    expect(known.status).toBe(202);
    expect(known.body).toEqual(unknown.body);
    expect(known.body.message).toMatch(/If an enabled account/);
  });

  it('mails a one-time link to a known account and stores only the sha256 of its token', async () => {
    const token = await resetTokenFor('Modeler@Kestrel.Example');
    expect(token).toHaveLength(43); // 32 bytes in base64url without padding
    const user = await t.db('users').where({ email: DEMO.modeler }).first();
    const row = await t.db('password_resets').where({ user_id: user.id }).orderBy('id', 'desc').first();
    expect(row.token_hash).toBe(sha256(token));
    expect(JSON.stringify(await t.db('password_resets').select())).not.toContain(token);
    const minutes = (Date.parse(row.expires_at) - Date.parse(row.created_at)) / 60_000;
    expect(minutes).toBeCloseTo(60, 6);
    expect(row.used_at).toBeNull();
    const message = (await outboxTo(DEMO.modeler)).at(-1);
    expect(message.subject).toBe('Reset your Starveil password');
  });

  it('sets the new password once: old password stops working, sessions end, second use is refused', async () => {
    const email = 'forgetful@kestrel.example';
    const account = await newAccount(email);
    const live = request.agent(t.app);
    expect((await live.post('/api/v1/auth/login').send({ email, password: 'original-password' })).status).toBe(200);
    const token = await resetTokenFor(email);
    const res = await confirm(token, 'a-fresh-observer-password');
    expect(res.status).toBe(204);

    expect((await live.get('/api/v1/me')).status).toBe(401);
    expect((await login(email, 'original-password')).status).toBe(401);
    expect((await login(email, 'a-fresh-observer-password')).status).toBe(200);

    const again = await confirm(token, 'yet-another-password');
    expect(again.status).toBe(400);
    expect(again.body.error.code).toBe('reset_token_used');
    expect(again.body.error.message).toMatch(/already been used/);
    expect(again.body.error.details.fields[0].field).toBe('token');
    expect((await login(email, 'yet-another-password')).status).toBe(401);

    const audit = await t.db('audit_log').where({ entity_type: 'user', entity_id: String(account.id) }).orderBy('id');
    expect(audit.map((a) => a.action)).toEqual(['user.create', 'user.password_reset_request', 'user.password_reset']);
    expect(audit[2].actor_id).toBe(account.id);
    const notice = (await outboxTo(email)).at(-1);
    expect(notice.subject).toBe('Your Starveil password was changed');
  });

  it('a reset also revokes every API token of the account', async () => {
    const email = 'token.holder@kestrel.example';
    await newAccount(email);
    const agent = browserLikeAgent(t.app);
    expect((await agent.post('/api/v1/auth/login').send({ email, password: 'original-password' })).status).toBe(200);
    const secret = (await agent.post('/api/v1/tokens').send({ name: 'cron job' })).body.token;
    expect((await request(t.app).get('/api/v1/me').set('Authorization', `Bearer ${secret}`)).status).toBe(200);
    expect((await confirm(await resetTokenFor(email), 'a-fresh-token-password')).status).toBe(204);
    const res = await request(t.app).get('/api/v1/me').set('Authorization', `Bearer ${secret}`);
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('invalid_token');
    expect((await outboxTo(email)).at(-1).text_body).toMatch(/API tokens were revoked/);
  });

  it('a newer reset spends the older links of the same person', async () => {
    await newAccount('two.links@kestrel.example');
    const first = await resetTokenFor('two.links@kestrel.example');
    const second = await resetTokenFor('two.links@kestrel.example');
    expect(first).not.toBe(second);
    expect((await confirm(second, 'second-link-password')).status).toBe(204);
    const old = await confirm(first, 'first-link-password');
    expect(old.status).toBe(400);
    expect(old.body.error.code).toBe('reset_token_used');
    expect((await login('two.links@kestrel.example', 'second-link-password')).status).toBe(200);
  });

  it('refuses an expired link with 400 and leaves the password alone', async () => {
    const token = await resetTokenFor(DEMO.admin);
    await t.db('password_resets').where({ token_hash: sha256(token) }).update({ expires_at: new Date(Date.now() - 1000).toISOString() });
    const res = await confirm(token, 'too-late-password');
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('reset_token_expired');
    expect(res.body.error.message).toMatch(/expired/);
    expect((await login(DEMO.admin, 'too-late-password')).status).toBe(401);
    expect((await login(DEMO.admin, DEMO_PASSWORD)).status).toBe(200);
  });

  it('refuses an unknown token and a bad new password, naming the field', async () => {
    const unknown = await confirm(crypto.randomBytes(32).toString('base64url'), 'whatever-password');
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.code).toBe('reset_token_unknown');
    expect(unknown.body.error.details.fields).toEqual([{ field: 'token', message: expect.stringMatching(/not valid/) }]);

    await newAccount('careful@kestrel.example');
    const token = await resetTokenFor('careful@kestrel.example');
    const demo = await confirm(token, DEMO_PASSWORD);
    expect(demo.status).toBe(400);
    expect(demo.body.error.details.fields[0].field).toBe('newPassword');
    const short = await confirm(token, 'short');
    expect(short.status).toBe(400);
    expect(short.body.error.details.fields[0]).toEqual({ field: 'newPassword', message: expect.stringMatching(/newPassword .*10/) });
    const missing = await request(t.app).post('/api/v1/auth/password-reset/request').send({});
    expect(missing.status).toBe(400);
    expect(missing.body.error.details.fields[0]).toEqual({ field: 'email', message: 'email is required' });
    // the refused attempts did not spend the token
    expect((await confirm(token, 'careful-new-password')).status).toBe(204);
    expect((await login('careful@kestrel.example', 'careful-new-password')).status).toBe(200);
  });

  it('sends nothing for a disabled account, but answers the same', async () => {
    const admin = await signedIn(t.app, 'admin');
    const created = await newAccount('gone@kestrel.example');
    expect((await admin.patch(`/api/v1/admin/users/${created.id}`).send({ disabled: true })).status).toBe(200);
    const res = await request(t.app).post('/api/v1/auth/password-reset/request').send({ email: 'gone@kestrel.example' });
    await t.app.services.mail.idle();
    expect(res.status).toBe(202);
    expect(await outboxTo('gone@kestrel.example')).toHaveLength(0);
  });

  it('rate-limits requests for one e-mail like sign-in', async () => {
    const email = 'flood@kestrel.example';
    const codes: number[] = [];
    for (let i = 0; i < RATE_MAX + 1; i++) codes.push((await request(t.app).post('/api/v1/auth/password-reset/request').send({ email })).status);
    expect(codes.slice(0, RATE_MAX).every((c) => c === 202)).toBe(true);
    expect(codes[RATE_MAX]).toBe(429);
    expect((await request(t.app).post('/api/v1/auth/password-reset/request').send({ email: 'other@kestrel.example' })).status).toBe(202);
  });
});

describe('admin outbox', () => {
  it('is for admins only', async () => {
    expect((await request(t.app).get('/api/v1/admin/outbox')).status).toBe(401);
    for (const role of ['curator', 'observer', 'modeler'] as const) {
      const agent = await signedIn(t.app, role);
      const res = await agent.get('/api/v1/admin/outbox');
      expect(res.status).toBe(403);
      expect(res.body.error.code).toBe('forbidden');
    }
  });

  it('lists messages newest first with a total, paged', async () => {
    await t.app.services.mail.send({ to: 'paging-1@kestrel.example', subject: 'Older', text: 'first' });
    await t.app.services.mail.send({ to: 'paging-2@kestrel.example', subject: 'Newer', text: 'second' });
    const admin = await signedIn(t.app, 'admin');
    const all = await admin.get('/api/v1/admin/outbox?limit=2');
    expect(all.status).toBe(200);
    const total = await countOf('outbox');
    expect(all.body.total).toBe(total);
    expect(all.body.messages).toHaveLength(2);
    expect(all.body.messages[0]).toMatchObject({ to: 'paging-2@kestrel.example', subject: 'Newer', text: 'second', transport: 'outbox', status: 'stored', createdAt: expect.any(String), id: expect.any(Number) });
    expect(all.body.messages[1].subject).toBe('Older');
    expect(all.body.messages[0].id).toBeGreaterThan(all.body.messages[1].id);
    const next = await admin.get('/api/v1/admin/outbox?limit=1&offset=1');
    expect(next.body.messages.map((m: { subject: string }) => m.subject)).toEqual(['Older']);
    const bad = await admin.get('/api/v1/admin/outbox?limit=lots');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.fields[0].field).toBe('limit');
  });
});

describe('batch notifications', () => {
  const counts = { rows: 1204, accepted: 1180, rejected: 12, duplicates: 8, conflicts: 3, ambiguous: 1, newStars: 640, matchedStars: 540, warnings: 20 };
  const batch = { id: 41, filename: 'kr-hawk-night-2031-03-14.csv', uploadedBy: { name: 'Ada Observer', email: DEMO.observer } };

  it('tells every enabled curator and admin, and nobody else', async () => {
    const admin = await signedIn(t.app, 'admin');
    const off = await newAccount('resting.curator@kestrel.example', 'curator');
    expect((await admin.patch(`/api/v1/admin/users/${off.id}`).send({ disabled: true })).status).toBe(200);
    const firstNew = Number((await t.db('outbox').max({ m: 'id' }))[0].m) + 1;

    const sent = await notifyCuratorsOfNewBatch(t.app.services.mail, t.db, { ...batch, counts });
    expect(sent.map((s) => s.to).sort()).toEqual([DEMO.admin, DEMO.curator]);
    expect(sent.every((s) => s.status === 'stored')).toBe(true);

    const rows = await t.db('outbox').where('id', '>=', firstNew).orderBy('id');
    expect(rows.map((r) => r.to_address).sort()).toEqual([DEMO.admin, DEMO.curator]);
    for (const r of rows) {
      expect(r.subject).toContain('kr-hawk-night-2031-03-14.csv');
      expect(r.text_body).toContain('http://starveil.test:8080/batches/41');
      expect(r.text_body).toContain('Ada Observer');
      expect(r.text_body).toMatch(/rows read\s+1,204/);
      expect(r.text_body).toMatch(/rejected\s+12/);
    }
  });

  it('tells the uploader the decision with the note, the counts and the link', async () => {
    const returned = await notifyObserverOfReview(t.app.services.mail, t.db, batch, 'returned', 'Row 17 has the angle in radians.', counts);
    expect(returned).toMatchObject({ to: DEMO.observer, status: 'stored' });
    const row = await t.db('outbox').where({ id: returned!.id }).first();
    expect(row.subject).toMatch(/returned/);
    expect(row.text_body).toContain('Row 17 has the angle in radians.');
    expect(row.text_body).toMatch(/accepted\s+1,180/);
    expect(row.text_body).toContain('http://starveil.test:8080/batches/41');

    const approved = await notifyObserverOfReview(t.app.services.mail, t.db, batch, 'approved', null, counts);
    const row2 = await t.db('outbox').where({ id: approved!.id }).first();
    expect(row2.subject).toMatch(/approved/);
    expect(row2.text_body).toContain('left no note');
  });
});

describe('smtp transport', () => {
  it('records a send to a closed port as failed and does not throw', async () => {
    const port = await closedPort();
    const mailer = createMailer(t.db, { ...t.config, mail: { transport: 'smtp', from: t.config.mail.from, smtpUrl: `smtp://127.0.0.1:${port}` } });
    const sent = await mailer.send({ to: 'smtp-check@kestrel.example', subject: 'Over SMTP', text: 'hello' });
    expect(sent.status).toBe('failed');
    const row = await t.db('outbox').where({ id: sent.id }).first();
    expect(row).toMatchObject({ transport: 'smtp', status: 'failed', to_address: 'smtp-check@kestrel.example', subject: 'Over SMTP' });
    expect(row.error).toMatch(/ECONNREFUSED/);
    expect(JSON.parse(row.message_json).subject).toBe('Over SMTP');
  });

  it('a reset request still answers 202; the kept copy hides the token', async () => {
    const port = await closedPort();
    const smtpApp = await makeTestApp({ mail: { transport: 'smtp', from: 'Starveil <no-reply@starveil.example>', smtpUrl: `smtp://127.0.0.1:${port}` } });
    try {
      const res = await request(smtpApp.app).post('/api/v1/auth/password-reset/request').send({ email: DEMO.modeler });
      expect(res.status).toBe(202);
      await smtpApp.app.services.mail.idle();
      const row = await smtpApp.db('outbox').where({ to_address: DEMO.modeler }).first();
      expect(row).toMatchObject({ transport: 'smtp', status: 'failed' });
      expect(row.text_body).toContain('/reset-password?token=[redacted]');
      expect(row.message_json).toContain('[redacted]');
      expect(row.text_body).not.toMatch(/token=[A-Za-z0-9_-]{43}/);
      expect(row.message_json).not.toMatch(/token=[A-Za-z0-9_-]{43}/);
    } finally {
      await smtpApp.app.services.mail.idle();
      await smtpApp.close();
    }
  });
});
