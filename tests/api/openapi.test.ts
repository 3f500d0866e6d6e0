import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { Ajv2020 } from 'ajv/dist/2020.js';
import type { ValidateFunction } from 'ajv';
import addFormatsModule from 'ajv-formats';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';
import { ang2pixNest } from '../../server/science/healpix.js';
import { INDEX_NSIDE } from '../../server/measurements/derive.js';
import { makeTestApp, signedIn, DEMO, type TestApp } from '../helpers/app.js';
import { listRoutes } from '../helpers/routes.js';

type Json = any; // the document and live bodies are checked field by field below
type Method = 'get' | 'post' | 'patch' | 'delete';
const METHODS = ['get', 'put', 'post', 'delete', 'options', 'head', 'patch', 'trace'];
const ROLE_NAMES = ['observer', 'curator', 'modeler', 'admin'] as const;
const addFormats = addFormatsModule as unknown as (ajv: Ajv2020) => Ajv2020;

// ---------------------------------------------------------------------------------------------
// Pure checks (each also run against a broken input below, so they are known to fail)

const escapePointer = (s: string) => s.replace(/~/g, '~0').replace(/\//g, '~1');
const unescapePointer = (s: string) => s.replace(/~1/g, '/').replace(/~0/g, '~');

/** The node a local "#/a/b" reference points at, or undefined. */
function resolvePointer(root: Json, ref: string): Json {
  if (!ref.startsWith('#')) return undefined;
  let cur = root;
  for (const part of ref.slice(1).split('/').slice(1).map(unescapePointer)) {
    if (cur === null || typeof cur !== 'object' || !(part in cur)) return undefined;
    cur = cur[part];
  }
  return cur;
}

/** OpenAPI 3.1 structure, checked by hand: what a reader of the document relies on. */
function structuralProblems(d: Json): string[] {
  const p: string[] = [];
  if (typeof d.openapi !== 'string' || !/^3\.1\.\d+$/.test(d.openapi)) p.push(`openapi is ${JSON.stringify(d.openapi)}, expected "3.1.x"`);
  if (!d.info || typeof d.info.title !== 'string' || typeof d.info.version !== 'string') p.push('info needs a title and a version');
  if (!d.paths || typeof d.paths !== 'object' || Object.keys(d.paths).length === 0) p.push('paths is missing or empty');
  const schemes = Object.keys(d.components?.securitySchemes ?? {});
  const tags = new Set((d.tags ?? []).map((x: Json) => x.name));
  const operationIds = new Set<string>();
  for (const [section, entries] of Object.entries(d.components ?? {})) {
    for (const name of Object.keys(entries as object)) if (!/^[a-zA-Z0-9._-]+$/.test(name)) p.push(`components.${section}.${name}: not a valid component name`);
  }
  for (const [route, item] of Object.entries<Json>(d.paths ?? {})) {
    if (!route.startsWith('/')) p.push(`${route}: a path must start with /`);
    const templated = [...route.matchAll(/\{([^}]+)\}/g)].map((m) => m[1]);
    for (const [key, op] of Object.entries<Json>(item)) {
      if (!METHODS.includes(key)) {
        if (!['summary', 'description', 'parameters', 'servers'].includes(key)) p.push(`${route}: unknown key ${key}`);
        continue;
      }
      const where = `${key.toUpperCase()} ${route}`;
      const responses = Object.entries<Json>(op.responses ?? {});
      if (responses.length === 0) p.push(`${where}: no responses`);
      for (const [status, raw] of responses) {
        if (!/^([1-5]\d\d|[1-5]XX|default)$/.test(status)) p.push(`${where}: response key ${status} is not a status`);
        const r = raw.$ref ? resolvePointer(d, raw.$ref) : raw;
        if (!r || typeof r.description !== 'string') p.push(`${where} ${status}: a response needs a description`);
        for (const [type, media] of Object.entries<Json>(r?.content ?? {})) if (!media.schema) p.push(`${where} ${status} ${type}: no schema`);
      }
      if (typeof op.operationId !== 'string') p.push(`${where}: no operationId`);
      else if (operationIds.has(op.operationId)) p.push(`${where}: operationId ${op.operationId} is used twice`);
      else operationIds.add(op.operationId);
      const params: Json[] = [...(item.parameters ?? []), ...(op.parameters ?? [])];
      const seen = new Set<string>();
      for (const prm of params) {
        const id = `${prm.in} ${prm.name}`;
        if (seen.has(id)) p.push(`${where}: parameter ${id} is listed twice`);
        seen.add(id);
        if (!['query', 'header', 'path', 'cookie'].includes(prm.in)) p.push(`${where}: parameter ${prm.name} has in=${prm.in}`);
        if (!prm.schema && !prm.content) p.push(`${where}: parameter ${prm.name} has no schema`);
        if (prm.in === 'path' && prm.required !== true) p.push(`${where}: path parameter ${prm.name} must be required`);
      }
      const declared = params.filter((x) => x.in === 'path').map((x) => x.name);
      for (const n of templated) if (!declared.includes(n)) p.push(`${where}: {${n}} is not declared as a path parameter`);
      for (const n of declared) if (!templated.includes(n)) p.push(`${where}: path parameter ${n} is not in the path`);
      for (const req of op.security ?? d.security ?? []) for (const s of Object.keys(req)) if (!schemes.includes(s)) p.push(`${where}: security scheme ${s} is not declared`);
      for (const tag of op.tags ?? []) if (!tags.has(tag)) p.push(`${where}: tag ${tag} is not declared`);
      if (op.requestBody && !Object.keys(op.requestBody.content ?? {}).length) p.push(`${where}: a request body needs content`);
    }
  }
  const walk = (node: Json, at: string) => {
    if (Array.isArray(node)) node.forEach((n, i) => walk(n, `${at}/${i}`));
    else if (node && typeof node === 'object') {
      for (const [k, v] of Object.entries(node)) {
        if (k === '$ref' && typeof v === 'string') {
          if (resolvePointer(d, v) === undefined) p.push(`${at}: $ref ${v} does not resolve`);
        } else walk(v, `${at}/${escapePointer(k)}`);
      }
    }
  };
  walk(d, '#');
  return p;
}

