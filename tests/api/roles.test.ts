import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { listRoutes } from '../helpers/routes.js';

type Who = 'open' | 'signed-in' | ('observer' | 'curator' | 'modeler' | 'admin')[];
const OBS_CUR: Who = ['observer', 'curator'];
const CUR: Who = ['curator'];
const ADMIN: Who = ['admin'];

/**
 * Who may pass the guard of each route. Every route of the app must be listed here: a new route
 * without an entry fails the completeness test below, so the matrix cannot fall behind the code.
 */
const MATRIX: Record<string, Who> = {
  'GET /health': 'open',
  'GET /openapi.json': 'open',
  'POST /auth/login': 'open',
  'POST /auth/logout': 'open',
  'POST /auth/password-reset/request': 'open',
  'POST /auth/password-reset/confirm': 'open',
  'GET /me': 'signed-in',
  'POST /me/password': 'signed-in',
  'GET /overview': 'signed-in',
  'GET /instruments': 'signed-in',
  'GET /instruments/:code': 'signed-in',
  'POST /instruments': ADMIN,
  'PATCH /instruments/:code': ADMIN,
  'GET /stars': 'signed-in',
  'GET /stars/:id': 'signed-in',
  'GET /intake/columns': 'signed-in',
  'GET /intake/template.csv': 'signed-in',
  'GET /admin/users': ADMIN,
  'POST /admin/users': ADMIN,
  'PATCH /admin/users/:id': ADMIN,
  'GET /admin/outbox': ADMIN,
  'POST /batches': OBS_CUR,
  'GET /batches': OBS_CUR,
  'GET /batches/:id': OBS_CUR,
  'POST /batches/:id/mapping': OBS_CUR,
  'GET /batches/:id/rows': OBS_CUR,
  'GET /batches/:id/errors.csv': OBS_CUR,
  'GET /batches/:id/raw': OBS_CUR,
  'GET /batches/:id/measurements': OBS_CUR,
  'GET /measurements/:id/history': OBS_CUR,
  'GET /review/queue': CUR,
  'PATCH /measurements/:id': CUR,
  'POST /measurements/approve': CUR,
  'POST /measurements/reject': CUR,
  'POST /measurements/:id/resolve': CUR,
  'POST /audit/:id/revert': CUR,
  'POST /batches/:id/approve': CUR,
  'POST /batches/:id/reject': CUR,
  'POST /tomography/runs': CUR,
  'GET /tomography/runs': 'signed-in',
  'GET /tomography/runs/:id': 'signed-in',
  'POST /tomography/runs/:id/cancel': CUR,
  'GET /tomography/runs/:id/cells': 'signed-in',
  'GET /sightlines': 'signed-in',
  'POST /releases': CUR,
  'GET /releases': 'signed-in',
  'GET /releases/:tag': 'signed-in',
  'POST /tokens': 'signed-in',
  'GET /tokens': 'signed-in',
  'DELETE /tokens/:id': 'signed-in',
  'GET /sky': 'signed-in',
  'GET /masks': 'signed-in',
  'GET /standard-stars': 'signed-in',
  'POST /standard-stars': CUR,
  'GET /batches/:id/calibration': OBS_CUR,
  'POST /batches/:id/calibration/apply': CUR,
  'POST /batches/:id/calibration/revert': CUR,
  'GET /instruments/:code/calibrations': 'signed-in',
  'GET /plausibility': 'signed-in',
  'PATCH /plausibility': CUR,
  'GET /batches/:id/decision': OBS_CUR,
  'POST /batches/:id/replaces': OBS_CUR,
};

let t: TestApp;
const ids: Record<string, number> = {};
beforeAll(async () => {
  t = await makeTestApp();
  ids.batch = (await t.db('batches').orderBy('id').first()).id; // uploaded by the demo observer
  ids.measurement = (await t.db('measurements').where({ batch_id: ids.batch }).first()).id;
  ids.star = (await t.db('stars').first()).id;
  ids.user = (await t.db('users').where({ email: 'modeler@kestrel.example' }).first()).id;
  ids.audit = (await t.db('audit_log').first()).id;
});
afterAll(async () => t.close());

const concrete = (route: string) => {
  const [method, path] = route.split(' ');
  const id = path.startsWith('/batches') ? ids.batch : path.startsWith('/measurements') ? ids.measurement : path.startsWith('/stars') ? ids.star : path.startsWith('/admin/users') ? ids.user : path.startsWith('/tomography') ? 1 : ids.audit;
  return { method: method.toLowerCase() as 'get' | 'post' | 'patch' | 'delete', path: `/api/v1${path.replace(':id', String(id))}` };
};

describe('role matrix over every route', () => {
  it('lists every route of the app', () => {
    const routes = listRoutes(t.app);
    expect(routes.filter((r) => !(r in MATRIX))).toEqual([]);
    expect(Object.keys(MATRIX).filter((r) => !routes.includes(r))).toEqual([]);
  });

  for (const role of ['observer', 'curator', 'modeler', 'admin'] as const) {
    it(`${role}: passes exactly the guards the matrix allows`, async () => {
      const agent = await signedIn(t.app, role);
      const wrong: string[] = [];
      for (const [route, who] of Object.entries(MATRIX)) {
        if (route === 'POST /auth/logout') continue; // would end this agent's session
        const { method, path } = concrete(route);
        // a body that fails validation after the guard, so allowed calls change nothing
        const res = await agent[method](path).send({ bogus: true });
        const allowed = who === 'open' || who === 'signed-in' || role === 'admin' || (who as string[]).includes(role);
        if (allowed ? res.status === 401 || res.status === 403 : res.status !== 403) wrong.push(`${route} → ${res.status}`);
      }
      expect(wrong).toEqual([]);
    });
  }

  it('without a session every guarded route answers 401', async () => {
    const wrong: string[] = [];
    for (const [route, who] of Object.entries(MATRIX)) {
      if (who === 'open') continue;
      const { method, path } = concrete(route);
      const res = await request(t.app)[method](path).send({ bogus: true });
      if (res.status !== 401) wrong.push(`${route} → ${res.status}`);
    }
    expect(wrong).toEqual([]);
  });
});
