import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ROLES } from '../auth/roles.js';
import { ajv } from '../lib/validate.js';
import { bearerAllowed, type JsonSchema, type ParamSpec, type RouteSpec, type Who } from '../lib/route.js';
import { allRoutes } from './registry.js';

/**
 * The OpenAPI 3.1 document, generated from the route declarations (server/<capability>/routes.ts,
 * listed in registry.ts: the same objects the server mounts) and the JSON Schemas the server itself
 * validates with (schemas/, loaded into the one ajv instance). Nothing is kept by hand: each
 * referenced $id is taken from ajv, its $refs rewritten to point into components.schemas, and the
 * schemas it refers to are pulled in the same way.
 */

const here = path.dirname(fileURLToPath(import.meta.url));
const pkg = JSON.parse(fs.readFileSync(path.resolve(here, '../../package.json'), 'utf8')) as { version: string };

/** OpenAPI component keys allow [A-Za-z0-9._-]: "responses/batch" → "responses.batch". */
export const componentKey = (id: string) => id.replace(/\//g, '.');

// $ids are relative ("responses/batch"), so resolve $refs the way ajv does, against a common base.
const BASE = 'https://starveil.invalid/schemas/';
export function resolveSchemaRef(fromId: string, ref: string): { id: string; pointer: string } {
  const u = new URL(ref, BASE + fromId);
  const basePath = new URL(BASE).pathname;
  if (!u.pathname.startsWith(basePath)) throw new Error(`$ref ${ref} in ${fromId} leaves schemas/`);
  return { id: decodeURIComponent(u.pathname.slice(basePath.length)), pointer: decodeURIComponent(u.hash.slice(1)) };
}

function schemaById(id: string): JsonSchema {
  const v = ajv.getSchema(id);
  if (!v) throw new Error(`OpenAPI document: no schema with $id ${id} under schemas/`);
  return v.schema as JsonSchema;
}

/** Copy a schema for components.schemas: drop $id/$schema, rewrite $refs, note what they need. */
function embed(id: string, need: (id: string) => void): JsonSchema {
  const walk = (node: unknown, top: boolean): unknown => {
    if (Array.isArray(node)) return node.map((n) => walk(n, false));
    if (!node || typeof node !== 'object') return node;
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(node)) {
      if (top && (k === '$id' || k === '$schema')) continue;
      if (k === '$ref' && typeof v === 'string') {
        const target = resolveSchemaRef(id, v);
        need(target.id);
        out.$ref = `#/components/schemas/${componentKey(target.id)}${target.pointer}`;
      } else out[k] = walk(v, false);
    }
    return out;
  };
  return walk(schemaById(id), true) as JsonSchema;
}

const ALL_ROLES = [...ROLES];

/** Roles that pass the guard (admin passes every guard). */
export function rolesFor(who: Who): string[] {
  if (who === 'anyone') return ['anyone'];
  if (who === 'signed-in') return ALL_ROLES;
  return ALL_ROLES.filter((r) => r === 'admin' || who.includes(r));
}

function whoText(op: RouteSpec): string {
  const base = op.who === 'anyone' ? 'anyone, signed in or not' : op.who === 'signed-in' ? 'any signed-in role (observer, curator, modeler, admin)' : `${rolesFor(op.who).join(', ')} (admin passes every guard)`;
  return `**Who may call:** ${base}${op.whoNote ? `; ${op.whoNote}` : ''}.`;
}

export function operationId(op: Pick<RouteSpec, 'method' | 'path'>): string {
  const words = op.path.split('/').filter(Boolean).map((seg) => (seg.startsWith(':') ? `By-${seg.slice(1)}` : seg));
  const camel = words.join('-').split(/[^A-Za-z0-9]+/).filter(Boolean).map((w) => w[0].toUpperCase() + w.slice(1)).join('');
  return op.method + camel;
}

export const openApiPath = (expressPath: string) => expressPath.replace(/:(\w+)/g, '{$1}');