const isNumeric = (s: Json) => {
  const types = Array.isArray(s.type) ? s.type : [s.type];
  return types.includes('number') || types.includes('integer') || typeof s.const === 'number' || (Array.isArray(s.enum) && s.enum.length > 0 && s.enum.every((v: unknown) => typeof v === 'number'));
};

/** Locations of numeric schemas without a description (units or meaning), anywhere in a schema. */
function undescribedNumbers(schema: Json, at: string): string[] {
  const out: string[] = [];
  const walk = (node: Json, where: string) => {
    if (Array.isArray(node)) return node.forEach((n, i) => walk(n, `${where}/${i}`));
    if (!node || typeof node !== 'object') return;
    if (isNumeric(node) && !(typeof node.description === 'string' && node.description.trim())) out.push(where);
    for (const [k, v] of Object.entries(node)) if (k !== 'enum' && k !== 'const' && k !== 'default') walk(v, `${where}/${k}`);
  };
  walk(schema, at);
  return out;
}

const ANGLE_NAME = /^theta(_gal)?_?deg$/i;
/** Polarization angles (not their errors) in a schema, and those whose description lacks the field/emission relation. */
function angleNotes(schema: Json, at: string): { checked: string[]; missing: string[] } {
  const checked: string[] = [];
  const missing: string[] = [];
  const walk = (node: Json, where: string) => {
    if (Array.isArray(node)) return node.forEach((n, i) => walk(n, `${where}/${i}`));
    if (!node || typeof node !== 'object') return;
    for (const [name, prop] of Object.entries<Json>(node.properties ?? {})) {
      if (!ANGLE_NAME.test(name) || prop.$ref) continue; // a $ref is checked where it points
      const d = String(prop.description ?? '');
      checked.push(`${where}/properties/${name}`);
      if (!(/parallel to the plane-of-sky magnetic field/.test(d) && /perpendicular/.test(d) && /\+ 90°/.test(d))) missing.push(`${where}/properties/${name}`);
    }
    for (const [k, v] of Object.entries(node)) walk(v, `${where}/${k}`);
  };
  walk(schema, at);
  return { checked, missing };
}

const responseSchemaFiles = () => {
  const dir = path.resolve('schemas/responses');
  return fs.readdirSync(dir).filter((f) => f.endsWith('.json')).map((f) => ({ file: `schemas/responses/${f}`, schema: JSON.parse(fs.readFileSync(path.join(dir, f), 'utf8')) }));
};

// ---------------------------------------------------------------------------------------------

let t: TestApp;
let doc: Json;
let ajv: Ajv2020;

beforeAll(async () => {
  t = await makeTestApp({}, { tomography: true });
  const res = await request(t.app).get('/api/v1/openapi.json');
  expect(res.status).toBe(200);
  doc = res.body;
  ajv = new Ajv2020({ strict: false, allErrors: true });
  addFormats(ajv);
  ajv.addSchema(doc, 'openapi.json');
}, 60_000);
afterAll(async () => t?.close());

const operations = (d: Json) =>
  Object.entries<Json>(d.paths).flatMap(([route, item]) => Object.entries<Json>(item).filter(([m]) => METHODS.includes(m)).map(([method, op]) => ({ route, method: method as Method, op, key: `${method.toUpperCase()} ${route}` })));

