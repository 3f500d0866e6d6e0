/**
 * Parsing right ascension and declination typed or uploaded as text.
 *
 * Accepted forms (common practice):
 *   RA  — decimal degrees "83.633" (0 ≤ α < 360), or hours–minutes–seconds:
 *         "05:34:31.9", "05 34 31.9", "5h34m31.9s" (also "05:34.5", "5h34.5m").
 *   Dec — decimal degrees "-5.391" (−90 ≤ δ ≤ 90), or degrees–arcminutes–arcseconds:
 *         "+22 00 52", "-05:23:28", "+22d00m52s", "-00 30 00" (the sign applies to the whole
 *         value, so −00°30′ is −0.5°), also "°", "′"/"'", "″"/'"' as separators.
 * Sexagesimal fields: the leading field is an integer, minutes and seconds are below 60, only
 * the last field may have a fraction.
 */

export type ParseResult = { ok: true; value: number } | { ok: false; message: string };

const RA_EXPECTED =
  'expected decimal degrees from 0 to below 360 (e.g. 83.633) or hours:minutes:seconds (e.g. 05:34:31.9, 05 34 31.9 or 5h34m31.9s)';
const DEC_EXPECTED =
  'expected decimal degrees from −90 to 90 (e.g. -5.391) or ±degrees:arcminutes:arcseconds (e.g. +22 00 52, -05:23:28 or +22d00m52s)';

const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
const FIELD = /^(\d+(\.\d*)?|\.\d+)$/;

function fail(what: string, text: string, why: string, expected: string): ParseResult {
  return { ok: false, message: `${what} "${text}": ${why}; ${expected}` };
}

interface Fields {
  negative: boolean;
  fields: string[];
  usedUnits: boolean;
}

/**
 * Split sexagesimal text into sign and 1–3 numeric fields. Unit letters (h/d/°, m/′/', s/″/")
 * must appear in order when used; colons and spaces are interchangeable separators.
 */
function splitSexagesimal(text: string, leadUnits: string): Fields | string {
  let s = text.trim();
  let negative = false;
  if (s.startsWith('+') || s.startsWith('-') || s.startsWith('−')) {
    negative = s[0] !== '+';
    s = s.slice(1).trim();
  }
  if (s.length === 0) return 'no number after the sign';
  // Normalise unit markers to a separator, checking their order.
  const units = [leadUnits, "m'′", 's"″'];
  let normalised = '';
  let nextUnit = 0;
  let usedUnits = false;
  for (const ch of s) {
    const idx = units.findIndex((u) => u.includes(ch.toLowerCase()));
    if (idx >= 0) {
      if (idx < nextUnit) return `unit "${ch}" out of order`;
      nextUnit = idx + 1;
      usedUnits = true;
      normalised += ' ';
    } else if (ch === ':' || /\s/.test(ch)) {
      normalised += ch === ':' ? ':' : ' ';
    } else {
      normalised += ch;
    }
  }
  if (usedUnits && normalised.includes(':')) return 'mixes unit letters and colons';
  const fields = normalised.trim().split(/\s*:\s*|\s+/);
  if (fields.some((f) => f.length === 0)) return 'has an empty field';
  if (fields.length > 3) return `has ${fields.length} fields, at most 3 are allowed`;
  return { negative, fields, usedUnits };
}

/** Combine validated fields to a value in the leading unit: a + b/60 + c/3600. */
function combineFields({ fields, usedUnits }: Fields, leadName: string): number | string {
  const values: number[] = [];
  for (let i = 0; i < fields.length; i++) {
    const f = fields[i];
    if (!FIELD.test(f)) return `"${f}" is not a number`;
    const isLast = i === fields.length - 1;
    if (!isLast && f.includes('.')) return `only the last field may have a decimal fraction, "${f}" has one`;
    const v = Number(f);
    if (i > 0 && v >= 60) return `${i === 1 ? 'minutes' : 'seconds'} ${f} must be below 60`;
    values.push(v);
  }
  if (fields.length === 1 && !usedUnits) return `a single ${leadName} field is ambiguous without a unit`;
  return values[0] + (values[1] ?? 0) / 60 + (values[2] ?? 0) / 3600;
}

