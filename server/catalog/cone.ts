// The cone query itself (index ranges, exact check) is server/lib/cone.ts, shared with tomography.
import { galacticToIcrs } from '../science/frames.js';
import { parseDecDeg, parseRaDeg } from '../science/sexagesimal.js';
import { badRequest } from '../errors.js';

/**
 * The centre of a cone search from query text: `ra`/`dec` in decimal degrees or sexagesimal
 * (RA in hours, e.g. 14:29:42.6 or 14h29m42.6s; Dec e.g. -18:18:24), the same forms an upload
 * accepts; or Galactic `l`/`b` in degrees, turned into ICRS. Nothing given → undefined.
 */
export function coneCentre(q: Record<string, unknown>): { ra?: number; dec?: number } {
  const text = (v: unknown) => (v === undefined || v === null || String(v).trim() === '' ? undefined : String(v));
  const ra = text(q.ra), dec = text(q.dec), l = text(q.l), b = text(q.b);
  const bad = (field: string, message: string) => badRequest(`${field}: ${message}`, { fields: [{ field, message }] });
  if ((l !== undefined || b !== undefined) && (ra !== undefined || dec !== undefined)) throw bad(l !== undefined ? 'l' : 'b', 'give either ra and dec, or l and b, not both');
  if (l !== undefined || b !== undefined) {
    if (l === undefined || b === undefined) throw bad(l === undefined ? 'l' : 'b', 'a Galactic cone needs l and b (degrees)');
    const lv = Number(l), bv = Number(b);
    if (!Number.isFinite(lv) || lv < 0 || lv >= 360) throw bad('l', `"${l}" is not a Galactic longitude; expected degrees, 0 ≤ l < 360`);
    if (!Number.isFinite(bv) || bv < -90 || bv > 90) throw bad('b', `"${b}" is not a Galactic latitude; expected degrees, −90 ≤ b ≤ 90`);
    const c = galacticToIcrs(lv, bv);
    return { ra: ((c.raDeg % 360) + 360) % 360, dec: c.decDeg };
  }
  const out: { ra?: number; dec?: number } = {};
  if (ra !== undefined) {
    const r = parseRaDeg(ra);
    if (!r.ok) throw bad('ra', r.message);
    out.ra = r.value;
  }
  if (dec !== undefined) {
    const d = parseDecDeg(dec);
    if (!d.ok) throw bad('dec', d.message);
    out.dec = d.value;
  }
  return out;
}