describe('the OpenAPI document', () => {
  it('is OpenAPI 3.1 in structure and every $ref resolves', () => {
    expect(structuralProblems(doc)).toEqual([]);
    expect(doc.jsonSchemaDialect).toBe('https://spec.openapis.org/oas/3.1/dialect/base');
    expect(Object.keys(doc.components.securitySchemes).sort()).toEqual(['bearerToken', 'session']);
    expect(doc.components.securitySchemes.session).toMatchObject({ type: 'apiKey', in: 'cookie', name: 'starveil.sid' });
  });

  it('the structural check reports a dangling $ref, an undeclared path parameter and a wrong version', () => {
    const broken = structuredClone(doc);
    broken.openapi = '3.0.3';
    delete broken.components.schemas['responses.batch'];
    delete broken.paths['/stars/{id}'].get.parameters;
    const problems = structuralProblems(broken);
    expect(problems).toContain('openapi is "3.0.3", expected "3.1.x"');
    expect(problems).toContain('GET /stars/{id}: {id} is not declared as a path parameter');
    expect(problems.some((x) => x.includes('$ref #/components/schemas/responses.batch does not resolve'))).toBe(true);
  });

  it('every component schema compiles as JSON Schema 2020-12', () => {
    const bad: string[] = [];
    for (const name of Object.keys(doc.components.schemas)) {
      try {
        ajv.getSchema(`openapi.json#/components/schemas/${name}`) ?? ajv.compile({ $ref: `openapi.json#/components/schemas/${name}` });
      } catch (e) {
        bad.push(`${name}: ${(e as Error).message}`);
      }
    }
    expect(bad).toEqual([]);
  });

  it('request bodies are the schemas the routes validate with (schemas/api/*.json), not copies that could drift', () => {
    const dir = path.resolve('schemas/api');
    const files = new Map(fs.readdirSync(dir).map((f) => [JSON.parse(fs.readFileSync(path.join(dir, f), 'utf8')).$id as string, JSON.parse(fs.readFileSync(path.join(dir, f), 'utf8'))]));
    const wrong: string[] = [];
    let referenced = 0;
    for (const { key, op } of operations(doc)) {
      const ref = op.requestBody?.content?.['application/json']?.schema?.$ref as string | undefined;
      if (!ref) continue;
      const name = ref.replace('#/components/schemas/', '');
      const id = name.replace(/\./g, '/');
      const file = files.get(id);
      if (!file) {
        wrong.push(`${key}: ${ref} is not a schema in schemas/api/`);
        continue;
      }
      const { $id: _id, ...rest } = file;
      if (JSON.stringify(doc.components.schemas[name]) !== JSON.stringify(rest)) wrong.push(`${key}: components.schemas.${name} differs from schemas/api/${id.slice(4)}.json`);
      referenced++;
    }
    expect(wrong).toEqual([]);
    expect(referenced).toBeGreaterThanOrEqual(15);
  });

  it('documents every route of the Express router, with the same method and path, and no other', () => {
    const live = listRoutes(t.app).map((r) => r.replace(/:(\w+)/g, '{$1}'));
    const documented = operations(doc).map((o) => o.key);
    expect(live.filter((r) => !documented.includes(r))).toEqual([]);
    expect(documented.filter((r) => !live.includes(r))).toEqual([]);
    expect(live.length).toBeGreaterThan(40);
  });

  it('x-roles names exactly the roles that pass each guard (probed as every role and without a session)', async () => {
    const agents = Object.fromEntries(await Promise.all(ROLE_NAMES.map(async (r) => [r, await signedIn(t.app, r)] as const)));
    const wrong: string[] = [];
    for (const { route, method, op, key } of operations(doc)) {
      const roles: string[] = op['x-roles'];
      if (!Array.isArray(roles) || roles.length === 0) {
        wrong.push(`${key}: no x-roles`);
        continue;
      }
      if (!String(op.description).startsWith('**Who may call:**')) wrong.push(`${key}: the description does not say who may call`);
      // ids that do not exist, and a body that fails validation: an allowed call changes nothing
      const url = `/api/v1${route.replace('{tag}', 'no-such-release').replace(/\{\w+\}/g, '999999')}`;
      const open = roles.includes('anyone');
      const anon = await request(t.app)[method](url).send({ bogus: true });
      if (open ? anon.status === 401 || anon.status === 403 : anon.status !== 401) wrong.push(`${key} without a session → ${anon.status}`);
      if (key === 'POST /auth/logout') continue; // would end the agents' sessions
      for (const role of ROLE_NAMES) {
        const res = await agents[role][method](url).send({ bogus: true });
        const allowed = open || roles.includes(role);
        if (allowed ? res.status === 401 || res.status === 403 : res.status !== 403) wrong.push(`${key} as ${role} → ${res.status} (x-roles: ${roles.join(', ')})`);
      }
      if (!open && !roles.includes('admin')) wrong.push(`${key}: admin passes every guard but is not in x-roles`);
    }
    expect(wrong).toEqual([]);
  });

  it('every numeric field of every response (and request) schema says its unit or convention', () => {
    const files = responseSchemaFiles();
    expect(files.length).toBeGreaterThan(20);
    expect(files.flatMap(({ file, schema }) => undescribedNumbers(schema, file))).toEqual([]);
    // the schemas as the document carries them, request bodies included
    const embedded = Object.entries<Json>(doc.components.schemas);
    expect(embedded.some(([n]) => n.startsWith('api.'))).toBe(true);
    expect(embedded.flatMap(([n, s]) => undescribedNumbers(s, n))).toEqual([]);
  });

  it('the unit check lists a number without a description, in properties, items and oneOf', () => {
    const sample = {
      type: 'object',
      properties: {
        ok: { type: 'number', description: 'pc' },
        bare: { type: ['number', 'null'] },
        list: { type: 'array', description: 'x', items: { type: 'integer' } },
        either: { oneOf: [{ type: 'null' }, { type: 'number' }] },
        word: { type: 'string' },
      },
    };
    expect(undescribedNumbers(sample, 's')).toEqual(['s/properties/bare', 's/properties/list/items', 's/properties/either/oneOf/1']);
  });

  it('every polarization angle of a response says field angle = emission angle + 90°', () => {
    const found = responseSchemaFiles().map(({ file, schema }) => angleNotes(schema, file));
    expect(found.flatMap((f) => f.missing)).toEqual([]);
    // the angles modelers read: a measurement's (both frames), a star's combined value, a layer's
    expect(found.flatMap((f) => f.checked).sort()).toEqual([
      'schemas/responses/calibration-standard-star.json/properties/thetaDeg',
      'schemas/responses/sightline.json/$defs/layer/properties/thetaDeg',
      'schemas/responses/star-detail.json/properties/combined/items/properties/thetaDeg',
      'schemas/responses/stored-measurement.json/properties/theta_deg',
      'schemas/responses/stored-measurement.json/properties/theta_gal_deg',
    ]);
    // the check can fail
    expect(angleNotes({ properties: { thetaDeg: { type: 'number', description: 'deg, IAU' } } }, 's').missing).toEqual(['s/properties/thetaDeg']);
    expect(doc.info.description).toMatch(/parallel to the plane-of-sky magnetic field.*perpendicular.*\+ 90°/s);
    expect(doc.paths['/sightlines'].get.description).toMatch(/perpendicular.*add 90°/s);
  });

  it('every parameter has a description, and numeric ones a range or a set of values', () => {
    const wrong: string[] = [];
    for (const { key, op } of operations(doc)) {
      for (const prm of op.parameters ?? []) {
        if (!(typeof prm.description === 'string' && prm.description.length > 5)) wrong.push(`${key} ${prm.name}: no description`);
        const s = prm.schema;
        if (isNumeric(s) && !['minimum', 'maximum', 'exclusiveMinimum', 'exclusiveMaximum', 'enum'].some((k) => k in s)) wrong.push(`${key} ${prm.name}: numeric without a range`);
      }
    }
    expect(wrong).toEqual([]);
  });
});

// ---------------------------------------------------------------------------------------------
// Drift: live answers against the documented response of their route and status

const called = new Map<string, Set<number>>();
const validators = new Map<string, ValidateFunction>();

