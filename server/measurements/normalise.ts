import type { ErrorObject } from 'ajv';
import { parseDecDeg, parseRaDeg } from '../science/sexagesimal.js';
import { wrapAngle180 } from '../science/axial.js';
import { schema } from '../lib/validate.js';
import { COLUMN_BY_NAME, COLUMNS } from './columns.js';

export interface RowIssue {
  /** header of the uploaded file (or the canonical name when the row has no such header) */
  column: string;
  /** canonical column name */
  field: string;
  value?: string;
  message: string;
}

/** A row in canonical names and units: fractions, degrees, IAU convention, frame as given. */
export interface CanonicalRow {
  name?: string;
  source_id?: string;
  ra_deg?: number;
  dec_deg?: number;
  glon_deg?: number;
  glat_deg?: number;
  band: string;
  q?: number;
  u?: number;
  q_err?: number;
  u_err?: number;
  p?: number;
  p_err?: number;
  theta_deg?: number;
  theta_err_deg?: number;
  angle_frame?: 'equatorial' | 'galactic';
  parallax_mas?: number;
  parallax_err_mas?: number;
  distance_pc?: number;
  distance_err_pc?: number;
  mjd?: number;
  instrument: string;
  ebv?: number;
}

export interface NormaliseResult {
  row: CanonicalRow | null;
  errors: RowIssue[];
  warnings: RowIssue[];
}

/** Longest text accepted in a number cell; longer cells are refused before any parsing. */
export const MAX_NUMBER_CHARS = 64;
/** Longest value quoted back in an error message (the stored upload keeps the whole cell). */
const MAX_QUOTED_CHARS = 200;
/** 2^64 − 1: the largest unsigned 64-bit identifier. */
export const MAX_SOURCE_ID = '18446744073709551615';
const BANDS: Record<string, string> = { u: 'U', b: 'B', v: 'V', r: 'R', rc: 'R', i: 'I', ic: 'I' };
const validateRow = schema('measurement-row');

/**
 * Turn one raw row (canonical name → text, as found under the mapped headers) into typed
 * canonical values, then check them against schemas/measurement-row.json. Every problem names the
 * column, the value and what was expected. Used for uploads and inline edits alike.
 */