const ERROR_RESPONSES: Record<number, { key: string; description: string }> = {
  400: { key: 'BadRequest', description: 'Bad input: the message names the problem and `details.fields` each offending field (also bad_json for a body that is not JSON).' },
  401: { key: 'Unauthenticated', description: 'Not signed in (no valid session cookie or API token), wrong credentials, or an unknown or revoked API token.' },
  403: { key: 'Forbidden', description: 'Your role may not do this; or an API token was used for a write (tokens only read: code token_read_only).' },
  404: { key: 'NotFound', description: 'No such thing, or not one you may see.' },
  409: { key: 'Conflict', description: 'The request conflicts with the current state (stale version, held rows, duplicate tag, unfinished run, …).' },
  413: { key: 'TooLarge', description: 'The upload is larger than UPLOAD_MAX_BYTES.' },
  415: { key: 'NotCsvText', description: 'The upload is not CSV text: binary, not valid UTF-8, or without a comma, semicolon or tab delimiter.' },
  429: { key: 'TooManyRequests', description: 'Too many requests: failed sign-ins or password-reset attempts per address and e-mail, or calls per API token (wait the seconds in the Retry-After header).' },
};

/** The naming convention of JSON fields (also in DEVELOPERS.md). */
export const NAMING_CONVENTION =
  'Every field added from now on is camelCase, with its unit as a suffix (`distancePc`, `thetaDeg`, `sizeBytes`). Older answers keep the names they were published with: measurement and star rows from the catalog tables use snake_case column names (`star_source_id`, `theta_deg`, `parallax_mas`), and scripts rely on them, so they are never renamed. Where one answer mixes both, its description says so.';

const ANGLE_NOTE = 'Starlight polarization is parallel to the plane-of-sky magnetic field; thermal dust emission is polarized perpendicular to it, so field angle = emission angle + 90°: add 90° to a Starveil angle before comparing it with the polarization angle of an emission map.';

const INFO_DESCRIPTION = [
  'The HTTP API of Starveil, the curated catalog of stellar polarization measurements tied to distances and the distance-resolved dust layers and sky masks computed from it. Base path `/api/v1`, JSON in and out.',
  '',
  '**Units and conventions.** Stokes q = Q/I and u = U/I are fractions, never percent. Angles are degrees, IAU convention (from north through east), in [0, 180); jumps between layers are wrapped to (−90, 90]. Positions are ICRS degrees with Galactic l, b derived; HEALPix pixels are nested. Distances are parsecs, parallaxes milliarcseconds (the +0.017 mas zero point is applied when distances are derived), epochs MJD (days). `source_id` is text end to end, never a number. Every numeric field below names its unit.',
  '',
  `**Field and emission angles.** ${ANGLE_NOTE}`,
  '',
  '**Signing in.** Either the session cookie `starveil.sid` from POST /auth/login (browsers and scripts alike), or a personal API token in `Authorization: Bearer <token>` (create one at POST /tokens while signed in). A token acts as its owner and only reads: any other method with a token answers 403. Writes with the cookie must carry this site\u2019s Origin (or Referer) header, else 403. Each token has its own rate limit (429).',
  '',
  '**Who may call what.** Each operation states the roles that pass its guard in its description and as `x-roles` (admin passes every guard). Modelers see approved measurements only; observers see approved ones plus their own batches’; curators and admins see everything.',
  '',
  '**Errors** are always `{"error": {"code", "message", "details"?}}` with the matching HTTP status. Bad input is a 400 whose `details.fields` names each offending field or parameter and what was expected.',
  '',
  '**Parameters.** Path and query parameters are text coerced to the types below (`limit=50` is the integer 50). A query parameter given twice (`?q=a&q=b`) is a 400 naming it; an empty one (`?limit=`) counts as absent; parameters a route does not know are ignored.',
  '',
  `**Field names.** ${NAMING_CONVENTION}`,
].join('\n');

