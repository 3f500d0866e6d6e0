/**
 * Fuzz properties shared by the seeded run in `npm test` (tests/api/fuzz.test.ts) and the long
 * run of `npm run fuzz` (scripts/fuzz.ts). Each property returns nothing and throws on a failure;
 * fast-check shrinks the failing input. Inputs: CSV cells and files with bad quoting, binary
 * bytes, mixed encodings, huge fields, formulas, NaN, Infinity, −0, exponents, 64-bit ids.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { parse } from 'csv-parse/sync';
import { COLUMNS } from '../../server/measurements/columns.js';
import { isDecimalNumber, normaliseRow, unsignedId } from '../../server/measurements/normalise.js';
import { neutraliseCell, readCsvRows, safeCsv, sniffCsv } from '../../server/intake/csv.js';
import { AppError } from '../../server/errors.js';

// ---------------------------------------------------------------------------------------------
// Arbitraries

const specials = ['NaN', 'nan', 'Infinity', '-Infinity', 'inf', '-0', '+0', '0', '-0.0', '1e308', '1e309', '-1e309', '4.9e-324', '1e-400', '0x10', '1_000', '1,5', '١٢٣',
  '18446744073709551615', '18446744073709551616', '99999999999999999999', '00000000000000000000001', '9007199254740993', '-1', '',
  '=HYPERLINK("http://evil.example","x")', "+cmd|' /C calc'!A0", '-1+2', '@SUM(1+1)', '\tTAB', '\rCR', 'null', '--', 'V', 'Rc', 'ic', 'galactic', 'icrs',
  '05:34:31.9', '+22 00 52', '-00 30 00', '5h34m31.9s', '24:00:00', '+90 00 01', '12:60:00', '1e5e5', '.', '-.', '.e1', '1.e1', '  42  '];

/** Text a number-like cell might hold: decimal forms with exponents and signs, specials, junk. */
export const numberish: fc.Arbitrary<string> = fc.oneof(
  fc.double({ noDefaultInfinity: false }).map((x) => String(x)),
  fc.tuple(fc.double({ min: -2, max: 2, noNaN: true }), fc.integer({ min: 0, max: 12 })).map(([x, digits]) => x.toExponential(digits)),
  fc.tuple(fc.constantFrom('', '+', '-'), fc.stringMatching(/^[0-9]{0,30}$/), fc.constantFrom('', '.'), fc.stringMatching(/^[0-9]{0,10}$/), fc.constantFrom('', 'e', 'E', 'e+', 'e-'), fc.stringMatching(/^[0-9]{0,4}$/)).map((p) => p.join('')),
  fc.constantFrom(...specials),
  fc.bigInt({ min: 0n, max: 2n ** 70n }).map(String),
  fc.string({ maxLength: 20 }),
  fc.string({ unit: 'binary', maxLength: 12 }),
);

/** A row of cells keyed by canonical column name. */
export const rowText: fc.Arbitrary<Record<string, string | undefined>> = fc.record(
  Object.fromEntries(COLUMNS.map((c) => [c.name, fc.option(numberish, { nil: undefined, freq: 3 })])),
  { requiredKeys: [] },
) as fc.Arbitrary<Record<string, string | undefined>>;

const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';

/** A cell as written into a file: sometimes quoted properly, sometimes with broken quoting. */
const fileCell = fc.oneof(
  { weight: 6, arbitrary: numberish },
  { weight: 1, arbitrary: numberish.map((s) => `"${s.replace(/"/g, '""')}"`) },
  { weight: 1, arbitrary: numberish.map((s) => `"${s}`) },
  { weight: 1, arbitrary: fc.constantFrom('"a""b"', 'a"b', '"x"y', '""', '"', ',', '\r', 'é', '北', '🙂') },
  { weight: 1, arbitrary: fc.integer({ min: 1, max: 200_000 }).map((n) => 'x'.repeat(n)) },
);

