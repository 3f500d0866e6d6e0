import express from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorMiddleware } from '../../server/errors.js';
import { expectedText, mountRoutes, reply, route } from '../../server/lib/route.js';
import { pageQuery } from '../../server/lib/query.js';
import { buildDocument, buildOpenApiDocument, namingMix, openApiPath } from '../../server/openapi/document.js';
import { allRoutes } from '../../server/openapi/registry.js';
import { reviewRoutes } from '../../server/review/routes.js';
import { schema } from '../../server/lib/validate.js';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { listRoutes } from '../helpers/routes.js';

type Json = any; // answers and the document are checked field by field

// ---------------------------------------------------------------------------------------------
// The mount function on a small app of its own: what a handler receives and what a client sees

const seen: Json[] = [];
function tinyApp(user?: { id: number; email: string; name: string; role: 'observer' | 'curator' | 'modeler' | 'admin' }) {
  const app = express();
  app.use(express.json());
  app.use((req, res, next) => {
    if (user) req.user = user;
    if (req.get('x-test-token')) res.locals.apiTokenId = 1; // as server/tokens/middleware.ts marks a token's request
    next();
  });
  const r = express.Router();
  mountRoutes(r, [
    route<{ tag: string }, { id: number }, { limit: number; offset: number; format: string; flag?: boolean }>({
      method: 'get', path: '/things/:id', tag: 'Test', who: 'signed-in', summary: 'one thing',
      params: { id: { description: 'thing id (positive integer)', schema: { type: 'integer', minimum: 1 } } },
      query: {
        ...pageQuery(50, 500, 'things'),
        format: { description: 'json or csv', schema: { type: 'string', enum: ['json', 'csv'], default: 'json' }, lowercase: true },
        flag: { description: 'a switch', schema: { type: 'boolean' } },
      },
      responses: { 200: { description: 'the thing' } },
      handler: ({ params, query }, deps) => {
        seen.push({ params, query, deps });
        return { id: params.id, limit: query.limit };
      },
    }),
    route({
      method: 'post', path: '/things', tag: 'Test', who: ['curator'], summary: 'make a thing',
      body: { schema: 'api/token-create', required: true },
      responses: { 201: { description: 'made' } },
      handler: ({ body }) => ({ made: body.name }),
    }),
    route({
      method: 'get', path: '/private', tag: 'Test', who: 'signed-in', summary: 'not for tokens', bearer: false,
      responses: { 200: { description: 'ok' } },
      handler: () => ({ ok: true }),
    }),
    route({
      method: 'delete', path: '/things/:id', tag: 'Test', who: ['curator'], summary: 'remove a thing',
      params: { id: { description: 'thing id (positive integer)', schema: { type: 'integer', minimum: 1 } } },
      responses: { 204: { description: 'gone' } },
      handler: () => reply(204),
    }),
  ], { tag: 'deps reach the handler' });
  app.use(r);
  app.use(errorMiddleware);
  return app;
}

const curator = { id: 7, email: 'c@kestrel.example', name: 'C', role: 'curator' as const };

