import { COLUMN_BY_NAME, canonicalFor } from './columns.js';

/** canonical column name → the header of the uploaded file that holds it */
export type ColumnMapping = Record<string, string>;

export interface MappingProposal {
  headers: string[];
  mapping: ColumnMapping;
  /** canonical names that two or more headers could mean */
  ambiguous: Record<string, string[]>;
  /** headers that map to nothing */
  unmapped: string[];
  /** plain descriptions of required columns that are not mapped */
  missing: string[];
}

/** Required column groups, in plain words; `batchInstrument` satisfies the instrument column. */
export function missingColumns(mapping: ColumnMapping, opts: { batchInstrument?: string | null } = {}): string[] {
  // a fraction column counts as present when its percent form (name + "_pct") is mapped
  const has = (...cs: string[]) => cs.every((c) => c in mapping || `${c}_pct` in mapping);
  const missing: string[] = [];
  if (!has('ra_deg', 'dec_deg') && !has('glon_deg', 'glat_deg')) missing.push('a position: ra_deg and dec_deg (or glon_deg and glat_deg)');
  if (!has('q', 'u', 'q_err', 'u_err') && !has('p', 'p_err', 'theta_deg', 'theta_err_deg')) {
    missing.push('polarization: q, u, q_err, u_err (or their _pct forms) — or p, p_err, theta_deg, theta_err_deg');
  }
  if (!has('band')) missing.push('band');
  if (!has('instrument') && !opts.batchInstrument) missing.push('instrument (a column, or the batch’s instrument)');
  return missing;
}

/**
 * Propose a mapping from the file's headers: explicit choices first (`given`, then a saved
 * mapping for the instrument), then the synonym table. Two headers that mean the same column
 * are reported as ambiguous and left unmapped — never guessed.
 */
export function proposeMapping(headers: string[], given: ColumnMapping = {}, saved: ColumnMapping = {}, opts: { batchInstrument?: string | null } = {}): MappingProposal {
  const mapping: ColumnMapping = {};
  const claimed = new Set<string>();
  const present = new Set(headers);
  for (const source of [given, saved]) {
    for (const [canon, header] of Object.entries(source)) {
      if (canon in mapping || !COLUMN_BY_NAME.has(canon) || !present.has(header) || claimed.has(header)) continue;
      mapping[canon] = header;
      claimed.add(header);
    }
  }
  const candidates = new Map<string, string[]>();
  for (const h of headers) {
    if (claimed.has(h)) continue;
    const canon = canonicalFor(h);
    if (!canon || canon in mapping) continue;
    const list = candidates.get(canon);
    if (list) list.push(h);
    else candidates.set(canon, [h]);
  }
  const ambiguous: Record<string, string[]> = {};
  for (const [canon, hs] of candidates) {
    if (hs.length === 1) {
      mapping[canon] = hs[0];
      claimed.add(hs[0]);
    } else {
      // an exact (case-insensitive) canonical name wins over synonyms
      const exact = hs.filter((h) => h.trim().toLowerCase() === canon);
      if (exact.length === 1) {
        mapping[canon] = exact[0];
        claimed.add(exact[0]);
      } else ambiguous[canon] = hs;
    }
  }
  // a percent column and its fraction column both mapped is ambiguous too
  for (const [canon, spec] of COLUMN_BY_NAME) {
    if (spec.percentOf && canon in mapping && spec.percentOf in mapping) {
      ambiguous[spec.percentOf] = [mapping[spec.percentOf], mapping[canon]];
    }
  }
  const used = new Set([...Object.values(mapping), ...Object.values(ambiguous).flat()]);
  const unmapped = headers.filter((h) => !used.has(h));
  return { headers, mapping, ambiguous, unmapped, missing: missingColumns(mapping, opts) };
}

/** Check a mapping a person or script chose: every key canonical, every header present, none used twice. */
export function checkMapping(mapping: unknown, headers: string[]): { field: string; message: string }[] {
  const problems: { field: string; message: string }[] = [];
  if (!mapping || typeof mapping !== 'object' || Array.isArray(mapping)) return [{ field: 'mapping', message: 'mapping must be a JSON object of canonical column → header' }];
  const used = new Map<string, string>();
  const present = new Set(headers);
  // name the file's headers, but not tens of thousands of them
  const listed = headers.length <= 50 ? headers.join(', ') : `${headers.slice(0, 50).join(', ')}, … (${headers.length} in all)`;
  const entries = Object.entries(mapping as Record<string, unknown>);
  if (entries.length > COLUMN_BY_NAME.size * 2) return [{ field: 'mapping', message: `mapping has ${entries.length} entries; there are only ${COLUMN_BY_NAME.size} canonical columns` }];
  for (const [canon, header] of entries) {
    if (!COLUMN_BY_NAME.has(canon)) problems.push({ field: `mapping.${canon.slice(0, 100)}`, message: `${canon.slice(0, 100)} is not a canonical column (see GET /api/v1/intake/columns)` });
    else if (typeof header !== 'string' || !present.has(header)) problems.push({ field: `mapping.${canon}`, message: `header "${String(header).slice(0, 200)}" is not in the file (headers: ${listed})` });
    else if (used.has(header)) problems.push({ field: `mapping.${canon}`, message: `header "${header}" is already mapped to ${used.get(header)}` });
    else used.set(header, canon);
    const spec = COLUMN_BY_NAME.get(canon);
    if (spec?.percentOf && spec.percentOf in (mapping as object)) problems.push({ field: `mapping.${canon}`, message: `map either ${spec.percentOf} or ${canon}, not both` });
  }
  return problems;
}
