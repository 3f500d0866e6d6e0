import type { Request, RequestHandler, Response, Router } from 'express';
import type { ErrorObject, ValidateFunction } from 'ajv';
import { guard, type Role, type SessionUser } from '../auth/roles.js';
import { AppError, badRequest } from '../errors.js';
import { bodyProblem, paramAjv, schema as schemaById } from './validate.js';

/**
 * Routes declared once, as data. A declaration says what the route is (method, path, summary and
 * description with units), who may call it, the JSON Schemas of its path and query parameters,
 * body and answers, and its handler. `mountRoutes` turns declarations into Express routes (guard,
 * validation, handler); server/openapi/document.ts turns the same declarations into the OpenAPI
 * 3.1 document. Nothing about a route is written twice.
 */

/** A JSON Schema (2020-12, the dialect of OpenAPI 3.1). */
export type JsonSchema = Record<string, unknown>;

/** Who passes the route's guard: anyone, any signed-in role, or the listed roles (admin always passes). */
export type Who = 'anyone' | 'signed-in' | readonly Role[];

export type Method = 'get' | 'post' | 'patch' | 'delete';

/** A path or query parameter. It arrives as text; the schema says what it must parse to. */
export interface ParamSpec {
  /** units, range and convention in words (the document shows it) */
  description: string;
  /** the value after coercion from text (integer, number, boolean, enum …); `default` fills a missing one */
  schema: JsonSchema;
  /** query only (path parameters are always required) */
  required?: boolean;
  /** compared without case: the text is lowercased before validation (e.g. format=CSV) */
  lowercase?: boolean;
  /** what a bad value is told was expected, when the words from the schema are not the clearest (e.g. "0 < radius ≤ 30 (deg)") */
  expected?: string;
}

export interface SuccessResponse {
  description: string;
  /** $id of a schema under schemas/ (JSON answers) */
  schema?: string;
  /** other content types (CSV, FITS, MOC, a file as sent), each with its schema */
  content?: Record<string, JsonSchema>;
  /** response headers worth knowing (provenance, paging) */
  headers?: Record<string, { description: string; schema: JsonSchema }>;
}

export type BodySpec =
  /** a JSON body checked against schemas/<id>.json before the handler runs */
  | { schema: string; required?: boolean }
  /** a body without a schema file (multipart upload, an optional unchecked body): documented, not validated here */
  | { inline: { contentType: string; schema: JsonSchema }; required?: boolean };

/** What a handler sees: the request's validated parts and the person calling. */
export interface RouteContext<P = Record<string, any>, Q = Record<string, any>, B = any> {
  /** path parameters, coerced to their schema types */
  params: P;
  /** query parameters, coerced, defaults filled, empty ones dropped */
  query: Q;
  /** the body, validated against its schema when the route declares one */
  body: B;
  /** the signed-in person (undefined only on routes open to anyone) */
  user: SessionUser;
  req: Request;
  res: Response;
}

/** A handler's answer with a status other than the route's first success status (or with no body: 204). */
export class Reply {
  constructor(
    readonly status: number,
    readonly body?: unknown,
  ) {}
}
export const reply = (status: number, body?: unknown) => new Reply(status, body);

export interface RouteSpec<D = any, P = Record<string, any>, Q = Record<string, any>, B = any> {
  method: Method;
  /** Express form, relative to /api/v1: /batches/:id */
  path: string;
  /** the document's section */
  tag: string;
  summary: string;
  /** what the route does, with units, limits and examples */
  description?: string;
  who: Who;
  /** said beside the roles, e.g. "observers see their own batches only" */
  whoNote?: string;
  /**
   * A personal API token (Authorization: Bearer) may call it. Default: every GET route (`false`
   * refuses a token with 403); tokens never write (server/tokens/middleware.ts refuses other
   * methods before any route).
   */
  bearer?: boolean;
  params?: Record<string, ParamSpec>;
  query?: Record<string, ParamSpec>;
  body?: BodySpec;
  /** success answers by status; the lowest 2xx is the status of a plain returned value */
  responses: Record<number, SuccessResponse>;
  /** error statuses the handler itself can answer (401/403/400/429 of guard and validation are added) */
  errors?: number[];
  /** a note on the field names of the answer (e.g. where it mixes camelCase and snake_case) */
  namingNote?: string;
  /** Express middleware run after the guard and before validation (upload parsing, rate limits), built from the deps at mount */
  middleware?: (deps: D) => RequestHandler[];
  /**
   * Returns the answer: a value is sent as JSON with the route's first success status, a
   * `reply(status, body?)` with that status; `undefined` means the handler wrote the response
   * itself (a file, a CSV stream).
   */
  handler: (ctx: RouteContext<P, Q, B>, deps: D) => unknown;
}