export function normaliseRow(text: Record<string, string | undefined>, headerOf: (canon: string) => string, defaults: { instrument?: string | null } = {}): NormaliseResult {
  const errors: RowIssue[] = [];
  const warnings: RowIssue[] = [];
  const out: Record<string, unknown> = {};

  for (const spec of COLUMNS) {
    const raw = text[spec.name];
    if (raw === undefined) continue;
    const v = raw.trim();
    if (v === '' || /^(nan|null|--?)$/i.test(v)) continue; // empty cell = not given
    const target = spec.percentOf ?? spec.name;
    switch (spec.kind) {
      case 'text':
        out[target] = v;
        break;
      case 'digits': {
        const id = unsignedId(v);
        if (id === null) errors.push(issueOf(headerOf, spec.name, v, `expected an unsigned 64-bit integer identifier: digits only, at most ${MAX_SOURCE_ID} (2^64 − 1)`));
        else out[target] = id;
        break;
      }
      case 'ra': {
        const r = v.length > MAX_NUMBER_CHARS ? { ok: false as const, message: `expected decimal degrees or hours:minutes:seconds of at most ${MAX_NUMBER_CHARS} characters; this cell has ${v.length}` } : parseRaDeg(v);
        if (r.ok) out[target] = r.value;
        else errors.push(issueOf(headerOf, spec.name, v, r.message));
        break;
      }
      case 'dec': {
        const r = v.length > MAX_NUMBER_CHARS ? { ok: false as const, message: `expected decimal degrees or ±degrees:arcminutes:arcseconds of at most ${MAX_NUMBER_CHARS} characters; this cell has ${v.length}` } : parseDecDeg(v);
        if (r.ok) out[target] = r.value;
        else errors.push(issueOf(headerOf, spec.name, v, r.message));
        break;
      }
      case 'band': {
        const b = BANDS[v.toLowerCase().replace(/[_\s]/g, '')];
        if (b) out[target] = b;
        else errors.push(issueOf(headerOf, spec.name, v, 'expected a band: U, B, V, R (or Rc) or I (or Ic)'));
        break;
      }
      case 'frame': {
        const f = v.toLowerCase();
        if (f === 'equatorial' || f === 'icrs' || f === 'eq' || f === 'fk5') out[target] = 'equatorial';
        else if (f === 'galactic' || f === 'gal') out[target] = 'galactic';
        else errors.push(issueOf(headerOf, spec.name, v, 'expected equatorial or galactic'));
        break;
      }
      case 'number': {
        if (!isDecimalNumber(v)) {
          const tooLong = v.length > MAX_NUMBER_CHARS ? ` (at most ${MAX_NUMBER_CHARS} characters; this cell has ${v.length})` : '';
          errors.push(issueOf(headerOf, spec.name, v, `expected a number${spec.unit ? ` in ${spec.unit}` : ''}${tooLong}`));
          break;
        }
        let n = Number(v);
        if (!Number.isFinite(n)) {
          errors.push(issueOf(headerOf, spec.name, v, `expected a finite number${spec.unit ? ` in ${spec.unit}` : ''}`));
          break;
        }
        if (spec.percentOf) n /= 100;
        out[target] = n;
        break;
      }
    }
  }
  if (out.instrument === undefined && defaults.instrument) out.instrument = defaults.instrument;

  // angles outside [0, 180) are the same axis: wrap, and say so
  if (typeof out.theta_deg === 'number' && Number.isFinite(out.theta_deg) && (out.theta_deg < 0 || out.theta_deg >= 180)) {
    const w = wrapAngle180(out.theta_deg);
    warnings.push(issueOf(headerOf, 'theta_deg', text.theta_deg, `angle ${out.theta_deg}° wrapped to ${Number(w.toFixed(6))}° (axial, 180° periodic)`));
    out.theta_deg = w;
  }
  if (errors.length) return { row: null, errors, warnings };

  if (!validateRow(out)) {
    for (const e of validateRow.errors ?? []) {
      if (/\/anyOf\/\d+\//.test(e.schemaPath)) continue; // branch details; the anyOf error says it plainly
      errors.push(schemaIssue(e, out, text, headerOf));
    }
    return { row: null, errors: dedupeIssues(errors), warnings };
  }
  return { row: out as unknown as CanonicalRow, errors, warnings };
}

function issueOf(headerOf: (canon: string) => string, canon: string, value: string | undefined, message: string): RowIssue {
  return { column: headerOf(canon), field: canon, ...(value !== undefined ? { value: quoted(value) } : {}), message };
}

/** A cell quoted back in a message: long cells are cut (the stored upload keeps them whole). */
function quoted(v: string): string {
  return v.length > MAX_QUOTED_CHARS ? `${v.slice(0, MAX_QUOTED_CHARS)}… (${v.length} characters)` : v;
}

/**
 * True when `s` is a plain decimal number: [+-] digits [. digits] [(e|E) [+-] digits], with at
 * least one digit before or after the point, and at most MAX_NUMBER_CHARS characters.
 * One pass, no backtracking: time is linear in the length, and long cells stop at the cap.
 * (A regular expression with nested digit runs, /^\d+\.?\d*…$/, backtracks quadratically.)
 */
function isDigitAt(s: string, k: number): boolean {
  const c = s.charCodeAt(k);
  return c >= 48 && c <= 57;
}

export function isDecimalNumber(s: string): boolean {
  const n = s.length;
  if (n === 0 || n > MAX_NUMBER_CHARS) return false;
  let i = 0;
  if (s[i] === '+' || s[i] === '-') i++;
  let mantissaDigits = 0;
  while (i < n && isDigitAt(s, i)) {
    i++;
    mantissaDigits++;
  }
  if (i < n && s[i] === '.') {
    i++;
    while (i < n && isDigitAt(s, i)) {
      i++;
      mantissaDigits++;
    }
  }
  if (mantissaDigits === 0) return false;
  if (i < n && (s[i] === 'e' || s[i] === 'E')) {
    i++;
    if (i < n && (s[i] === '+' || s[i] === '-')) i++;
    let expDigits = 0;
    while (i < n && isDigitAt(s, i)) {
      i++;
      expDigits++;
    }
    if (expDigits === 0) return false;
  }
  return i === n;
}

/**
 * An unsigned 64-bit identifier as canonical text (no leading zeros), or null: digits only and
 * at most 2^64 − 1 = 18446744073709551615 (compared as text: same length, then lexically).
 */
export function unsignedId(s: string): string | null {
  if (s.length === 0 || s.length > 64) return null;
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c < 48 || c > 57) return null;
  }
  let k = 0;
  while (k < s.length - 1 && s[k] === '0') k++;
  const t = s.slice(k);
  if (t.length > MAX_SOURCE_ID.length || (t.length === MAX_SOURCE_ID.length && t > MAX_SOURCE_ID)) return null;
  return t;
}

