import { describe, expect, it } from 'vitest';
import { parse } from 'csv-parse/sync';
import { CSV_ROWS_PER_CHUNK, csvChunks, neutraliseCell, safeCsv, writeCsv, type CsvColumn } from '../../server/lib/csv';

describe('neutraliseCell', () => {
  // OWASP "CSV Injection": cells starting with = + - @ tab CR run as formulas in spreadsheets
  it('quotes formula starts and leaves plain numbers alone', () => {
    for (const s of ['=SUM(A1)', '+cmd', '-1+2', '@x', '\tx', '\rx', '-', '+', '-.']) expect(neutraliseCell(s)).toBe(`'${s}`);
    for (const s of ['-0.5', '+1e3', '-.5', '-5.', '-1E-7', 'plain', '', '12=3']) expect(neutraliseCell(s)).toBe(s);
    expect(neutraliseCell('-1e')).toBe("'-1e");
    expect(neutraliseCell('=1')).toBe("'=1");
  });
});

describe('safeCsv', () => {
  it('quotes separators and quotes (RFC 4180), CRLF by default, LF on request', () => {
    expect(safeCsv([['a', -0.5, '=1'], ['b,c', 2, '"q"']])).toBe('a,-0.5,\'=1\r\n"b,c",2,"""q"""\r\n');
    expect(safeCsv([[true, NaN, null]], { eol: '\n' })).toBe('1,,\n');
  });
});

describe('csvChunks', () => {
  const columns: CsvColumn<number>[] = [
    { name: 'n', unit: '1', about: 'row number', get: (r) => r },
    { name: 'label', unit: '', about: 'text, line\nbreak in the note', get: (r) => (r === 1 ? '=HYPERLINK("x")' : `row ${r}`) },
  ];

  it('writes comments, header and rows in pieces of CSV_ROWS_PER_CHUNK that join to the whole', () => {
    const rows = Array.from({ length: CSV_ROWS_PER_CHUNK * 2 + 3 }, (_, i) => i);
    const pieces = [...csvChunks(['made by a test', 'two\nlines'], columns, rows)];
    expect(pieces).toHaveLength(1 + 3); // head, two full pieces, the rest
    const whole = writeCsv(['made by a test', 'two\nlines'], columns, rows);
    expect(pieces.join('')).toBe(whole);
    const lines = whole.split('\n');
    expect(lines.slice(0, 5)).toEqual(['# made by a test', '# two lines', '# columns (name: unit; meaning):', '#   n: 1; row number', '#   label: text; text, line break in the note']);
    const records = parse(whole, { comment: '#', columns: true, relax_column_count: false }) as { n: string; label: string }[];
    expect(records).toHaveLength(rows.length);
    expect(records[1]).toEqual({ n: '1', label: '\'=HYPERLINK("x")' });
    expect(records[rows.length - 1]).toEqual({ n: String(rows.length - 1), label: `row ${rows.length - 1}` });
  });
});
