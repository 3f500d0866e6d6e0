import { deriveMeasurement, designation, INDEX_NSIDE, MEAS_NUM, normaliseRow, type CanonicalRow, type ColumnMapping, type Derived, type RowIssue } from '../measurements/service.js';
import { ang2pixNest } from '../science/healpix.js';
import { icrsToGalactic } from '../science/frames.js';
import type { CsvRecord } from './csv.js';

/**
 * The database-free half of checking a batch: field count, normalise, instrument and band,
 * derive (without the catalog parallax), and the star a new row would create. Runs on a worker thread for large files; the output is flat arrays
 * (cheap to structured-clone). Rows that could use a matched star's parallax carry their canonical
 * row so the main thread can derive them again once the star is known.
 */
export interface PrepareContext {
  headers: string[];
  mapping: ColumnMapping;
  batchInstrument: string | null;
  /** lower-case code → instrument */
  instruments: [string, { code: string; bands: string[] }][];
  crossmatchArcsec: number;
}

/** Numeric slots per row in `num` (NaN = null). */
export const NUM = {
  ra_deg: 0, dec_deg: 1, glon_deg: 2, glat_deg: 3, hpx15: 4, mjd: 5, q: 6, u: 7, q_err: 8, u_err: 9, p: 10, p_err: 11, p_debiased: 12,
  theta_deg: 13, theta_err_deg: 14, q_gal: 15, u_gal: 16, q_gal_err: 17, u_gal_err: 18, theta_gal_deg: 19, parallax_mas: 20, parallax_err_mas: 21,
  distance_pc: 22, distance_lo_pc: 23, distance_hi_pc: 24, ebv: 25,
  // the row's position (ICRS as given, or derived from Galactic) and the star it would create
  pos_ra: 26, pos_dec: 27, star_glon: 28, star_glat: 29, star_hpx15: 30, star_plx: 31, star_plx_err: 32,
} as const;
export const NUM_SLOTS = 33;
/** slot of each numeric stored column (MEAS_NUM), in its order */
const MEAS_SLOTS = MEAS_NUM.map((k) => NUM[k]);

export interface PreparedChunk {
  n: number;
  lines: Int32Array;
  valuesJson: string[];
  /** 1 when the row passed every check */
  ok: Uint8Array;
  errorsJson: (string | null)[];
  warningsJson: (string | null)[];
  num: Float64Array;
  band: (string | null)[];
  instrument: (string | null)[];
  distanceMethod: (string | null)[];
  flagsJson: (string | null)[];
  sourceId: (string | null)[];
  /** name of the star a new row creates */
  starName: (string | null)[];
  /** rows with no parallax and no distance: the canonical row and its normalise warnings */
  redo: ({ row: CanonicalRow; warnings: RowIssue[] } | null)[];
}

const nn = (v: number | null) => (v === null ? NaN : v);

/** Write the derived values of row i (also used when the main thread derives a row again): the numeric stored columns (MEAS_NUM, NaN for null) and the text ones. */
export function writeDerived(c: PreparedChunk, i: number, d: Derived): void {
  const o = i * NUM_SLOTS;
  const a = c.num;
  const v = d as unknown as Record<string, number | null | undefined>;
  for (let k = 0; k < MEAS_NUM.length; k++) a[o + MEAS_SLOTS[k]] = nn(v[MEAS_NUM[k]] ?? null);
  c.band[i] = d.band;
  c.instrument[i] = d.instrument;
  c.distanceMethod[i] = d.distance_method;
  c.flagsJson[i] = d.flags.length ? JSON.stringify(d.flags) : null;
}

/** Normalise warnings followed by derive warnings (named by the uploaded header), as stored. */
export function warningsJsonOf(normWarnings: RowIssue[], deriveWarnings: Omit<RowIssue, 'column'>[], headerOf: (canon: string) => string): string | null {
  if (!normWarnings.length && !deriveWarnings.length) return null;
  return JSON.stringify([...normWarnings, ...deriveWarnings.map((w) => ({ ...w, column: headerOf(w.field) }))]);
}

