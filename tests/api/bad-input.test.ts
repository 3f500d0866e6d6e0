import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';

// Every route of auth, admin, review, catalog, releases, tokens and mail, swept with missing,
// duplicated and wrong-typed bodies, path ids and query parameters: never a 5xx, and every 400
// names the field (details.fields) or says the body is not JSON.
let t: TestApp;
type Agent = Awaited<ReturnType<typeof signedIn>>;
let admin: Agent, observer: Agent;
let batchId: number, measurementId: number, auditId: number;

beforeAll(async () => {
  t = await makeTestApp({ loginRateLimit: { windowMs: 60_000, max: 1_000_000 } });
  admin = await signedIn(t.app, 'admin');
  observer = await signedIn(t.app, 'observer');
  batchId = (await t.db('batches').orderBy('id').first()).id;
  const m = await t.db('measurements').where({ batch_id: batchId }).orderBy('id').first();
  measurementId = m.id;
  await admin.patch(`/api/v1/measurements/${m.id}`).send({ changes: { q: m.q }, version: m.version, reason: 'probe' });
  auditId = (await t.db('audit_log').where({ action: 'measurement.edit' }).orderBy('id', 'desc').first()).id;
});
afterAll(async () => t.close());

interface Route {
  method: 'get' | 'post' | 'patch' | 'delete';
  path: string;
  fields?: Record<string, unknown>; // a good body, to be broken field by field
  query?: string[]; // the query parameters the route reads
}

const routes = (): Route[] => [
  { method: 'post', path: '/auth/login', fields: { email: 'nobody@kestrel.example', password: 'x' } },
  { method: 'post', path: '/auth/password-reset/request', fields: { email: 'nobody@kestrel.example' } },
  { method: 'post', path: '/auth/password-reset/confirm', fields: { token: 'x'.repeat(43), newPassword: 'a-long-new-password' } },
  { method: 'get', path: '/me' },
  { method: 'post', path: '/me/password', fields: { currentPassword: 'wrong', newPassword: 'another-long-password' } },
  { method: 'get', path: '/admin/users' },
  { method: 'post', path: '/admin/users', fields: { email: 'sweep@kestrel.example', name: 'Sweep', role: 'modeler', password: 'sweep-password' } },
  { method: 'patch', path: '/admin/users/:id', fields: { name: 'Renamed', role: 'modeler', disabled: false } },
  { method: 'get', path: '/admin/outbox', query: ['limit', 'offset'] },
  { method: 'get', path: '/overview' },
  { method: 'get', path: '/instruments' },
  { method: 'get', path: '/stars', query: ['q', 'ra', 'dec', 'radius', 'sort', 'order', 'limit', 'offset'] },
  { method: 'get', path: '/stars/:id' },
  { method: 'get', path: '/review/queue', query: ['state', 'sort', 'order'] },
  { method: 'get', path: '/batches/:batch/measurements', query: ['limit', 'offset', 'sort', 'order', 'search', 'filter.state', 'filter.band', 'filter[state]'] },
  { method: 'patch', path: '/measurements/:measurement', fields: { changes: { q: 0.01 }, version: 1, reason: 'r' } },
  { method: 'get', path: '/measurements/:measurement/history' },
  { method: 'post', path: '/measurements/approve', fields: { ids: [1], reason: 'r' } },
  { method: 'post', path: '/measurements/reject', fields: { ids: [1], reason: 'r' } },
  { method: 'post', path: '/measurements/:measurement/resolve', fields: { keep: 'this', reason: 'r' } },
  { method: 'post', path: '/audit/:audit/revert', fields: { reason: 'r' } },
  { method: 'post', path: '/batches/:batch/approve', fields: { note: 'n' } },
  { method: 'post', path: '/batches/:batch/reject', fields: { note: 'n' } },
  { method: 'post', path: '/releases', fields: { tag: 'SWEEP-1', notes: 'n', runId: 1 } },
  { method: 'get', path: '/releases' },
  { method: 'get', path: '/releases/:tag' },
  { method: 'post', path: '/tokens', fields: { name: 'sweep' } },
  { method: 'get', path: '/tokens' },
  { method: 'delete', path: '/tokens/:id' },
];