const validRow = fc.record({
  name: fc.constantFrom('A', 'B', 'Étoile', '=1+1', '北'),
  ra: fc.double({ min: 0, max: 359.99, noNaN: true }),
  dec: fc.double({ min: -89.9, max: 89.9, noNaN: true }),
  q: fc.double({ min: -0.2, max: 0.2, noNaN: true }),
}).map((r) => [r.name, '', r.ra.toFixed(5), r.dec.toFixed(5), 'V', r.q.toFixed(5), '0.001', '0.001', '0.001', '1', '0.1', '61000', 'KR-HAWK'].join(','));

/** Whole files as bytes: a header (sometimes after blank lines), good and bad rows, odd encodings. */
export const csvFile: fc.Arbitrary<Buffer> = fc
  .tuple(
    fc.constantFrom('', '\n', '\r\n\r\n', '  \n', '\uFEFF'),
    fc.oneof({ weight: 8, arbitrary: fc.constantFrom(HEADER, HEADER.replace(/,/g, ';'), HEADER.replace(/,/g, '\t')) }, { weight: 1, arbitrary: fc.constantFrom(`${HEADER},band`, 'just words', '') }),
    fc.array(fc.oneof(validRow, fc.array(fileCell, { minLength: 1, maxLength: 15 }).map((cells) => cells.join(','))), { maxLength: 8 }),
    fc.constantFrom('\n', '\r\n', '\r'),
    fc.oneof({ weight: 8, arbitrary: fc.constant('utf8') }, { weight: 2, arbitrary: fc.constantFrom('latin1', 'utf16le', 'binary-tail', 'nul') }),
  )
  .map(([lead, header, rows, eol, enc]) => {
    const text = `${lead}${header}${eol}${rows.join(eol)}${eol}`;
    if (enc === 'utf8') return Buffer.from(text, 'utf8');
    if (enc === 'latin1') return Buffer.from(text.replace(/[^\u0000-\u00ff]/g, '?') + 'caf\u00e9\n', 'latin1');
    if (enc === 'utf16le') return Buffer.from(text, 'utf16le');
    if (enc === 'nul') return Buffer.concat([Buffer.from(text), Buffer.from([0]), Buffer.from('\n')]);
    return Buffer.concat([Buffer.from(text), Buffer.from([0xc3, 0x28, 0xa0, 0xa1, 0xff, 0x0a])]);
  });

// ---------------------------------------------------------------------------------------------
// Properties

/** normaliseRow never throws; a row it accepts has finite numbers and a 64-bit text id; errors name a field. */
export function normaliseProperty(numRuns: number, seed: number): void {
  fc.assert(
    fc.property(rowText, fc.constantFrom(null, 'KR-HAWK'), (text, instrument) => {
      const r = normaliseRow(text, (c) => c, { instrument });
      if (r.row) {
        if (r.errors.length) throw new Error('a row and errors at once');
        for (const [k, v] of Object.entries(r.row)) {
          if (typeof v === 'number' && !Number.isFinite(v)) throw new Error(`${k} = ${v} is not finite`);
        }
        if (r.row.source_id !== undefined && unsignedId(r.row.source_id) !== r.row.source_id) throw new Error(`source_id ${r.row.source_id} is not a canonical 64-bit id`);
      } else if (!r.errors.length) throw new Error('neither a row nor an error');
      for (const e of [...r.errors, ...r.warnings]) {
        if (!e.field || !e.message) throw new Error(`an issue without field or message: ${JSON.stringify(e)}`);
        if (e.value !== undefined && e.value.length > 300) throw new Error('an issue quotes more than 300 characters');
      }
    }),
    { numRuns, seed },
  );
}

