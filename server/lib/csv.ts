/**
 * The one CSV writer for answers people open in spreadsheets: csv-stringify with every text cell
 * made formula-safe, either whole (safeCsv, small answers) or in pieces streamed with
 * backpressure (csvChunks + streamCsv, large answers). Reading CSV is intake's (server/intake/csv.ts).
 */
import type { Response } from 'express';
import { stringify } from 'csv-stringify/sync';

/** True when the text is a plain decimal number (written as is: a spreadsheet reads it as a number). */
function plainNumber(s: string): boolean {
  if (s.length === 0 || s.length > 64) return false;
  const n = s.length;
  const digit = (k: number) => k < n && s.charCodeAt(k) >= 48 && s.charCodeAt(k) <= 57;
  let i = s[0] === '+' || s[0] === '-' ? 1 : 0;
  const intStart = i;
  while (digit(i)) i++;
  let digits = i - intStart;
  if (s[i] === '.') {
    const fracStart = ++i;
    while (digit(i)) i++;
    digits += i - fracStart;
  }
  if (digits === 0) return false;
  if (s[i] === 'e' || s[i] === 'E') {
    i++;
    if (s[i] === '+' || s[i] === '-') i++;
    const expStart = i;
    while (digit(i)) i++;
    if (i === expStart) return false;
  }
  return i === n;
}

/**
 * A text cell made safe to open in a spreadsheet (OWASP, "CSV Injection"): a cell starting with
 * =, +, -, @, tab or carriage return would be read as a formula, so it gets a leading single
 * quote. Plain numbers (−0.5, +1e3) are left alone so they stay numbers.
 */
export function neutraliseCell(s: string): string {
  if (s.length === 0) return s;
  const c = s[0];
  if ((c === '=' || c === '+' || c === '-' || c === '@' || c === '\t' || c === '\r') && !(c !== '=' && c !== '@' && plainNumber(s))) return `'${s}`;
  return s;
}

/** csv-stringify options shared by every CSV a person may open: formula cells neutralised, numbers as numbers. */
export const SAFE_CSV_CAST = {
  string: (v: string) => neutraliseCell(v),
  number: (v: number) => (Number.isNaN(v) ? '' : String(v)),
  boolean: (v: boolean) => (v ? '1' : '0'),
  date: (v: Date) => v.toISOString(),
};

/** Rows as CSV text (CRLF line ends by default), every text cell neutralised. */
export function safeCsv(rows: unknown[][], opts: { eol?: string } = {}): string {
  return stringify(rows, { cast: SAFE_CSV_CAST, record_delimiter: opts.eol === '\n' ? 'unix' : 'windows' });
}

// ---------------------------------------------------------------------------------------------
// Commented CSV answers (provenance and units first), whole or in pieces

export interface CsvColumn<R> {
  name: string;
  /** unit, or '1' for a dimensionless number, '' for text */
  unit: string;
  about: string;
  get: (r: R) => unknown;
}

/** Rows per piece of a streamed CSV: the event loop gets a turn between pieces. */
export const CSV_ROWS_PER_CHUNK = 500;

/**
 * A CSV with '# ' comment lines first (provenance, then one line per column with its unit), then
 * the header row and the rows, as pieces of about CSV_ROWS_PER_CHUNK rows, every cell through
 * safeCsv.
 */
export function* csvChunks<R>(comments: string[], columns: CsvColumn<R>[], rows: Iterable<R>): Generator<string> {
  const oneLine = (text: string) => text.replace(/[\r\n]+/g, ' ');
  const head: string[] = comments.map((c) => `# ${oneLine(c)}`);
  head.push('# columns (name: unit; meaning):');
  for (const c of columns) head.push(`#   ${c.name}: ${c.unit || 'text'}; ${oneLine(c.about)}`);
  yield `${head.join('\n')}\n${safeCsv([columns.map((c) => c.name)], { eol: '\n' })}`;
  let batch: unknown[][] = [];
  for (const r of rows) {
    batch.push(columns.map((c) => c.get(r)));
    if (batch.length >= CSV_ROWS_PER_CHUNK) {
      yield safeCsv(batch, { eol: '\n' });
      batch = [];
    }
  }
  if (batch.length) yield safeCsv(batch, { eol: '\n' });
}

/** The whole commented CSV as one string (small answers and tests). */
export function writeCsv<R>(comments: string[], columns: CsvColumn<R>[], rows: Iterable<R>): string {
  let out = '';
  for (const piece of csvChunks(comments, columns, rows)) out += piece;
  return out;
}

/**
 * Stream CSV pieces to the response: each piece is written with backpressure (wait for 'drain')
 * and the event loop gets a turn between pieces, so a large answer neither sits in memory whole
 * nor blocks other requests. Stops when the client goes away.
 */
export async function streamCsv(res: Response, pieces: Iterable<string>): Promise<void> {
  for (const piece of pieces) {
    if (res.destroyed || res.writableEnded) return;
    if (!res.write(piece)) {
      await new Promise<void>((resolve) => {
        const done = () => {
          res.off('drain', done);
          res.off('close', done);
          resolve();
        };
        res.once('drain', done);
        res.once('close', done);
      });
    } else await new Promise<void>((resolve) => setImmediate(resolve));
  }
  if (!res.destroyed) res.end();
}