/** Problems with one live answer: its status, content type and (JSON) body against the document. */
function documentProblems(res: request.Response, method: Method, route: string): string[] {
  const oaPath = route.replace(/:(\w+)/g, '{$1}');
  const key = `${method.toUpperCase()} ${oaPath}`;
  const op = doc.paths[oaPath]?.[method];
  if (!op) return [`${key}: not in the document`];
  const raw = op.responses[String(res.status)];
  if (!raw) return [`${key} → ${res.status}: status not documented (${res.text?.slice(0, 200)})`];
  if (!called.has(key)) called.set(key, new Set());
  called.get(key)!.add(res.status);
  const r = raw.$ref ? resolvePointer(doc, raw.$ref) : raw;
  if (res.status === 204) return r.content ? [`${key} → 204: documented with a body`] : [];
  const type = String(res.headers['content-type'] ?? '').split(';')[0].trim();
  if (!r.content?.[type]) return [`${key} → ${res.status}: content type ${type} is not documented (${Object.keys(r.content ?? {}).join(', ')})`];
  if (type !== 'application/json') return [];
  const pointer = raw.$ref ? `${raw.$ref.slice(1)}/content/application~1json/schema` : `/paths/${escapePointer(oaPath)}/${method}/responses/${res.status}/content/application~1json/schema`;
  let validate = validators.get(pointer);
  if (!validate) {
    validate = ajv.compile({ $ref: `openapi.json#${pointer}` });
    validators.set(pointer, validate);
  }
  if (!validate(res.body)) {
    const why = (validate.errors ?? []).slice(0, 8).map((e) => `${e.instancePath || '(body)'} ${e.message}${e.keyword === 'additionalProperties' ? ` (${(e.params as { additionalProperty: string }).additionalProperty})` : ''}`);
    return [`${key} → ${res.status}: ${why.join('; ')}`];
  }
  return [];
}

type Agent = ReturnType<typeof request.agent> | ReturnType<typeof request>;
let problems: string[] = [];

/** Call, check against the document, and check the status the scenario expects. */
async function hit(agent: Agent, method: Method, url: string, route: string, status: number | number[], body?: unknown, headers: Record<string, string> = {}) {
  let req = (agent as any)[method](`/api/v1${url}`);
  for (const [k, v] of Object.entries(headers)) req = req.set(k, v);
  if (body !== undefined) req = req.send(body);
  const res: request.Response = await req.buffer(true).parse(parseAny);
  problems.push(...documentProblems(res, method, route));
  const want = Array.isArray(status) ? status : [status];
  if (!want.includes(res.status)) problems.push(`${method.toUpperCase()} ${url}: expected ${want.join(' or ')}, got ${res.status} ${res.text?.slice(0, 300)}`);
  return res;
}

/** Keep the text of every answer (CSV, FITS as latin1) and parse JSON ones. */
function parseAny(res: Json, cb: (err: Error | null, body: unknown) => void) {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => {
    const buf = Buffer.concat(chunks);
    res.text = buf.toString(String(res.headers['content-type'] ?? '').includes('fits') ? 'latin1' : 'utf8');
    try {
      cb(null, String(res.headers['content-type'] ?? '').startsWith('application/json') && res.text ? JSON.parse(res.text) : buf);
    } catch (e) {
      cb(e as Error, undefined);
    }
  });
}

const HEADER = 'name,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';