/** Typed declaration helper: `route<Deps, Params, Query, Body>({...})`. */
export function route<D = any, P = Record<string, any>, Q = Record<string, any>, B = any>(spec: RouteSpec<D, P, Q, B>): RouteSpec<D> {
  return spec as unknown as RouteSpec<D>;
}

// ---------------------------------------------------------------------------------------------
// Parameter validation

/** What a parameter schema expects, in words: "an integer from 1 to 500", "one of json, csv". */
export function expectedText(s: JsonSchema): string {
  if (Array.isArray(s.enum)) return `one of ${(s.enum as unknown[]).join(', ')}`;
  const types = Array.isArray(s.type) ? (s.type as string[]) : [s.type as string | undefined];
  const numeric = types.includes('integer') || types.includes('number');
  if (numeric) {
    const kind = types.includes('integer') ? 'an integer' : 'a number';
    const { minimum: min, maximum: max, exclusiveMinimum: xmin, exclusiveMaximum: xmax } = s as Record<string, number | undefined>;
    if (kind === 'an integer' && min === 1 && max === undefined && xmax === undefined) return 'a positive integer';
    const bounds = [
      min !== undefined ? `at least ${min}` : xmin !== undefined ? `greater than ${xmin}` : '',
      max !== undefined ? `at most ${max}` : xmax !== undefined ? `less than ${xmax}` : '',
    ].filter(Boolean);
    const text = `${kind}${bounds.length ? `, ${bounds.join(' and ')}` : ''}`;
    return types.includes('string') ? `${text}, or text` : text;
  }
  if (typeof s.pattern === 'string') return `text matching ${s.pattern}`;
  if (types.includes('boolean')) return 'true or false';
  return 'text';
}

interface CompiledParams {
  validate: ValidateFunction;
  specs: Record<string, ParamSpec>;
  where: 'path' | 'query';
}

function compileParams(specs: Record<string, ParamSpec> | undefined, where: 'path' | 'query'): CompiledParams | null {
  if (!specs || Object.keys(specs).length === 0) return null;
  const required = Object.entries(specs).filter(([, p]) => where === 'path' || p.required).map(([n]) => n);
  // unknown query parameters are ignored, as they always were (add freely, never break)
  const validate = paramAjv.compile({ type: 'object', properties: Object.fromEntries(Object.entries(specs).map(([n, p]) => [n, p.schema])), required });
  return { validate, specs, where };
}

const shown = (raw: unknown) => {
  const text = String(raw);
  return text.length > 40 ? `${text.slice(0, 40)}…` : text;
};

/** The 400 for parameters that do not match their schemas: the first bad one in the message, each in details.fields. */
function paramProblem(c: CompiledParams, errors: ErrorObject[], raw: Record<string, unknown>): AppError {
  const names: string[] = [];
  for (const e of errors) {
    const name = e.keyword === 'required' ? (e.params as { missingProperty: string }).missingProperty : e.instancePath.slice(1).replace(/~1/g, '/').replace(/~0/g, '~');
    if (name && !names.includes(name)) names.push(name);
  }
  const expected = (name: string) => {
    const spec = c.specs[name];
    return spec ? spec.expected ?? expectedText(spec.schema) : 'another value';
  };
  const fields = names.map((name) => ({ field: name, message: raw[name] === undefined ? 'required' : `expected ${expected(name)}` }));
  const first = names[0] ?? '(parameters)';
  const label = c.where === 'path' ? `The path parameter ${first}` : `The query parameter ${first}`;
  const message = raw[first] === undefined ? `${label} is required.` : `${label} must be ${expected(first)}; got "${shown(raw[first])}".`;
  return badRequest(message, { fields });
}

