import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { CSV_CHUNK_CHARS, CSV_CHUNK_ROWS, quoteFreeSplitter, readCsvRows } from '../../server/intake/csv.js';

// Reference: csv-parse itself (the registry package the general reader uses), with the reader's
// options. The quote-free reader must give the same records and line numbers on any text
// without a double quote, however it is cut into reads.
const OPTIONS = { bom: true, relax_column_count: true, relax_quotes: true, trim: true, skip_empty_lines: true, info: true as const, record_delimiter: ['\r\n', '\n', '\r'] };
const reference = (text: string, delimiter: string) => (parse(text, { ...OPTIONS, delimiter }) as unknown as { record: string[]; info: { lines: number } }[]).map((r) => ({ record: r.record, lines: r.info.lines }));

function split(text: string, delimiter: string, cuts: number[]) {
  const s = quoteFreeSplitter(delimiter);
  const out: { record: string[]; lines: number }[] = [];
  let at = 0;
  for (const c of [...cuts.filter((x) => x > 0 && x < text.length)].sort((a, b) => a - b)) {
    for (const r of s.write(text.slice(at, c))) out.push({ record: r.record, lines: r.info.lines });
    at = c;
  }
  for (const r of s.write(text.slice(at))) out.push({ record: r.record, lines: r.info.lines });
  for (const r of s.end()) out.push({ record: r.record, lines: r.info.lines });
  return out;
}

const alphabet = ['a', 'B', '7', '.', '-', ',', ';', '\t', ' ', ' ', '\f', '\r', '\n', '\r\n', '\u00a0', 'é', '\u3000', 'x y'];

describe('quote-free CSV reader', () => {
  it('gives the records and line numbers csv-parse gives, however the text is cut', () => {
    fc.assert(
      fc.property(fc.array(fc.constantFrom(...alphabet), { maxLength: 120 }), fc.constantFrom(',', ';', '\t'), fc.array(fc.nat(200), { maxLength: 6 }), (parts, delimiter, cuts) => {
        const text = parts.join('');
        expect(split(text, delimiter, cuts)).toEqual(reference(text, delimiter));
      }),
      { numRuns: 3000 },
    );
  });

  it('reads a file the same whichever reader runs (a quote anywhere selects csv-parse)', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-csv-'));
    const rows = ['name,ra_deg,dec_deg', '', '  KS 1 , 10.5 ,-3', 'KS 2,11,\t-4\r', '\r', 'KS 3,12,-5,', '   ', 'KS 4,13,-6'];
    const plain = path.join(dir, 'plain.csv');
    const quoted = path.join(dir, 'quoted.csv');
    fs.writeFileSync(plain, rows.join('\n'));
    fs.writeFileSync(quoted, [...rows.slice(0, 7), 'KS 4,13,"-6"'].join('\n'));
    const read = async (p: string) => {
      const out: { line: number; fields: string[] }[] = [];
      for await (const chunk of readCsvRows(p, ',')) out.push(...chunk);
      return out;
    };
    const a = await read(plain);
    expect(a).toEqual(await read(quoted));
    expect(a.map((r) => r.line)).toEqual([3, 4, 6, 8]);
    expect(a[0].fields).toEqual(['KS 1', '10.5', '-3']);
    fs.rmSync(dir, { recursive: true, force: true });
  });
});

describe('chunks of the stored file', () => {
  it('end at 2,000 rows, or sooner when the rows are wide, and lose no row', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-chunks-'));
    try {
      // narrow rows: chunks of CSV_CHUNK_ROWS; 300 columns of 40 characters: about 4 MB per 340 rows
      for (const [cols, width, rows, quoted] of [[13, 8, 4500, false], [300, 40, 1200, false], [300, 40, 1200, true]] as const) {
        const file = path.join(dir, `w${cols}-${quoted}.csv`);
        const cell = (r: number, c: number) => (quoted && c === 0 ? `"r${r}"` : `${r}`.padStart(width, String(c % 10)));
        const lines = [Array.from({ length: cols }, (_, c) => `c${c}`).join(',')];
        for (let r = 0; r < rows; r++) lines.push(Array.from({ length: cols }, (_, c) => cell(r, c)).join(','));
        fs.writeFileSync(file, lines.join('\n') + '\n');
        const sizes: number[] = [];
        const seen: number[] = [];
        for await (const chunk of readCsvRows(file, ',')) {
          sizes.push(chunk.length);
          const chars = chunk.reduce((a, r) => a + r.fields.reduce((b, f) => b + f.length + 1, 0), 0);
          // a chunk passes the character bound by at most its last row
          expect(chars - chunk[chunk.length - 1].fields.reduce((b, f) => b + f.length + 1, 0)).toBeLessThan(CSV_CHUNK_CHARS);
          for (const r of chunk) seen.push(r.line);
        }
        expect(seen).toEqual(Array.from({ length: rows }, (_, i) => i + 2));
        if (cols === 13) expect(sizes.slice(0, -1).every((n) => n === CSV_CHUNK_ROWS)).toBe(true);
        else expect(Math.max(...sizes)).toBeLessThan(CSV_CHUNK_ROWS / 4);
      }
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
