import fs from 'node:fs';
import { parse } from 'csv-parse';
import { AppError, badRequest } from '../errors.js';

export interface CsvHead {
  headers: string[];
  delimiter: string;
  preview: string[][];
}

const SNIFF_BYTES = 256 * 1024;

/**
 * Look at the start of an uploaded file: reject what is not a UTF-8 CSV with a data row, find
 * the delimiter (comma, semicolon or tab), read the header and a preview of the first rows.
 */
export async function sniffCsv(filePath: string, previewRows = 10): Promise<CsvHead> {
  const fd = fs.openSync(filePath, 'r');
  const buf = Buffer.alloc(SNIFF_BYTES);
  const n = fs.readSync(fd, buf, 0, SNIFF_BYTES, 0);
  fs.closeSync(fd);
  let bytes = buf.subarray(0, n);
  if (n === 0) throw badRequest('The file is empty: expected a CSV file with a header line and at least one data row.', { fields: [{ field: 'file', message: 'empty file' }] });
  if (bytes.includes(0)) throw new AppError(415, 'not_csv', 'The file is not a CSV text file (it contains binary data). Export the table as comma-separated text (UTF-8).', { fields: [{ field: 'file', message: 'binary content' }] });
  if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) bytes = bytes.subarray(3);
  // cut at the last full line so a multi-byte character split at the sniff boundary is not an error
  const cut = n === SNIFF_BYTES ? bytes.lastIndexOf(0x0a) : bytes.length;
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes.subarray(0, cut > 0 ? cut : bytes.length));
  } catch {
    throw new AppError(415, 'not_utf8', 'The file is not valid UTF-8 text. Save it as UTF-8 (with or without BOM) and upload again.', { fields: [{ field: 'file', message: 'undecodable bytes' }] });
  }
  const lines = text.split(/\r?\n/).filter((l) => l.trim() !== '');
  if (lines.length === 0) throw badRequest('The file has no text lines: expected a header line and at least one data row.', { fields: [{ field: 'file', message: 'no lines' }] });
  const first = lines[0];
  const counts = { ',': (first.match(/,/g) ?? []).length, ';': (first.match(/;/g) ?? []).length, '\t': (first.match(/\t/g) ?? []).length };
  const delimiter = (Object.entries(counts).sort((a, b) => b[1] - a[1])[0][1] > 0 ? Object.entries(counts).sort((a, b) => b[1] - a[1])[0][0] : ',') as string;
  if (counts[','] === 0 && counts[';'] === 0 && counts['\t'] === 0) {
    throw new AppError(415, 'not_csv', 'The first line has no comma, semicolon or tab: expected a CSV header line naming the columns.', { fields: [{ field: 'file', message: 'no delimiter in the header line' }] });
  }
  const records: string[][] = await new Promise((resolve, reject) => {
    parse(lines.slice(0, previewRows + 1).join('\n'), { delimiter, relax_column_count: true, relax_quotes: true, trim: true, skip_empty_lines: true }, (err, out: string[][]) => (err ? reject(err) : resolve(out)));
  }).catch((e: Error) => {
    throw badRequest(`The start of the file cannot be read as CSV: ${e.message}`, { fields: [{ field: 'file', message: e.message }] });
  }) as string[][];
  const headers = records[0].map((h) => h.trim());
  if (headers.some((h) => h === '')) throw badRequest(`The header line has an empty column name (column ${headers.findIndex((h) => h === '') + 1}). Every column needs a name.`, { fields: [{ field: 'file', message: 'empty header name' }] });
  const dup = headers.find((h, i) => headers.findIndex((x) => x.toLowerCase() === h.toLowerCase()) !== i);
  if (dup) throw badRequest(`The header line names the column "${dup}" twice.`, { fields: [{ field: 'file', message: `duplicate header ${dup}` }] });
  if (records.length < 2) throw badRequest('The file has a header line but no data rows.', { fields: [{ field: 'file', message: 'header only' }] });
  return { headers, delimiter, preview: records.slice(1, previewRows + 1) };
}

/** Rows per chunk: each chunk is checked and written as a unit. */
export const CSV_CHUNK_ROWS = 2000;

export interface CsvRecord {
  line: number;
  fields: string[];
}

/**
 * Stream the data rows of a stored upload, with their line numbers (the header is line 1).
 * Invalid UTF-8 anywhere fails the read with the byte offset; `onBytes` reports progress.
 */
export async function* readCsvRows(filePath: string, delimiter: string, onBytes?: (bytes: number) => void): AsyncGenerator<CsvRecord[]> {
  const decoder = new TextDecoder('utf-8', { fatal: true });
  let offset = 0;
  const parser = parse({ delimiter, bom: true, relax_column_count: true, relax_quotes: true, trim: true, skip_empty_lines: true, info: true, from_line: 2 });
  const input = fs.createReadStream(filePath, { highWaterMark: 1 << 20 });
  const feed = (async () => {
    try {
      for await (const chunk of input) {
        let text: string;
        try {
          text = decoder.decode(chunk as Buffer, { stream: true });
        } catch {
          throw badRequest(`The file is not valid UTF-8 near byte ${offset}.`);
        }
        offset += (chunk as Buffer).length;
        onBytes?.(offset);
        if (!parser.write(text)) await new Promise((r) => parser.once('drain', r));
      }
      parser.end();
    } catch (e) {
      parser.destroy(e as Error);
    }
  })();
  let batch: CsvRecord[] = [];
  let done = false;
  try {
    for await (const item of parser as AsyncIterable<{ record: string[]; info: { lines: number } }>) {
      batch.push({ line: item.info.lines, fields: item.record });
      if (batch.length >= CSV_CHUNK_ROWS) {
        yield batch;
        batch = [];
      }
    }
    await feed;
    done = true;
    if (batch.length) yield batch;
  } finally {
    // the reader stopped early: release the file
    if (!done) {
      input.destroy();
      parser.destroy();
    }
  }
}