describe('mountRoutes', () => {
  it('coerces path and query text to the schema types, fills defaults and hands the deps to the handler', async () => {
    seen.length = 0;
    const res = await request(tinyApp(curator)).get('/things/12?offset=5&format=CSV&flag=true&unknown=kept-out');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ id: 12, limit: 50 });
    // 12 and 5 arrive as numbers, limit takes its default, CSV is compared without case
    expect(seen[0].params).toEqual({ id: 12 });
    expect(seen[0].query).toEqual({ limit: 50, offset: 5, format: 'csv', flag: true });
    expect(seen[0].deps).toEqual({ tag: 'deps reach the handler' });
  });

  it('a query value that is not the schema type is a 400 naming the parameter and what was expected', async () => {
    const res = await request(tinyApp(curator)).get('/things/1?limit=abc');
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('bad_request');
    expect(res.body.error.message).toBe('The query parameter limit must be an integer, at least 1 and at most 500; got "abc".');
    expect(res.body.error.details.fields).toEqual([{ field: 'limit', message: 'expected an integer, at least 1 and at most 500' }]);
    // out of range, and a number too large to be finite (ajv coerces "1e400" to Infinity)
    for (const [q, field] of [['limit=501', 'limit'], ['offset=-1', 'offset'], ['offset=1e400', 'offset'], ['format=xml', 'format'], ['flag=perhaps', 'flag']]) {
      const r = await request(tinyApp(curator)).get(`/things/1?${q}`);
      expect(r.status, q).toBe(400);
      expect(r.body.error.details.fields[0].field, q).toBe(field);
    }
  });

  it('an empty query parameter counts as absent', async () => {
    seen.length = 0;
    expect((await request(tinyApp(curator)).get('/things/3?limit=')).status).toBe(200);
    expect(seen[0].query.limit).toBe(50);
  });

  it('a repeated query parameter is a 400 naming it (never a silent pick of one value)', async () => {
    const res = await request(tinyApp(curator)).get('/things/1?limit=5&limit=6');
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields).toEqual([{ field: 'limit', message: 'expected a single value' }]);
    expect(res.body.error.message).toMatch(/limit was given 2 times/);
  });

  it('a bad path parameter is a 400 naming it', async () => {
    for (const id of ['abc', '0', '1.5', '-3']) {
      const res = await request(tinyApp(curator)).get(`/things/${id}`);
      expect(res.status, id).toBe(400);
      expect(res.body.error.details.fields, id).toEqual([{ field: 'id', message: 'expected a positive integer' }]);
    }
  });

  it('the guard runs first: 401 without a person, 403 for another role, even with a bad body', async () => {
    expect((await request(tinyApp()).post('/things').send({})).status).toBe(401);
    const observer = { ...curator, role: 'observer' as const };
    const res = await request(tinyApp(observer)).post('/things').send({});
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('forbidden');
  });

  it('a body is checked against its schema by $id with the existing 400 shape; the first success status is used', async () => {
    const bad = await request(tinyApp(curator)).post('/things').send({ name: 5 });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.fields[0].field).toBe('name');
    const missing = await request(tinyApp(curator)).post('/things').send({});
    expect(missing.body.error.details.fields).toContainEqual({ field: 'name', message: 'name is required' });
    const ok = await request(tinyApp(curator)).post('/things').send({ name: 'notebook' });
    expect(ok.status).toBe(201);
    expect(ok.body).toEqual({ made: 'notebook' });
    const gone = await request(tinyApp(curator)).delete('/things/4');
    expect(gone.status).toBe(204);
    expect(gone.text).toBe('');
  });

  it('a declaration can refuse personal API tokens; GET routes take them by default', async () => {
    const refused = await request(tinyApp(curator)).get('/private').set('x-test-token', '1');
    expect(refused.status).toBe(403);
    expect(refused.body.error.code).toBe('token_not_accepted');
    expect((await request(tinyApp(curator)).get('/private')).status).toBe(200);
    expect((await request(tinyApp(curator)).get('/things/1').set('x-test-token', '1')).status).toBe(200);
  });

  it('states expectations in words', () => {
    expect(expectedText({ type: 'integer', minimum: 1 })).toBe('a positive integer');
    expect(expectedText({ type: 'number', exclusiveMinimum: 0, maximum: 30 })).toBe('a number, greater than 0 and at most 30');
    expect(expectedText({ type: 'string', enum: ['iau', 'cosmo'] })).toBe('one of iau, cosmo');
    expect(expectedText({ type: 'string', pattern: '^[0-9]{1,16}$' })).toBe('text matching ^[0-9]{1,16}$');
  });
});

describe('a declaration with two success statuses', () => {
  it('a large batch decision answers 202 with its progress, a small one 200; both as the schemas say', async () => {
    const answers: Json[] = [
      { id: 4, state: 'awaiting_review', note: null, counts: null, settling: { decision: 'approved', done: 0, total: 30000 } },
      { id: 4, state: 'approved', note: null, counts: { changed: 12, conflicts: 0, ambiguous: 0 } },
    ];
    const app = express();
    app.use(express.json());
    app.use((req, _res, next) => {
      req.user = curator;
      next();
    });
    const r = express.Router();
    // a stand-in review service: only decide() is reached by this route
    mountRoutes(r, reviewRoutes, { db: undefined as never, measurements: undefined as never, review: { decide: async () => answers.shift() } as never });
    app.use(r);
    app.use(errorMiddleware);
    const started = await request(app).post('/batches/4/approve').send({});
    expect(started.status).toBe(202);
    expect(schema('responses/batch-decision-started')(started.body)).toBe(true);
    const done = await request(app).post('/batches/4/approve').send({});
    expect(done.status).toBe(200);
    expect(schema('responses/batch-decision')(done.body)).toBe(true);
    expect(schema('responses/batch-decision-started')(done.body)).toBe(false);
  });
});

// ---------------------------------------------------------------------------------------------
// The real app: the document is generated from exactly the routes that are mounted

let t: TestApp;
let doc: Json;
beforeAll(async () => {
  t = await makeTestApp({}, { tomography: true });
  doc = (await request(t.app).get('/api/v1/openapi.json')).body;
}, 60_000);
afterAll(async () => t?.close());

const documented = (d: Json) => Object.entries<Json>(d.paths).flatMap(([p, item]) => Object.keys(item).map((m) => `${m.toUpperCase()} ${p}`)).sort();