export function chunkPreparer(ctx: PrepareContext) {
  const { headers, mapping } = ctx;
  const indexOf = [...Object.entries(mapping).map(([canon, header]) => [canon, headers.indexOf(header)] as const)];
  const headerOf = (canon: string) => mapping[canon] ?? canon;
  const instruments = new Map(ctx.instruments);
  const known = [...instruments.values()].map((i) => i.code).join(', ');

  return function prepare(records: CsvRecord[]): PreparedChunk {
    const n = records.length;
    const c: PreparedChunk = {
      n, lines: new Int32Array(n), valuesJson: new Array(n), ok: new Uint8Array(n), errorsJson: new Array(n).fill(null), warningsJson: new Array(n).fill(null),
      num: new Float64Array(n * NUM_SLOTS).fill(NaN), band: new Array(n).fill(null), instrument: new Array(n).fill(null), distanceMethod: new Array(n).fill(null),
      flagsJson: new Array(n).fill(null), sourceId: new Array(n).fill(null), starName: new Array(n).fill(null), redo: new Array(n).fill(null),
    };
    for (let i = 0; i < n; i++) {
      const rec = records[i];
      c.lines[i] = rec.line;
      c.valuesJson[i] = JSON.stringify(rec.fields);
      const text: Record<string, string | undefined> = {};
      for (const [canon, idx] of indexOf) text[canon] = idx >= 0 ? rec.fields[idx] : undefined;
      const errors: RowIssue[] = [];
      if (rec.fields.length !== headers.length && !(rec.fields.length > headers.length && rec.fields.slice(headers.length).every((f) => f === ''))) {
        errors.push({ column: '(row)', field: '(row)', message: `expected ${headers.length} fields as in the header line, found ${rec.fields.length}` });
      }
      const res = normaliseRow(text, headerOf, { instrument: ctx.batchInstrument });
      errors.push(...res.errors);
      if (res.row) {
        const inst = instruments.get(res.row.instrument.toLowerCase());
        if (!inst) errors.push({ column: headerOf('instrument'), field: 'instrument', value: res.row.instrument, message: `unknown instrument; registered: ${known}` });
        else {
          res.row.instrument = inst.code;
          if (!inst.bands.includes(res.row.band)) errors.push({ column: headerOf('band'), field: 'band', value: res.row.band, message: `${inst.code} observes in ${inst.bands.join(', ')} only` });
        }
      }
      if (errors.length || !res.row) {
        c.errorsJson[i] = JSON.stringify(errors);
        c.warningsJson[i] = res.warnings.length ? JSON.stringify(res.warnings) : null;
        continue;
      }
      const row = res.row;
      c.ok[i] = 1;
      const { derived, warnings } = deriveMeasurement(row);
      writeDerived(c, i, derived);
      c.warningsJson[i] = warningsJsonOf(res.warnings, warnings, headerOf);
      if (row.distance_pc === undefined && row.parallax_mas === undefined) c.redo[i] = { row, warnings: res.warnings };
      // position used for matching and for a new star (galactic input: the derived ICRS position)
      const galIn = row.ra_deg === undefined;
      const ra = galIn ? derived.ra_deg : row.ra_deg!;
      const dec = galIn ? derived.dec_deg : row.dec_deg!;
      const o = i * NUM_SLOTS;
      const g = icrsToGalactic(ra, dec);
      c.num[o + NUM.pos_ra] = ra;
      c.num[o + NUM.pos_dec] = dec;
      c.num[o + NUM.star_glon] = g.lDeg;
      c.num[o + NUM.star_glat] = g.bDeg;
      c.num[o + NUM.star_hpx15] = galIn ? ang2pixNest(INDEX_NSIDE, ra, dec) : derived.hpx15;
      c.num[o + NUM.star_plx] = nn(row.parallax_mas ?? null);
      c.num[o + NUM.star_plx_err] = nn(row.parallax_err_mas ?? null);
      c.sourceId[i] = row.source_id ?? null;
      c.starName[i] = row.name ?? designation(ra, dec);
    }
    return c;
  };
}


/** Values of MEAS_COLS (measurements/stored.ts) for row i of a prepared chunk. */
export function measurementValues(c: PreparedChunk, i: number, id: number, starId: number | null, batchId: number, rowId: number, state: string, now: string, conflictsWith: number | null): unknown[] {
  const v: unknown[] = [id, starId, batchId, rowId, state, 1, c.band[i], c.instrument[i], c.distanceMethod[i], c.flagsJson[i], conflictsWith, now, now];
  const o = i * NUM_SLOTS;
  for (const k of MEAS_SLOTS) {
    const x = c.num[o + k];
    v.push(Number.isNaN(x) ? null : x);
  }
  return v;
}