function dedupeIssues(list: RowIssue[]): RowIssue[] {
  const seen = new Set<string>();
  return list.filter((i) => {
    const k = `${i.field}|${i.message}`;
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}

/** An ajv error in the words of the row: which column, which value, what was expected. */
function schemaIssue(e: ErrorObject, out: Record<string, unknown>, text: Record<string, string | undefined>, headerOf: (c: string) => string): RowIssue {
  const field = e.instancePath.replace(/^\//, '');
  const spec = COLUMN_BY_NAME.get(field);
  const unit = spec?.unit && spec.unit !== 'fraction' ? ` ${spec.unit.split(' ')[0]}` : '';
  const sourceName = (f: string) => (text[f] !== undefined ? f : text[`${f}_pct`] !== undefined ? `${f}_pct` : f);
  const value = field ? text[sourceName(field)] : undefined;
  const mk = (f: string, message: string): RowIssue => ({ column: headerOf(sourceName(f)), field: f, ...(value !== undefined ? { value: quoted(value) } : {}), message });
  const p = e.params as Record<string, unknown>;
  switch (e.keyword) {
    case 'minimum':
    case 'maximum':
    case 'exclusiveMinimum':
    case 'exclusiveMaximum': {
      const frac = spec?.unit === 'fraction' && text[`${field}_pct`] !== undefined ? ` (${String(p.limit)} as a fraction = ${Number(p.limit) * 100} %)` : '';
      const op = { minimum: '≥', maximum: '≤', exclusiveMinimum: '>', exclusiveMaximum: '<' }[e.keyword];
      return mk(field, `expected a value ${op} ${String(p.limit)}${unit}${frac}, got ${String(out[field])}`);
    }
    case 'enum':
      return mk(field, `expected one of ${(p.allowedValues as unknown[]).join(', ')}`);
    case 'required':
      return { column: headerOf(String(p.missingProperty)), field: String(p.missingProperty), message: `${String(p.missingProperty)} is required` };
    case 'dependentRequired':
      return { column: headerOf(String(p.missingProperty)), field: String(p.missingProperty), message: `${String(p.missingProperty)} is required when ${String(p.property)} is given` };
    case 'anyOf': {
      const parent = e.parentSchema as { 'x-column'?: string; 'x-message'?: string } | undefined;
      const f = parent?.['x-column'] ?? '(row)';
      return { column: headerOf(f), field: f, message: parent?.['x-message'] ?? 'a required combination of columns is missing' };
    }
    case 'pattern':
      return mk(field, field === 'source_id' ? `expected an unsigned 64-bit integer identifier: digits only, at most ${MAX_SOURCE_ID}` : 'expected digits only');
    case 'additionalProperties':
      return { column: String(p.additionalProperty), field: String(p.additionalProperty), message: 'not a known column' };
    default:
      return mk(field || '(row)', e.message ?? 'invalid value');
  }
}