describe('live answers match the document (drift)', () => {
  let admin: Agent, curator: Agent, observer: Agent, modeler: Agent;
  beforeAll(async () => {
    [admin, curator, observer, modeler] = await Promise.all((['admin', 'curator', 'observer', 'modeler'] as const).map((r) => signedIn(t.app, r)));
  });
  const anon = () => request(t.app);
  const clean = () => {
    const out = problems;
    problems = [];
    return out;
  };

  it('service, sign-in, account and admin', async () => {
    await hit(anon(), 'get', '/health', '/health', 200);
    await hit(anon(), 'get', '/openapi.json', '/openapi.json', 200);
    await hit(anon(), 'post', '/auth/login', '/auth/login', 200, { email: DEMO.curator, password: DEMO_PASSWORD });
    await hit(anon(), 'post', '/auth/login', '/auth/login', 401, { email: DEMO.curator, password: 'not-the-password' });
    await hit(anon(), 'post', '/auth/login', '/auth/login', 400, { email: DEMO.curator });
    await hit(anon(), 'get', '/me', '/me', 401);
    for (const a of [curator, modeler]) await hit(a, 'get', '/me', '/me', 200);

    await hit(admin, 'get', '/admin/users', '/admin/users', 200);
    await hit(modeler, 'get', '/admin/users', '/admin/users', 403);
    const email = 'drift-probe@kestrel.example';
    const created = await hit(admin, 'post', '/admin/users', '/admin/users', 201, { email, name: 'Drift Probe', role: 'modeler', password: 'first-probe-password' });
    await hit(admin, 'post', '/admin/users', '/admin/users', 409, { email, name: 'Drift Probe', role: 'modeler', password: 'first-probe-password' });
    await hit(admin, 'post', '/admin/users', '/admin/users', 400, { email, name: 'Drift Probe', role: 'astronomer', password: 'first-probe-password' });
    await hit(admin, 'patch', `/admin/users/${created.body.id}`, '/admin/users/:id', 200, { name: 'Drift Probe II' });
    await hit(admin, 'patch', '/admin/users/999999', '/admin/users/:id', 404, { name: 'Nobody' });

    const probe = request.agent(t.app).set('Origin', t.config.publicUrl); // writes with the cookie carry this site's Origin
    await hit(probe, 'post', '/auth/login', '/auth/login', 200, { email, password: 'first-probe-password' });
    await hit(probe, 'post', '/me/password', '/me/password', 204, { currentPassword: 'first-probe-password', newPassword: 'second-probe-password' });
    await hit(probe, 'post', '/me/password', '/me/password', 400, { currentPassword: 'wrong-password', newPassword: 'third-probe-password' });
    await hit(probe, 'post', '/auth/logout', '/auth/logout', 204);
    await hit(probe, 'get', '/me', '/me', 401);

    await hit(anon(), 'post', '/auth/password-reset/request', '/auth/password-reset/request', 202, { email });
    await t.app.services.mail.idle();
    const mail = await t.db('outbox').where({ to_address: email }).orderBy('id', 'desc').first();
    const token = /reset-password\?token=([A-Za-z0-9_-]+)/.exec(mail.text_body)?.[1];
    expect(token, 'the reset e-mail holds a link').toBeTruthy();
    await hit(anon(), 'post', '/auth/password-reset/confirm', '/auth/password-reset/confirm', 204, { token, newPassword: 'fourth-probe-password' });
    await hit(anon(), 'post', '/auth/password-reset/confirm', '/auth/password-reset/confirm', 400, { token, newPassword: 'fifth-probe-password' });

    const outbox = await hit(admin, 'get', '/admin/outbox?limit=5', '/admin/outbox', 200);
    expect(outbox.body.messages.length).toBeGreaterThan(0);
    await hit(admin, 'get', '/admin/outbox?limit=0', '/admin/outbox', 400);
    expect(clean()).toEqual([]);
  });

  it('catalog', async () => {
    await hit(modeler, 'get', '/overview', '/overview', 200);
    await hit(modeler, 'get', '/instruments', '/instruments', 200);
    await hit(modeler, 'get', '/instruments/KR-HAWK', '/instruments/:code', 200);
    await hit(modeler, 'get', '/instruments/KR-NONE', '/instruments/:code', 404);
    await hit(admin, 'post', '/instruments', '/instruments', 201, { code: 'KR-DOCS', name: 'Documented camera', bands: ['V'] });
    await hit(admin, 'post', '/instruments', '/instruments', 409, { code: 'kr-docs', name: 'Again', bands: ['V'] });
    await hit(admin, 'post', '/instruments', '/instruments', 400, { code: 'bad code!', name: 'x', bands: [] });
    await hit(modeler, 'post', '/instruments', '/instruments', 403, { code: 'KR-NO', name: 'x', bands: ['V'] });
    await hit(admin, 'patch', '/instruments/KR-DOCS', '/instruments/:code', 200, { bands: ['V', 'R'], description: 'now two bands' });
    await hit(admin, 'patch', '/instruments/KR-NONE', '/instruments/:code', 404, { name: 'x' });
    const list = await hit(modeler, 'get', '/stars?limit=5', '/stars', 200);
    const star = list.body.stars[0];
    const cone = await hit(modeler, 'get', `/stars?ra=${star.ra_deg}&dec=${star.dec_deg}&radius=0.5&limit=5`, '/stars', 200);
    expect(cone.body.stars[0].separation_deg).toBeLessThan(1e-6);
    await hit(curator, 'get', '/stars?q=KRS&sort=parallax_mas&order=desc&limit=3', '/stars', 200); // as curator: a modeler's sorted search scans the visibility filter for seconds
    await hit(modeler, 'get', '/stars?ra=10', '/stars', 400);
    await hit(modeler, 'get', '/stars?ra=10&dec=10&radius=45', '/stars', 400);
    const one = await hit(modeler, 'get', `/stars/${star.id}`, '/stars/:id', 200);
    expect(one.body.combined.length).toBeGreaterThan(0);
    await hit(curator, 'get', `/stars/${star.id}`, '/stars/:id', 200);
    await hit(modeler, 'get', '/stars/99999999', '/stars/:id', 404);
    await hit(modeler, 'get', '/stars/abc', '/stars/:id', 400);
    await hit(observer, 'get', '/intake/columns', '/intake/columns', 200);
    await hit(observer, 'get', '/intake/template.csv', '/intake/template.csv', 200);
    expect(clean()).toEqual([]);
  });

  it('intake and review', async () => {
    await hit(observer, 'get', '/batches', '/batches', 200);
    await hit(modeler, 'get', '/batches', '/batches', 403);
    await hit(curator, 'get', '/batches?state=nope', '/batches', 400);
    await hit(curator, 'get', '/batches/1', '/batches/:id', 200);
    const messy = await hit(observer, 'get', '/batches/2', '/batches/:id', 200);
    expect(messy.body.state).toBe('needs_mapping');
    await hit(observer, 'get', '/batches/999999', '/batches/:id', 404);
    await hit(observer, 'get', '/batches/1/rows?limit=3', '/batches/:id/rows', 200);
    await hit(observer, 'post', '/batches/2/mapping', '/batches/:id/mapping', 400, { mapping: { ra_deg: 'NoSuchHeader' } });
    await hit(observer, 'post', '/batches/2/mapping', '/batches/:id/mapping', 200, { mapping: { ...messy.body.proposal.mapping, ra_deg: 'RAJ2000' } });
    await hit(observer, 'post', '/batches/2/mapping', '/batches/:id/mapping', 409, { mapping: { ...messy.body.proposal.mapping, ra_deg: 'RAJ2000' } });
    const rows = await hit(observer, 'get', '/batches/2/rows?limit=500', '/batches/:id/rows', 200);
    expect(new Set(rows.body.rows.map((r: Json) => r.state))).toEqual(new Set(['accepted', 'rejected', 'duplicate', 'conflict']));
    await hit(observer, 'get', '/batches/2/rows?state=maybe', '/batches/:id/rows', 400);
    await hit(observer, 'get', '/batches/2/errors.csv', '/batches/:id/errors.csv', 200);
    await hit(observer, 'get', '/batches/2/raw', '/batches/:id/raw', 200);

    // an upload: new (201), the same bytes (200), not CSV text (415), no file (400)
    const star = await t.db('stars').orderBy('id').first();
    const near = { ra: star.ra_deg, dec: star.dec_deg + 0.8 / 3600 };
    await t.db('stars').insert({ name: 'Drift twin', source_id: null, ra_deg: near.ra, dec_deg: near.dec, glon_deg: star.glon_deg, glat_deg: star.glat_deg, parallax_mas: 1, parallax_err_mas: 0.05, hpx15: ang2pixNest(INDEX_NSIDE, near.ra, near.dec), created_at: new Date().toISOString() });
    // a row 0.4″ from both stars: ambiguous; another far from every star: a new star
    const csv = `${HEADER}\nBetween,${star.ra_deg},${star.dec_deg + 0.4 / 3600},R,0.01,0.002,0.001,0.001,1.0,0.05,61100.5,KR-HAWK\nLonely,1.5,-80.5,V,0.02,0.01,0.001,0.001,2.0,0.05,61100.6,KR-HAWK\n`;
    const upload = (bytes: Buffer | string, name: string) => observer.post('/api/v1/batches').field('instrument', 'KR-HAWK').attach('file', Buffer.from(bytes), name).buffer(true).parse(parseAny);
    const first = await upload(csv, 'drift.csv');
    problems.push(...documentProblems(first, 'post', '/batches'));
    expect(first.status).toBe(201);
    const again = await upload(csv, 'drift-again.csv');
    problems.push(...documentProblems(again, 'post', '/batches'));
    expect(again.status).toBe(200);
    const binary = await upload(Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d]), 'image.png');
    problems.push(...documentProblems(binary, 'post', '/batches'));
    expect(binary.status).toBe(415);
    await hit(observer, 'post', '/batches', '/batches', 400, {});

    await hit(curator, 'get', '/review/queue', '/review/queue', 200);
    await hit(curator, 'get', '/review/queue?state=approved&sort=rows&order=asc', '/review/queue', 200);
    await hit(curator, 'get', '/review/queue?state=lost', '/review/queue', 400);
    await hit(observer, 'get', '/review/queue', '/review/queue', 403);
    const table = await hit(curator, 'get', '/batches/2/measurements?limit=200', '/batches/:id/measurements', 200);
    await hit(observer, 'get', '/batches/2/measurements?filter.state=conflict&sort=q&order=desc', '/batches/:id/measurements', 200);
    await hit(curator, 'get', '/batches/2/measurements?sort=nonsense', '/batches/:id/measurements', 400);
    const conflict = table.body.rows.find((r: Json) => r.state === 'conflict');
    const pending = table.body.rows.filter((r: Json) => r.state === 'pending');
    expect(conflict?.competing).toBeTruthy();

    // edit, stale edit, history, revert
    const target = pending[0];
    await hit(curator, 'patch', `/measurements/${target.id}`, '/measurements/:id', 200, { changes: { ebv: 0.12 }, version: target.version, reason: 'drift check' });
    await hit(curator, 'patch', `/measurements/${target.id}`, '/measurements/:id', 409, { changes: { ebv: 0.13 }, version: target.version });
    await hit(curator, 'patch', `/measurements/${target.id}`, '/measurements/:id', 400, { changes: { q: 3 }, version: target.version + 1 });
    await hit(curator, 'patch', '/measurements/99999999', '/measurements/:id', 404, { changes: { ebv: 0.1 }, version: 1 });
    const history = await hit(observer, 'get', `/measurements/${target.id}/history`, '/measurements/:id/history', 200);
    await hit(observer, 'get', '/measurements/99999999/history', '/measurements/:id/history', 404);
    const edit = history.body.history.find((h: Json) => h.action === 'measurement.edit');
    await hit(curator, 'post', `/audit/${edit.id}/revert`, '/audit/:id/revert', 200, { reason: 'drift check undone' });
    await hit(curator, 'post', '/audit/99999999/revert', '/audit/:id/revert', 404, {});

    // selections, conflicts and ambiguous matches
    await hit(curator, 'post', '/measurements/approve', '/measurements/approve', 409, { ids: [conflict.id] });
    await hit(curator, 'post', '/measurements/approve', '/measurements/approve', 200, { ids: [pending[1].id] });
    await hit(curator, 'post', '/measurements/reject', '/measurements/reject', 200, { ids: [pending[2].id], reason: 'drift check' });
    await hit(curator, 'post', '/measurements/reject', '/measurements/reject', 404, { ids: [99999999] });
    await hit(curator, 'post', `/measurements/${conflict.id}/resolve`, '/measurements/:id/resolve', 200, { keep: 'this' });
    await hit(curator, 'post', `/measurements/${conflict.id}/resolve`, '/measurements/:id/resolve', 409, { keep: 'this' });
    await hit(curator, 'post', `/measurements/${conflict.id}/resolve`, '/measurements/:id/resolve', 400, { keep: 'both' });
    const uploaded = await hit(curator, 'get', `/batches/${first.body.id}/measurements`, '/batches/:id/measurements', 200);
    const ambiguous = uploaded.body.rows.find((r: Json) => r.state === 'ambiguous');
    expect(ambiguous?.candidates).toHaveLength(2);
    await hit(curator, 'post', `/measurements/${ambiguous.id}/resolve`, '/measurements/:id/resolve', 200, { starId: star.id });

    // whole-batch decisions
    await hit(curator, 'post', '/batches/2/approve', '/batches/:id/approve', 200, { note: 'drift check' });
    await hit(curator, 'post', `/batches/${first.body.id}/reject`, '/batches/:id/reject', 200, {});
    await hit(curator, 'post', '/batches/999999/approve', '/batches/:id/approve', 404, {});
    await hit(curator, 'post', '/batches/2/reject', '/batches/:id/reject', 400, { note: 42 });
    expect(clean()).toEqual([]);
  });

  it('tomography, sightlines and releases', async () => {
    await hit(modeler, 'get', '/tomography/runs', '/tomography/runs', 200);
    await hit(modeler, 'get', '/tomography/runs/1', '/tomography/runs/:id', 200);
    await hit(modeler, 'get', '/tomography/runs/999999', '/tomography/runs/:id', 404);
    await hit(modeler, 'get', '/tomography/runs/x', '/tomography/runs/:id', 400);
    const cells = await hit(modeler, 'get', '/tomography/runs/1/cells', '/tomography/runs/:id/cells', 200);
    await hit(modeler, 'get', '/tomography/runs/999999/cells', '/tomography/runs/:id/cells', 404);
    // not a positive integer: a 400, as documented (there is no "latest" shorthand for a run's cells)
    await hit(modeler, 'get', '/tomography/runs/abc/cells', '/tomography/runs/:id/cells', 400);
    await hit(modeler, 'get', '/tomography/runs/0/cells', '/tomography/runs/:id/cells', 400);
    const cell = cells.body.cells.find((c: Json) => c.n_layers >= 2);
    const pixel = await hit(modeler, 'get', `/sightlines?nside=32&ipix=${cell.ipix}&include=stars`, '/sightlines', 200);
    expect(pixel.body.cells[0].stars.length).toBeGreaterThan(0);
    await hit(modeler, 'get', `/sightlines?ra=${cell.ra_deg}&dec=${cell.dec_deg}&radius=4&convention=cosmo&minLayers=2`, '/sightlines', 200);
    await hit(modeler, 'get', `/sightlines?nside=32&ipix=${cell.ipix}&format=csv`, '/sightlines', 200);
    await hit(modeler, 'get', '/sightlines', '/sightlines', 400);
    // run=0 is the latest finished run here (GET /sky refuses it: see the sky scenario)
    await hit(modeler, 'get', `/sightlines?run=0&nside=32&ipix=${cell.ipix}`, '/sightlines', 200);
    await hit(modeler, 'get', '/sightlines?nside=32&ipix=1&limit=1&minLayers=abc', '/sightlines', 400);
    await hit(modeler, 'get', '/sightlines?nside=32&ipix=1&run=999999', '/sightlines', 404);

    await hit(curator, 'post', '/releases', '/releases', 201, { tag: 'DRIFT-1', notes: 'drift check' });
    await hit(curator, 'post', '/releases', '/releases', 409, { tag: 'DRIFT-1' });
    await hit(curator, 'post', '/releases', '/releases', 400, { tag: 'has space' });
    await hit(modeler, 'post', '/releases', '/releases', 403, { tag: 'DRIFT-2' });
    await hit(modeler, 'get', '/releases', '/releases', 200);
    await hit(modeler, 'get', '/releases/DRIFT-1', '/releases/:tag', 200);
    await hit(modeler, 'get', '/releases/NO-SUCH', '/releases/:tag', 404);
    await hit(modeler, 'get', `/sightlines?release=DRIFT-1&nside=32&ipix=${cell.ipix}&include=stars`, '/sightlines', 200);

    // a run started and stopped: which of queued/running/done it reaches first is a race, so both answers are allowed
    const started = await hit(curator, 'post', '/tomography/runs', '/tomography/runs', 202, { draws: 0 });
    await hit(curator, 'post', '/tomography/runs', '/tomography/runs', 400, { nside: 33 });
    await hit(curator, 'post', `/tomography/runs/${started.body.id}/cancel`, '/tomography/runs/:id/cancel', [200, 409]);
    let state = 'queued';
    for (let i = 0; i < 100 && (state === 'queued' || state === 'running'); i++) {
      await new Promise((r) => setTimeout(r, 100));
      state = (await t.app.services.tomography.get(started.body.id)).state;
    }
    expect(['cancelled', 'done']).toContain(state);
    await hit(curator, 'post', `/tomography/runs/${started.body.id}/cancel`, '/tomography/runs/:id/cancel', 409);
    await hit(curator, 'post', '/tomography/runs/999999/cancel', '/tomography/runs/:id/cancel', 404);
    if (state === 'cancelled') await hit(modeler, 'get', `/tomography/runs/${started.body.id}/cells`, '/tomography/runs/:id/cells', 409);
    expect(clean()).toEqual([]);
  });

  it('calibration from standard stars and plausibility settings', async () => {
    await hit(observer, 'get', '/standard-stars', '/standard-stars', 200);
    await hit(curator, 'post', '/standard-stars', '/standard-stars', 201, { name: 'BD+59 389', band: 'R', pPct: 6.4, thetaDeg: 98.0, source: 'drift check entry', fromMemory: true });
    await hit(curator, 'post', '/standard-stars', '/standard-stars', 409, { name: 'bd+59389', band: 'R', pPct: 6.4, thetaDeg: 98.0, source: 'drift check entry' });
    await hit(curator, 'post', '/standard-stars', '/standard-stars', 400, { name: 'X', band: 'V' });
    // a night with one polarized and one unpolarized standard (METHODS.md values, from memory) and a science star
    const csv = `${HEADER}\nHD 204827,322.2,58.7,V,0.0028,0.0528,0.0003,0.0003,1.2,0.05,61200.2,KR-HAWK\nHD212311,335.5,56.5,V,0.0011,-0.0004,0.0003,0.0003,2.0,0.05,61200.25,KR-HAWK\nScience,10.2,-60.1,V,0.01,0.004,0.0005,0.0005,1.0,0.05,61200.3,KR-HAWK\n`;
    const up = await observer.post('/api/v1/batches').attach('file', Buffer.from(csv), 'drift-standards.csv');
    expect(up.status).toBe(201);
    const id = up.body.id;
    await hit(observer, 'get', `/batches/${id}/calibration`, '/batches/:id/calibration', 200);
    await hit(curator, 'get', '/batches/999999/calibration', '/batches/:id/calibration', 404);
    await hit(curator, 'post', `/batches/${id}/calibration/revert`, '/batches/:id/calibration/revert', 409, {});
    await hit(curator, 'post', `/batches/${id}/calibration/apply`, '/batches/:id/calibration/apply', 200, { reason: 'drift check' });
    await hit(curator, 'post', `/batches/${id}/calibration/apply`, '/batches/:id/calibration/apply', 409, {});
    await hit(curator, 'get', `/batches/${id}/calibration`, '/batches/:id/calibration', 200);
    await hit(observer, 'get', '/instruments/KR-HAWK/calibrations', '/instruments/:code/calibrations', 200);
    await hit(curator, 'post', `/batches/${id}/calibration/revert`, '/batches/:id/calibration/revert', 200, {});
    await hit(observer, 'get', '/instruments/KR-NOPE/calibrations', '/instruments/:code/calibrations', 404);
    // the decision as the uploader reads it, and a corrected file for a returned batch
    await hit(observer, 'get', `/batches/${id}/decision`, '/batches/:id/decision', 200);
    await hit(observer, 'get', '/batches/999999/decision', '/batches/:id/decision', 404);
    expect((await curator.post(`/api/v1/batches/${id}/reject`).send({ note: 'Line 3: the angle is in radians.' })).status).toBe(200);
    const fixed = await observer.post('/api/v1/batches').attach('file', Buffer.from(csv.replace('0.01,0.004', '0.011,0.004')), 'drift-standards-fixed.csv');
    expect(fixed.status).toBe(201);
    await hit(observer, 'post', `/batches/${fixed.body.id}/replaces`, '/batches/:id/replaces', 200, { batchId: id });
    await hit(observer, 'post', `/batches/${fixed.body.id}/replaces`, '/batches/:id/replaces', 409, { batchId: id });
    await hit(observer, 'post', `/batches/${fixed.body.id}/replaces`, '/batches/:id/replaces', 400, { batchId: 'one' });
    await hit(modeler, 'get', '/plausibility', '/plausibility', 200);
    await hit(curator, 'patch', '/plausibility', '/plausibility', 200, { pCeiling: 0.15 });
    await hit(curator, 'patch', '/plausibility', '/plausibility', 400, { pCeiling: -1 });
    expect(clean()).toEqual([]);
  });

  it('tokens, sky pages and masks', async () => {
    const created = await hit(modeler, 'post', '/tokens', '/tokens', 201, { name: 'drift notebook' });
    await hit(modeler, 'post', '/tokens', '/tokens', 400, { name: '' });
    await hit(modeler, 'get', '/tokens', '/tokens', 200);
    const bearer = { Authorization: `Bearer ${created.body.token}` };
    await hit(anon(), 'get', '/me', '/me', 200, undefined, bearer);
    await hit(anon(), 'get', '/sky?limit=2', '/sky', 200, undefined, bearer);
    await hit(anon(), 'post', '/tokens', '/tokens', 403, { name: 'from a token' }, bearer);
    await hit(anon(), 'get', '/me', '/me', 401, undefined, { Authorization: 'Bearer sv_not-a-real-token' });

    const page = await hit(modeler, 'get', '/sky?limit=2', '/sky', 200);
    expect(page.body.next).toMatch(/^\d+$/);
    await hit(modeler, 'get', `/sky?limit=2&cursor=${page.body.next}&convention=cosmo`, '/sky', 200);
    await hit(modeler, 'get', '/sky?limit=2&minLayers=3&format=csv', '/sky', 200);
    await hit(modeler, 'get', '/sky?cursor=next', '/sky', 400);
    await hit(modeler, 'get', '/sky?run=0', '/sky', 400);
    await hit(modeler, 'get', '/sky?release=NO-SUCH', '/sky', 404);

    await hit(modeler, 'get', '/masks?format=json', '/masks', 200);
    await hit(modeler, 'get', '/masks?format=moc-json&minJumpDeg=30', '/masks', 200);
    await hit(modeler, 'get', '/masks?format=moc-ascii', '/masks', 200);
    await hit(modeler, 'get', '/masks?format=csv&release=DRIFT-1', '/masks', 200);
    const fits = await hit(modeler, 'get', '/masks?nside=64', '/masks', 200);
    expect(fits.text.startsWith('SIMPLE  =')).toBe(true);
    await hit(modeler, 'get', '/masks?nside=3', '/masks', 400);

    await hit(modeler, 'delete', `/tokens/${created.body.id}`, '/tokens/:id', 204);
    await hit(modeler, 'delete', `/tokens/${created.body.id}`, '/tokens/:id', 204);
    await hit(curator, 'delete', `/tokens/${created.body.id}`, '/tokens/:id', 404);
    await hit(modeler, 'delete', '/tokens/abc', '/tokens/:id', 400);
    await hit(anon(), 'get', '/me', '/me', 401, undefined, bearer);
    expect(clean()).toEqual([]);
  });

  it('every documented operation was called live, and the error statuses were seen', () => {
    const all = operations(doc).map((o) => o.key);
    expect(all.filter((k) => !called.has(k))).toEqual([]);
    const statuses = new Set([...called.values()].flatMap((s) => [...s]));
    for (const s of [200, 201, 202, 204, 400, 401, 403, 404, 409, 415]) expect(statuses.has(s), `status ${s} seen`).toBe(true);
  });
});

describe('rate-limited answers match the document', () => {
  let small: TestApp;
  beforeAll(async () => {
    small = await makeTestApp({ loginRateLimit: { windowMs: 60_000, max: 1 }, tokenRateLimit: { windowMs: 60_000, max: 1 } });
  }, 60_000);
  afterAll(async () => small?.close());

  it('429 from sign-in and from an API token', async () => {
    const wrong = { email: DEMO.observer, password: 'not-the-password' };
    await hit(request(small.app), 'post', '/auth/login', '/auth/login', 401, wrong);
    await hit(request(small.app), 'post', '/auth/login', '/auth/login', 429, wrong);
    const modeler = await signedIn(small.app, 'modeler');
    const { body } = await modeler.post('/api/v1/tokens').send({ name: 'limited' });
    const bearer = { Authorization: `Bearer ${body.token}` };
    await hit(request(small.app), 'get', '/overview', '/overview', 200, undefined, bearer);
    await hit(request(small.app), 'get', '/overview', '/overview', 429, undefined, bearer);
    const out = problems;
    problems = [];
    expect(out).toEqual([]);
  });
});