/** The linear scanner agrees with the decimal grammar (checked by a reference regex on short input) and with Number(). */
export function decimalProperty(numRuns: number, seed: number): void {
  const GRAMMAR = /^[+-]?([0-9]+\.?[0-9]*|\.[0-9]+)([eE][+-]?[0-9]+)?$/; // the former pattern: fine on ≤ 64 characters
  fc.assert(
    fc.property(numberish, (s) => {
      const ours = isDecimalNumber(s);
      const ref = s.length <= 64 && GRAMMAR.test(s);
      if (ours !== ref) throw new Error(`isDecimalNumber(${JSON.stringify(s)}) = ${ours}, grammar says ${ref}`);
      if (ours && Number.isNaN(Number(s))) throw new Error(`${s} accepted but Number() gives NaN`);
    }),
    { numRuns, seed },
  );
}

/** Formula cells are neutralised, numbers stay numbers, and csv-parse reads back exactly what was written. */
export function safeCsvProperty(numRuns: number, seed: number): void {
  fc.assert(
    fc.property(fc.array(fc.array(fc.oneof(numberish, fc.double(), fc.constantFrom(null, undefined)), { minLength: 1, maxLength: 6 }), { minLength: 1, maxLength: 6 }), (rows) => {
      const text = safeCsv(rows);
      const back = parse(text, { relax_column_count: true, record_delimiter: '\r\n' }) as string[][];
      if (back.length !== rows.length) throw new Error(`${rows.length} rows written, ${back.length} read`);
      rows.forEach((row, i) => row.forEach((v, j) => {
        const got = back[i][j];
        const want = v === null || v === undefined ? '' : typeof v === 'number' ? (Number.isNaN(v) ? '' : String(v)) : neutraliseCell(v);
        if (got !== want) throw new Error(`cell ${i},${j}: wrote ${JSON.stringify(v)}, read ${JSON.stringify(got)}, expected ${JSON.stringify(want)}`);
        if (typeof v === 'string' && /^[=+\-@\t\r]/.test(got) && !(isDecimalNumber(got) && /^[+-]/.test(got))) throw new Error(`formula cell ${JSON.stringify(got)} left as is`);
      }));
    }),
    { numRuns, seed },
  );
}

/** Reading a file either refuses it with a 4xx AppError or yields rows with line numbers; nothing else. */
export async function csvFileProperty(numRuns: number, seed: number): Promise<{ refused: number; read: number }> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-fuzz-'));
  let refused = 0;
  let read = 0;
  let n = 0;
  try {
    await fc.assert(
      fc.asyncProperty(csvFile, async (bytes) => {
        const file = path.join(dir, `f${n++}.csv`);
        fs.writeFileSync(file, bytes);
        try {
          const head = await sniffCsv(file);
          let last = 0;
          for await (const chunk of readCsvRows(file, head.delimiter)) {
            for (const r of chunk) {
              if (!(r.line > last)) throw new Error(`line numbers not increasing: ${r.line} after ${last}`);
              last = r.line;
            }
          }
          read++;
        } catch (e) {
          if (!(e instanceof AppError) || e.status < 400 || e.status >= 500) throw e;
          refused++;
        } finally {
          fs.rmSync(file, { force: true });
        }
      }),
      { numRuns, seed },
    );
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return { refused, read };
}

// ---------------------------------------------------------------------------------------------
// HTTP

interface Agent {
  post: (url: string) => { attach: (f: string, b: Buffer, n: string) => PromiseLike<{ status: number; body: any }>; send: (b: unknown) => PromiseLike<{ status: number; body: any }> };
  get: (url: string) => PromiseLike<{ status: number; body: any }>;
}

/**
 * Uploads of fuzzed files as an observer: every answer is 200/201 (a batch), 400, 413 or 415;
 * never a 500; a batch that failed holds no rows (no partial batch).
 */
