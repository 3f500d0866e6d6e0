import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Ajv2020 } from 'ajv/dist/2020.js';
import type { ErrorObject, ValidateFunction } from 'ajv';
import addFormatsModule from 'ajv-formats';
import { badRequest } from '../errors.js';

const schemasDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../schemas');
const addFormats = addFormatsModule as unknown as (ajv: Ajv2020) => Ajv2020;

/** One ajv instance holding every schema in schemas/ (recursively), addressed by its $id. Bodies: no coercion. */
export const ajv = new Ajv2020({ allErrors: true, strict: false, coerceTypes: false, verbose: true });
/**
 * The same schemas for path and query parameters, which arrive as text: values are coerced to the
 * schema's type ("50" → 50) and missing ones take the schema's default. Never used for bodies.
 */
export const paramAjv = new Ajv2020({ allErrors: true, strict: false, coerceTypes: true, useDefaults: true, verbose: true });
addFormats(ajv);
addFormats(paramAjv);
function loadAll(dir: string) {
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) loadAll(full);
    else if (entry.name.endsWith('.json')) {
      const s = JSON.parse(fs.readFileSync(full, 'utf8'));
      ajv.addSchema(s);
      paramAjv.addSchema(structuredClone(s));
    }
  }
}
loadAll(schemasDir);

export function schema(id: string): ValidateFunction {
  const v = ajv.getSchema(id);
  if (!v) throw new Error(`no schema with $id ${id}`);
  return v;
}

/** Field path for an ajv error: "/email" → "email"; a missing property names itself. */
export function fieldOf(e: ErrorObject): string {
  const base = e.instancePath.replace(/^\//, '').replace(/\//g, '.');
  if (e.keyword === 'required') return [base, (e.params as { missingProperty: string }).missingProperty].filter(Boolean).join('.');
  if (e.keyword === 'additionalProperties') return [base, (e.params as { additionalProperty: string }).additionalProperty].filter(Boolean).join('.');
  return base || '(body)';
}

export function describeErrors(errors: ErrorObject[] | null | undefined): { field: string; message: string }[] {
  return (errors ?? []).map((e) => {
    const field = fieldOf(e);
    let message: string;
    if (e.keyword === 'required') message = `${field} is required`;
    else if (e.keyword === 'additionalProperties') message = `${field} is not a known field`;
    else if (e.keyword === 'enum') message = `${field} must be one of ${(e.params as { allowedValues: unknown[] }).allowedValues.join(', ')}`;
    else message = `${field} ${e.message ?? 'is invalid'}`;
    return { field, message };
  });
}

/** The 400 for a body that does not match its schema (server/lib/route.ts): every problem in the message, each field in details.fields. */
export function bodyProblem(errors: ErrorObject[] | null | undefined) {
  const problems = describeErrors(errors);
  return badRequest(problems.map((p) => p.message).join('; '), { fields: problems });
}