function isSexagesimal(text: string): boolean {
  return /[:\s]|[hdms°′″'"]/i.test(text.trim().replace(/^[+\-−]\s*/, ''));
}

/** Right ascension in degrees from decimal degrees or sexagesimal hours (×15). */
export function parseRaDeg(input: string | number): ParseResult {
  const text = String(input).trim();
  if (text.length === 0) return { ok: false, message: `RA is empty; ${RA_EXPECTED}` };
  if (typeof input === 'number' || DECIMAL.test(text)) {
    const v = typeof input === 'number' ? input : Number(text);
    if (!Number.isFinite(v)) return fail('RA', text, 'is not a finite number', RA_EXPECTED);
    if (v < 0 || v >= 360) return fail('RA', text, 'is outside 0 to below 360 degrees', RA_EXPECTED);
    return { ok: true, value: v + 0 }; // "-0" → +0: a zero has no sign (IEEE 754: −0 + 0 = +0)
  }
  if (!isSexagesimal(text)) return fail('RA', text, 'is not a number', RA_EXPECTED);
  const split = splitSexagesimal(text, 'h');
  if (typeof split === 'string') return fail('RA', text, split, RA_EXPECTED);
  if (split.negative) return fail('RA', text, 'has a sign; right ascension is never negative', RA_EXPECTED);
  if (/[d°]/i.test(text)) return fail('RA', text, 'uses a degree marker; sexagesimal RA is in hours', RA_EXPECTED);
  const hours = combineFields(split, 'hours');
  if (typeof hours === 'string') return fail('RA', text, hours, RA_EXPECTED);
  if (Number(split.fields[0]) >= 24) return fail('RA', text, `hours ${split.fields[0]} must be below 24`, RA_EXPECTED);
  if (hours >= 24) return fail('RA', text, 'is 24h or more', RA_EXPECTED);
  return { ok: true, value: hours * 15 };
}

/** Declination in degrees from decimal degrees or signed sexagesimal degrees. */
export function parseDecDeg(input: string | number): ParseResult {
  const text = String(input).trim();
  if (text.length === 0) return { ok: false, message: `Dec is empty; ${DEC_EXPECTED}` };
  if (typeof input === 'number' || DECIMAL.test(text.replace(/^−/, '-'))) {
    const v = typeof input === 'number' ? input : Number(text.replace(/^−/, '-'));
    if (!Number.isFinite(v)) return fail('Dec', text, 'is not a finite number', DEC_EXPECTED);
    if (v < -90 || v > 90) return fail('Dec', text, 'is outside −90 to 90 degrees', DEC_EXPECTED);
    return { ok: true, value: v + 0 }; // "-0" → +0: a zero has no sign (IEEE 754: −0 + 0 = +0)
  }
  if (!isSexagesimal(text)) return fail('Dec', text, 'is not a number', DEC_EXPECTED);
  if (/h/i.test(text)) return fail('Dec', text, 'uses an hour marker; declination is in degrees', DEC_EXPECTED);
  const split = splitSexagesimal(text, 'd°');
  if (typeof split === 'string') return fail('Dec', text, split, DEC_EXPECTED);
  const deg = combineFields(split, 'degrees');
  if (typeof deg === 'string') return fail('Dec', text, deg, DEC_EXPECTED);
  if (deg > 90) return fail('Dec', text, 'is beyond ±90 degrees', DEC_EXPECTED);
  // "-00:30:00" is −0.5° (the sign belongs to the whole value); "-00:00:00" is +0, not −0.
  return { ok: true, value: (split.negative ? -deg : deg) + 0 };
}