/** Coerce and check one set of parameters; returns the typed values or throws the 400. */
function checkParams(c: CompiledParams, input: Record<string, unknown>): Record<string, unknown> {
  const raw: Record<string, unknown> = {};
  for (const [name, value] of Object.entries(input)) {
    // undeclared query parameters are ignored (the handler can still read req.query), an empty one counts as absent
    if (!(name in c.specs) || (c.where === 'query' && value === '')) continue;
    raw[name] = c.specs[name]?.lowercase && typeof value === 'string' ? value.toLowerCase() : value;
  }
  const values = { ...raw };
  if (!c.validate(values)) throw paramProblem(c, c.validate.errors ?? [], raw);
  // ajv coerces "1e400" to Infinity, which a number schema accepts: never a useful value here
  const infinite = Object.keys(c.specs).find((n) => typeof values[n] === 'number' && !Number.isFinite(values[n] as number));
  if (infinite) throw paramProblem(c, [{ keyword: 'type', instancePath: `/${infinite}` } as ErrorObject], raw);
  return values;
}

/**
 * Every query parameter appears at most once: `?q=a&q=b` (an array to Express) is a 400 naming
 * the parameter instead of a crash or a silent pick of one value. Applied to every declared route.
 */
export function repeatedQueryProblem(query: Record<string, unknown>): AppError | null {
  for (const [name, value] of Object.entries(query)) {
    if (typeof value !== 'string') {
      const n = Array.isArray(value) ? value.length : 0;
      return badRequest(`The query parameter ${name} was given ${n > 1 ? `${n} times` : 'in a form this route does not take'}; give it once.`, { fields: [{ field: name, message: 'expected a single value' }] });
    }
  }
  return null;
}

// ---------------------------------------------------------------------------------------------
// Mounting

/** The status of a plain returned value: the route's lowest 2xx. */
export function successStatus(spec: RouteSpec): number {
  return Math.min(...Object.keys(spec.responses).map(Number).filter((s) => s >= 200 && s < 300));
}

/** Whether a personal API token may call the route: every GET unless the declaration says `bearer: false`. */
export const bearerAllowed = (spec: RouteSpec) => spec.bearer ?? spec.method === 'get';

/** Validators compiled once per declaration (createApp may run many times in one process, as in tests). */
const compiled = new WeakMap<RouteSpec, { params: CompiledParams | null; query: CompiledParams | null; body: ValidateFunction | null }>();
function validatorsOf(spec: RouteSpec) {
  let v = compiled.get(spec);
  if (!v) {
    v = { params: compileParams(spec.params, 'path'), query: compileParams(spec.query, 'query'), body: spec.body && 'schema' in spec.body ? schemaById(spec.body.schema) : null };
    compiled.set(spec, v);
  }
  return v;
}

/** Routes open to anyone (sign-in, health): stated explicitly so a reader sees the choice. */
const openToAnyone: RequestHandler = (_req, _res, next) => next();

/**
 * Mount declarations on a router: guard → the route's own middleware → path, query and body
 * validation → handler → answer. Every failure is an AppError handed to the one error middleware
 * (server/errors.ts).
 */
export function mountRoutes<D>(router: Router, routes: RouteSpec<D>[], deps: D): void {
  for (const spec of routes) {
    const { params, query, body } = validatorsOf(spec);
    const status = successStatus(spec);
    const allowsBearer = bearerAllowed(spec);

    const run: RequestHandler = async (req, res) => {
      if (!allowsBearer && res.locals.apiTokenId !== undefined) throw new AppError(403, 'token_not_accepted', 'This route needs you signed in with your password; an API token was not accepted.');
      const repeated = repeatedQueryProblem(req.query as Record<string, unknown>);
      if (repeated) throw repeated;
      const ctx: RouteContext = {
        params: params ? checkParams(params, req.params) : { ...req.params },
        query: query ? checkParams(query, req.query as Record<string, unknown>) : {},
        body: req.body,
        user: req.user as SessionUser,
        req,
        res,
      };
      if (body && !body(req.body ?? {})) throw bodyProblem(body.errors);
      const out = await spec.handler(ctx, deps);
      if (out instanceof Reply) {
        if (out.body === undefined) res.status(out.status).end();
        else res.status(out.status).json(out.body);
      } else if (out !== undefined) res.status(status).json(out);
    };
    const who = spec.who === 'anyone' ? openToAnyone : guard(spec.who);
    router[spec.method](spec.path, who, ...(spec.middleware?.(deps) ?? []), run);
  }
}