const TAGS: { name: string; description: string }[] = [
  { name: 'Sign-in and account', description: 'Session sign-in, your own account, password reset by e-mail' },
  { name: 'Tokens', description: 'Personal API tokens for scripts (read-only)' },
  { name: 'Catalog', description: 'Stars, cone search, measurements and combined values' },
  { name: 'Intake', description: 'CSV batches: upload, column mapping, row report' },
  { name: 'Review', description: 'Curator review: queue, table, edits, approvals, audit trail' },
  { name: 'Tomography', description: 'Runs, cells and sightlines: dust layers along each line of sight' },
  { name: 'Sky and masks', description: 'Pages of cells and sky masks (HEALPix FITS, MOC, CSV, JSON) for modelers' },
  { name: 'Releases', description: 'Frozen data releases for reproducible queries' },
  { name: 'Admin', description: 'Accounts and the mail outbox' },
  { name: 'Service', description: 'Health and this document' },
];

/** A parameter's enum with its type spelled out, so renderers show "string" rather than "any". */
function typedEnum(schema: JsonSchema): JsonSchema {
  const values = schema.enum as unknown[] | undefined;
  if (!values || 'type' in schema) return schema;
  if (values.every((v) => typeof v === 'string')) return { type: 'string', ...schema };
  if (values.every((v) => Number.isInteger(v))) return { type: 'integer', ...schema };
  return schema;
}

/** Property names of a schema and every schema it refers to (walked through $ref across files). */
function propertyNames(id: string, seen = new Set<string>()): string[] {
  if (seen.has(id)) return [];
  seen.add(id);
  const names: string[] = [];
  const walk = (node: unknown) => {
    if (Array.isArray(node)) return node.forEach(walk);
    if (!node || typeof node !== 'object') return;
    for (const [k, v] of Object.entries(node)) {
      if (k === '$ref' && typeof v === 'string') {
        const target = resolveSchemaRef(id, v);
        if (target.id !== id) names.push(...propertyNames(target.id, seen));
      } else if (k === 'properties' && v && typeof v === 'object') {
        names.push(...Object.keys(v));
        Object.values(v).forEach(walk);
      } else walk(v);
    }
  };
  walk(schemaById(id));
  return names;
}

const isCamel = (name: string) => /[a-z][A-Z]/.test(name);
const isSnake = (name: string) => /[a-z]_[a-z]/.test(name);

/** A note for an answer whose field names mix camelCase and snake_case, naming an example of each; null when they do not. */
export function namingMix(schemaId: string): string | null {
  const names = [...new Set(propertyNames(schemaId))];
  const camel = names.filter(isCamel);
  const snake = names.filter(isSnake);
  if (!camel.length || !snake.length) return null;
  return `Field names in this answer mix camelCase (e.g. ${camel.slice(0, 3).map((n) => `\`${n}\``).join(', ')}) and snake_case (e.g. ${snake.slice(0, 3).map((n) => `\`${n}\``).join(', ')}); both are kept as published (see Field names in the introduction).`;
}

/** A declaration's parameters as OpenAPI parameter objects. */
function parameters(specs: Record<string, ParamSpec> | undefined, where: 'path' | 'query') {
  return Object.entries(specs ?? {}).map(([name, p]) => {
    return { name, in: where, required: where === 'path' ? true : p.required ?? false, description: p.description, schema: typedEnum(p.schema) };
  });
}

function buildOperation(op: RouteSpec, need: (id: string) => void): Record<string, unknown> {
  const ref = (id: string) => {
    need(id);
    return { $ref: `#/components/schemas/${componentKey(id)}` };
  };
  const guarded = op.who !== 'anyone';
  const reads = op.method === 'get';
  const bearer = bearerAllowed(op);
  const errors = new Set(op.errors ?? []);
  if (guarded) errors.add(401);
  if (Array.isArray(op.who)) errors.add(403);
  if (guarded && reads) errors.add(429); // per-token rate limit
  if (guarded && !reads) errors.add(403); // a token used for a write
  const params = [...parameters(op.params, 'path'), ...parameters(op.query, 'query')];
  if (params.length || (op.body && 'schema' in op.body)) errors.add(400);

  const responses: Record<string, unknown> = {};
  for (const [status, r] of Object.entries(op.responses)) {
    const content: Record<string, unknown> = {};
    if (r.schema) content['application/json'] = { schema: ref(r.schema) };
    for (const [type, schema] of Object.entries(r.content ?? {})) content[type] = { schema };
    const naming = r.schema ? namingMix(r.schema) : null;
    const description = [r.description, naming].filter(Boolean).join('. ');
    responses[status] = { description, ...(Object.keys(content).length ? { content } : {}), ...(r.headers ? { headers: r.headers } : {}), ...(naming ? { 'x-field-naming': 'mixed' } : {}) };
  }
  for (const status of [...errors].sort((a, b) => a - b)) responses[String(status)] = { $ref: `#/components/responses/${ERROR_RESPONSES[status].key}` };

  let requestBody: Record<string, unknown> | undefined;
  if (op.body && 'schema' in op.body) requestBody = { required: op.body.required ?? true, content: { 'application/json': { schema: ref(op.body.schema) } } };
  else if (op.body) requestBody = { required: op.body.required ?? true, content: { [op.body.inline.contentType]: { schema: op.body.inline.schema } } };

  return {
    tags: [op.tag],
    summary: op.summary,
    description: [whoText(op), op.description, op.namingNote].filter(Boolean).join('\n\n'),
    operationId: operationId(op),
    'x-roles': rolesFor(op.who),
    // open routes need nothing; reads take the cookie or a token; writes the cookie only
    security: !guarded ? [] : bearer ? [{ session: [] }, { bearerToken: [] }] : [{ session: [] }],
    ...(params.length ? { parameters: params } : {}),
    ...(requestBody ? { requestBody } : {}),
    responses,
  };
}

