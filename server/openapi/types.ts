import type { Role } from '../auth/roles.js';

/** A JSON Schema (2020-12, the dialect of OpenAPI 3.1) written inline in the registry. */
export type JsonSchema = Record<string, unknown>;

/** Who passes the route's guard: anyone, any signed-in role, or the listed roles (admin always passes). */
export type Who = 'anyone' | 'signed-in' | readonly Role[];

export interface Param {
  name: string;
  in: 'path' | 'query';
  /** units, range and convention in words */
  description: string;
  schema: JsonSchema;
  required?: boolean;
}

export interface SuccessResponse {
  description: string;
  /** $id of a schema under schemas/ (JSON answers) */
  schema?: string;
  /** other content types (CSV, FITS, MOC), each with its schema */
  content?: Record<string, JsonSchema>;
  /** response headers worth knowing (provenance, paging) */
  headers?: Record<string, { description: string; schema: JsonSchema }>;
}

export interface RequestBody {
  /** $id of a schema under schemas/api/ (JSON bodies, the schema the route validates with) */
  schema?: string;
  /** a body without a schema file (multipart upload, unchecked optional bodies) */
  inline?: { contentType: string; schema: JsonSchema };
  required?: boolean;
}

/** One route under /api/v1, described once; document.ts turns the list into OpenAPI paths. */
export interface Operation {
  method: 'get' | 'post' | 'patch' | 'delete';
  /** Express form: /batches/:id */
  path: string;
  tag: string;
  summary: string;
  description?: string;
  who: Who;
  /** said beside the roles, e.g. "observers see their own batches only" */
  whoNote?: string;
  params?: Param[];
  body?: RequestBody;
  responses: Record<number, SuccessResponse>;
  /** error statuses the handler itself can answer (401/403 of the guard are added from `who`) */
  errors?: number[];
}