export async function uploadProperty(agent: Agent, db: { (t: string): any }, numRuns: number, seed: number): Promise<Record<string, number>> {
  const statuses: Record<string, number> = {};
  let i = 0;
  await fc.assert(
    fc.asyncProperty(csvFile, async (bytes) => {
      // a unique comment line keeps each upload's bytes distinct (uploads are de-duplicated by sha256)
      const body = Buffer.concat([bytes, Buffer.from(`\n# fuzz ${seed}-${i++}\n`)]);
      const res = await agent.post('/api/v1/batches').attach('file', body, `fuzz-${i}.csv`);
      statuses[res.status] = (statuses[res.status] ?? 0) + 1;
      if (![200, 201, 400, 413, 415].includes(res.status)) throw new Error(`upload answered ${res.status}: ${JSON.stringify(res.body).slice(0, 300)}`);
      if (res.status >= 400) {
        if (!res.body?.error?.message || !res.body.error.details?.fields?.[0]?.field) throw new Error(`a 4xx without a message naming the field: ${JSON.stringify(res.body)}`);
        return;
      }
      let b = res.body;
      for (let k = 0; k < 600 && b.state === 'checking'; k++) {
        await new Promise((r) => setTimeout(r, 50));
        b = (await agent.get(`/api/v1/batches/${b.id}`)).body;
      }
      if (b.state === 'failed') {
        const [{ n }] = await db('batch_rows').where({ batch_id: b.id }).count({ n: '*' });
        if (Number(n) !== 0) throw new Error(`failed batch ${b.id} kept ${n} rows`);
      } else if (!['awaiting_review', 'needs_mapping'].includes(b.state)) throw new Error(`batch ${b.id} ended ${b.state}`);
    }),
    { numRuns, seed },
  );
  return statuses;
}

/** Fuzzed query strings on the read routes and fuzzed JSON bodies on writes: never a 500. */
export async function requestProperty(reader: Agent, writer: Agent, mappingBatchId: number | null, numRuns: number, seed: number): Promise<Record<string, number>> {
  const statuses: Record<string, number> = {};
  const value = fc.oneof(numberish, fc.constantFrom('stars', 'csv', 'json', 'fits', 'moc-json', 'moc-ascii', 'cosmo', 'iau', 'KRPS-1', '%', '%00', '[]'));
  const query = fc.dictionary(fc.constantFrom('ra', 'dec', 'radius', 'nside', 'ipix', 'run', 'release', 'include', 'format', 'convention', 'minLayers', 'minStars', 'minJumpDeg', 'minSignificance', 'minDistancePc', 'maxDistancePc', 'cursor', 'limit', 'q', 'sort', 'order', 'offset'), value, { maxKeys: 6 });
  const route = fc.constantFrom('/api/v1/sightlines', '/api/v1/sky', '/api/v1/masks', '/api/v1/stars');
  const json: fc.Arbitrary<unknown> = fc.oneof(fc.jsonValue(), fc.dictionary(fc.constantFrom('ra_deg', 'dec_deg', 'q', 'u', 'band', 'instrument', 'source_id', 'name'), fc.oneof(numberish, fc.jsonValue())));
  await fc.assert(
    fc.asyncProperty(fc.oneof(fc.tuple(fc.constant('get'), route, query), fc.tuple(fc.constant('mapping'), fc.constant(''), json)), async ([kind, path, payload]) => {
      let res: { status: number; body: any };
      if (kind === 'get') {
        const qs = Object.entries(payload as Record<string, string>).map(([k, v]) => `${encodeURIComponent(k)}=${encodeURIComponent(v)}`).join('&');
        const p = path === '/api/v1/masks' && !/format=/.test(qs) ? `${path}?format=json&${qs}` : `${path}?${qs}`;
        res = await reader.get(p);
      } else {
        if (mappingBatchId === null) return;
        res = await writer.post(`/api/v1/batches/${mappingBatchId}/mapping`).send({ mapping: payload });
      }
      statuses[res.status] = (statuses[res.status] ?? 0) + 1;
      if (res.status >= 500) throw new Error(`${kind} ${path} ${JSON.stringify(payload)} answered ${res.status}: ${JSON.stringify(res.body).slice(0, 300)}`);
    }),
    { numRuns, seed },
  );
  return statuses;
}