const BAD_IDS = ['abc', '0', '-1', '1.5', '1e400', '99999999999999999999', '%00', '%E2%80%AE', 'x'.repeat(300), '1;DROP'];
const WRONG_VALUES: unknown[] = [null, true, 0, -1, 1.5, 1e308, 'text', '', 'x'.repeat(5000), [], [1, 'a'], {}, { nested: { deeper: 1 } }];
const RAW_BODIES: [string, string][] = [
  ['application/json', ''],
  ['application/json', '{'],
  ['application/json', '[]'],
  ['application/json', '"a string"'],
  ['application/json', '123'],
  ['application/json', 'null'],
  ['application/json', '{"a":1,"a":2}'],
  ['application/json', '{"__proto__":{"admin":true}}'],
  ['text/plain', 'hello'],
  ['application/x-www-form-urlencoded', 'note=a&note=b'],
];

function fill(path: string, id: string) {
  return path.replace(':batch', id).replace(':measurement', id).replace(':audit', id).replace(':tag', id).replace(':id', id);
}
function real(path: string) {
  return path.replace(':batch', String(batchId)).replace(':measurement', String(measurementId)).replace(':audit', String(auditId)).replace(':tag', 'NO-SUCH-TAG').replace(':id', '2');
}

const problems: string[] = [];
async function check(agent: Agent, r: Route, url: string, body?: { type: string; raw: string } | { json: unknown }) {
  let req = agent[r.method](`/api/v1${url}`);
  if (body && 'raw' in body) req = req.set('Content-Type', body.type).send(body.raw);
  else if (body) req = req.send(body.json as object);
  const res = await req;
  const what = `${r.method.toUpperCase()} ${url} ${body ? JSON.stringify(body).slice(0, 120) : ''} → ${res.status}`;
  if (res.status >= 500) problems.push(`${what} ${JSON.stringify(res.body).slice(0, 200)}`);
  else if (res.status === 400 && res.body?.error?.code !== 'bad_json' && !(res.body?.error?.details?.fields?.[0]?.field)) problems.push(`${what}: 400 without the field named: ${JSON.stringify(res.body)}`);
  else if (res.status >= 400 && !res.body?.error?.code) problems.push(`${what}: no JSON error`);
  return res.status;
}

describe('bad input never gets a 5xx', () => {
  it('bad path ids', async () => {
    for (const r of routes().filter((x) => x.path.includes(':'))) {
      for (const id of BAD_IDS) await check(admin, r, fill(r.path, id), r.fields ? { json: r.fields } : undefined);
    }
    expect(problems).toEqual([]);
  });

  it('missing, raw and wrong-typed bodies', async () => {
    for (const r of routes().filter((x) => x.method !== 'get')) {
      const url = real(r.path);
      await check(admin, r, url); // no body at all
      for (const [type, raw] of RAW_BODIES) await check(admin, r, url, { type, raw });
      for (const [field] of Object.entries(r.fields ?? {})) {
        for (const v of WRONG_VALUES) await check(admin, r, url, { json: { ...r.fields, [field]: v } });
        const { [field]: _drop, ...without } = r.fields!;
        await check(admin, r, url, { json: without });
      }
      await check(admin, r, url, { json: { ...r.fields, unexpected: 1 } });
    }
    expect(problems).toEqual([]);
  }, 120_000);

  it('duplicated and wrong-typed query parameters', async () => {
    const status: Record<string, number> = {};
    for (const r of routes().filter((x) => x.query)) {
      const base = real(r.path);
      for (const p of r.query!) {
        status[`${base}?${p}=a&${p}=b`] = await check(admin, r, `${base}?${encodeURIComponent(p)}=a&${encodeURIComponent(p)}=b`);
        for (const v of ['', 'abc', 'NaN', 'Infinity', '-1', '1e400', '%00', '1.5', '99999999999999999999', 'x'.repeat(3000)]) await check(admin, r, `${base}?${encodeURIComponent(p)}=${v}`);
        await check(observer, r, `${base}?${encodeURIComponent(p)}=a&${encodeURIComponent(p)}=b`);
      }
    }
    expect(problems).toEqual([]);
    // a repeated parameter is refused (400 naming it), not silently picked
    expect(status[`/stars?q=a&q=b`]).toBe(400);
    expect(status[`/batches/${batchId}/measurements?search=a&search=b`]).toBe(400);
  }, 120_000);

  it('the two reported cases', async () => {
    const approve = await admin.post(`/api/v1/batches/${batchId}/approve`);
    expect(approve.status).toBeLessThan(500);
    expect([200, 409]).toContain(approve.status);
    const twice = await admin.get('/api/v1/stars?q=a&q=b');
    expect(twice.status).toBe(400);
    expect(twice.body.error.details.fields).toEqual([{ field: 'q', message: 'expected a single value' }]);
    // and without a session the same requests are a 401/403, never a 5xx
    expect((await request(t.app).post(`/api/v1/batches/${batchId}/approve`)).status).toBe(401);
  });
});