export function buildDocument(operations: RouteSpec[] = allRoutes()): Record<string, unknown> {
  const needed: string[] = [];
  const need = (id: string) => {
    if (!needed.includes(id)) needed.push(id);
  };
  need('responses/error');

  const paths: Record<string, Record<string, unknown>> = {};
  for (const op of operations) {
    const p = openApiPath(op.path);
    paths[p] ??= {};
    if (paths[p][op.method]) throw new Error(`OpenAPI document: ${op.method.toUpperCase()} ${op.path} is listed twice`);
    paths[p][op.method] = buildOperation(op, need);
  }

  const schemas: Record<string, JsonSchema> = {};
  for (let i = 0; i < needed.length; i++) schemas[componentKey(needed[i])] = embed(needed[i], need);

  const errorResponses: Record<string, unknown> = {};
  for (const { key, description } of Object.values(ERROR_RESPONSES)) {
    errorResponses[key] = { description, content: { 'application/json': { schema: { $ref: '#/components/schemas/responses.error' } } } };
  }

  const sortedSchemas = Object.fromEntries(Object.entries(schemas).sort(([a], [b]) => a.localeCompare(b)));
  return {
    openapi: '3.1.0',
    info: { title: 'Starveil API', version: pkg.version, summary: 'Stellar polarization catalog, dust-layer tomography and sky masks', description: INFO_DESCRIPTION },
    jsonSchemaDialect: 'https://spec.openapis.org/oas/3.1/dialect/base', // JSON Schema 2020-12 with the OpenAPI vocabulary
    servers: [{ url: '/api/v1', description: 'this Starveil server' }],
    tags: TAGS.filter((t) => operations.some((op) => op.tag === t.name)),
    paths,
    components: {
      schemas: sortedSchemas,
      responses: errorResponses,
      securitySchemes: {
        session: { type: 'apiKey', in: 'cookie', name: 'starveil.sid', description: 'The session cookie set by POST /auth/login (HTTP-only, 8 hours, renewed on use).' },
        bearerToken: { type: 'http', scheme: 'bearer', description: 'A personal API token (POST /tokens): `Authorization: Bearer sv_…`. Acts as its owner for GET requests only; rate-limited per token.' },
      },
    },
  };
}

/** The document for `npm run gen` and the docs page: the same as buildDocument(). */
export const buildOpenApiDocument = (): Record<string, unknown> => buildDocument();

let cached: Record<string, unknown> | undefined;
/** The document, built once per process (schemas and declarations do not change while it runs). */
export function openApiDocument(): Record<string, unknown> {
  cached ??= buildDocument();
  return cached;
}