describe('the generated document and the mounted routes', () => {
  it('lists exactly the mounted routes: none undocumented, none documented but missing', () => {
    const mounted = listRoutes(t.app).map((r) => r.replace(/:(\w+)/g, '{$1}')).sort();
    expect(mounted.length).toBeGreaterThan(40);
    expect(new Set(mounted).size).toBe(mounted.length); // each route mounted once
    expect(documented(doc)).toEqual(mounted);
    // and the document is built from the same declarations the app mounts
    expect(allRoutes().map((r) => `${r.method.toUpperCase()} ${openApiPath(r.path)}`).sort()).toEqual(mounted);
  });

  it('the check fails for a declaration that is not mounted', () => {
    const extra = route({ method: 'get', path: '/not-mounted', tag: 'Service', who: 'anyone', summary: 'x', responses: { 200: { description: 'x' } }, handler: () => ({}) });
    const withExtra = buildDocument([...allRoutes(), extra]);
    const mounted = listRoutes(t.app).map((r) => r.replace(/:(\w+)/g, '{$1}')).sort();
    expect(documented(withExtra)).not.toEqual(mounted);
    expect(documented(withExtra).filter((k) => !mounted.includes(k))).toEqual(['GET /not-mounted']);
  });

  it('buildOpenApiDocument (used by npm run gen) is the document the server serves', () => {
    expect(JSON.stringify(buildOpenApiDocument())).toBe(JSON.stringify(doc));
  });

  it('a coerced query schema refuses ?limit=abc with a 400 naming limit, on a real route', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const res = await modeler.get('/api/v1/stars?limit=abc');
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields[0]).toEqual({ field: 'limit', message: 'expected an integer, at least 1 and at most 1000' });
    expect(res.body.error.message).toMatch(/limit/);
    // the document states the same rule
    const limit = doc.paths['/stars'].get.parameters.find((p: Json) => p.name === 'limit');
    expect(limit.schema).toMatchObject({ type: 'integer', minimum: 1, maximum: 1000, default: 50 });
    expect((await modeler.get('/api/v1/stars?limit=7')).body.stars.length).toBeLessThanOrEqual(7);
  });

  it('says what the routes do where they differ: run=0 on /sightlines and /sky, abc or 0 on a run’s cells', async () => {
    const modeler = await signedIn(t.app, 'modeler');
    const param = (p: string, name: string) => doc.paths[p].get.parameters.find((x: Json) => x.name === name);
    // /sightlines: run=0 is the latest run, as the document says
    expect(param('/sightlines', 'run').schema.minimum).toBe(0);
    expect(param('/sightlines', 'run').description).toMatch(/0 or absent: the latest finished run/);
    const latest = await modeler.get('/api/v1/sightlines?run=0&ra=83&dec=22&radius=3');
    const none = await modeler.get('/api/v1/sightlines?ra=83&dec=22&radius=3');
    expect(latest.status).toBe(200);
    expect(latest.body.run.id).toBe(none.body.run.id);
    // /sky: run=0 is refused
    expect(param('/sky', 'run').schema.minimum).toBe(1);
    const sky = await modeler.get('/api/v1/sky?run=0');
    expect(sky.status).toBe(400);
    expect(sky.body.error.details.fields[0].field).toBe('run');
    // a run's cells: abc and 0 are a 400 naming id, documented as such
    const cells = doc.paths['/tomography/runs/{id}/cells'].get;
    expect(cells.responses['400']).toBeDefined();
    expect(cells.description).not.toMatch(/latest finished run instead/);
    for (const id of ['abc', '0']) {
      const res = await modeler.get(`/api/v1/tomography/runs/${id}/cells`);
      expect(res.status, id).toBe(400);
      expect(res.body.error.details.fields[0].field).toBe('id');
    }
  });

  it('an answer that mixes camelCase and snake_case field names says so', () => {
    // the review table: page fields in camelCase beside measurement columns such as star_source_id
    expect(namingMix('responses/batch-measurements')).toMatch(/mix camelCase \(e\.g\. `[a-z]+[A-Z]\w*`.*\) and snake_case \(e\.g\. `[a-z]+_\w+`/);
    expect(doc.paths['/batches/{id}/measurements'].get.responses['200'].description).toMatch(/mix camelCase/);
    expect(doc.paths['/batches/{id}/measurements'].get.responses['200']['x-field-naming']).toBe('mixed');
    // one naming only: no note
    expect(namingMix('responses/health')).toBeNull();
    expect(doc.paths['/health'].get.responses['200']['x-field-naming']).toBeUndefined();
    expect(doc.info.description).toMatch(/Every field added from now on is camelCase/);
  });
});
