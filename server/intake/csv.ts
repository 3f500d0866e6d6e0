import fs from 'node:fs';
import { isUtf8 } from 'node:buffer';
import { parse, type CsvError } from 'csv-parse';
import { AppError, badRequest } from '../errors.js';

export interface CsvHead {
  headers: string[];
  delimiter: string;
  preview: string[][];
}

const SNIFF_BYTES = 256 * 1024;
/** Longest record (one line, or several when a quoted field spans lines), in characters. */
export const MAX_RECORD_CHARS = 1024 * 1024;
/** Most columns a header line may name. */
export const MAX_COLUMNS = 1000;

const fmt = (n: number) => n.toLocaleString('en-US');
const fileField = (message: string) => ({ fields: [{ field: 'file', message }] });

/** 415: the bytes are not UTF-8 text; names the byte offset (0-based) and the line (1-based). */
function notText(kind: 'nul' | 'utf8', byteOffset: number, line: number): AppError {
  if (kind === 'nul') {
    return new AppError(415, 'not_csv', `The file is not a CSV text file: it contains a NUL byte (binary data) at byte ${fmt(byteOffset)}, line ${fmt(line)}. Export the table as comma-separated text (UTF-8).`, fileField(`binary content at byte ${byteOffset}, line ${line}`));
  }
  return new AppError(415, 'not_utf8', `The file is not valid UTF-8 text: the bytes at byte ${fmt(byteOffset)}, line ${fmt(line)} cannot be decoded. Save it as UTF-8 (with or without BOM) and upload again.`, fileField(`undecodable bytes at byte ${byteOffset}, line ${line}`));
}

/** 400: a record longer than MAX_RECORD_CHARS. */
export function recordTooLong(line: number): AppError {
  return badRequest(`Line ${fmt(line)} holds a field or record longer than the limit of ${fmt(MAX_RECORD_CHARS)} characters (an unclosed quote makes the rest of the file one field). Check the quoting of that line.`, {
    fields: [{ field: 'file', message: `line ${line}: record over ${MAX_RECORD_CHARS} characters` }],
  });
}

/**
 * Offset of the first byte of `buf` that breaks UTF-8 (RFC 3629: no overlongs, no surrogates,
 * at most U+10FFFF), or -1. A sequence cut by the end of the buffer counts as valid when
 * `partialOk` (the next chunk continues it); its start is then returned in `tail`.
 */
export function firstInvalidUtf8(buf: Uint8Array, partialOk: boolean): { bad: number; tail: number } {
  const n = buf.length;
  let i = 0;
  while (i < n) {
    const b = buf[i];
    if (b < 0x80) {
      i++;
      continue;
    }
    let need: number;
    let lo = 0x80;
    let hi = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      if (b === 0xe0) lo = 0xa0;
      if (b === 0xed) hi = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      if (b === 0xf0) lo = 0x90;
      if (b === 0xf4) hi = 0x8f;
    } else return { bad: i, tail: n };
    for (let k = 1; k <= need; k++) {
      if (i + k >= n) return partialOk ? { bad: -1, tail: i } : { bad: i, tail: n };
      const c = buf[i + k];
      if (c < (k === 1 ? lo : 0x80) || c > (k === 1 ? hi : 0xbf)) return { bad: i, tail: n };
    }
    i += need + 1;
  }
  return { bad: -1, tail: n };
}

/**
 * Where the valid UTF-8 of a chunk ends: `tail` is the start of a sequence cut by the chunk end
 * (carried into the next chunk), `bad` the first invalid byte or -1. Native isUtf8 first; the
 * byte-by-byte scan runs only on a chunk that fails.
 */
function scanChunk(chunk: Buffer): { bad: number; tail: number } {
  let cut = chunk.length;
  for (let i = chunk.length - 1; i >= Math.max(0, chunk.length - 4); i--) {
    if ((chunk[i] & 0xc0) !== 0x80) {
      if (chunk[i] >= 0xc0) cut = i;
      break;
    }
  }
  if (isUtf8(chunk.subarray(0, cut))) return { bad: -1, tail: cut };
  return firstInvalidUtf8(chunk, true);
}

const countNewlines = (buf: Uint8Array, end: number) => {
  let n = 0;
  for (let i = buf.indexOf(0x0a); i !== -1 && i < end; i = buf.indexOf(0x0a, i + 1)) n++;
  return n;
};

/**
 * Check every byte of a stored upload, streaming (memory stays at one chunk): no NUL byte, and
 * valid UTF-8 throughout. The error names the exact byte offset and line. Time is linear
 * (Buffer.indexOf and the native isUtf8; the byte-by-byte scan runs only on a chunk that fails).
 */
export async function checkTextBytes(filePath: string): Promise<{ bytes: number; lines: number }> {
  let offset = 0;
  let line = 1;
  let carry: Buffer = Buffer.alloc(0);
  for await (const raw of fs.createReadStream(filePath, { highWaterMark: 1 << 20 })) {
    const chunk = carry.length ? Buffer.concat([carry, raw as Buffer]) : (raw as Buffer);
    const base = offset - carry.length;
    const nul = chunk.indexOf(0);
    if (nul !== -1) throw notText('nul', base + nul, line + countNewlines(chunk, nul));
    const r = scanChunk(chunk);
    if (r.bad !== -1) throw notText('utf8', base + r.bad, line + countNewlines(chunk, r.bad));
    const tail = r.tail;
    line += countNewlines(chunk, tail);
    carry = Buffer.from(chunk.subarray(tail));
    offset += (raw as Buffer).length;
  }
  if (carry.length) {
    const r = firstInvalidUtf8(carry, false);
    if (r.bad !== -1) throw notText('utf8', offset - carry.length + r.bad, line);
  }
  return { bytes: offset, lines: line };
}

/** Read up to `length` bytes at `position`. */
function readAt(fd: number, position: number, length: number): Buffer {
  const buf = Buffer.alloc(length);
  const n = fs.readSync(fd, buf, 0, length, position);
  return buf.subarray(0, n);
}

/**
 * Look at the start of an uploaded file: reject what is not a UTF-8 CSV with a data row (the
 * whole file is checked for NUL bytes and UTF-8), find the delimiter (comma, semicolon or tab)
 * from the first non-blank line, read the header and a preview of the first rows.
 */
export async function sniffCsv(filePath: string, previewRows = 10): Promise<CsvHead> {
  const size = fs.statSync(filePath).size;
  if (size === 0) throw badRequest('The file is empty: expected a CSV file with a header line and at least one data row.', fileField('empty file'));
  await checkTextBytes(filePath);

  // the header line: the first line that is not blank, found within SNIFF_BYTES + MAX_RECORD_CHARS·4 bytes
  const fd = fs.openSync(filePath, 'r');
  let head: Buffer;
  let delimiter = ',';
  try {
    head = readAt(fd, 0, Math.min(size, SNIFF_BYTES));
    let headerText: string | null = null;
    let headerLine = 0;
    let pos = head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf ? 3 : 0;
    let lineNo = 1;
    for (;;) {
      let nl = head.indexOf(0x0a, pos);
      if (nl === -1 && head.length < size) {
        // the line continues past what was read: read on, up to the record limit (≤ 4 bytes a character)
        head = Buffer.concat([head, readAt(fd, head.length, Math.max(0, Math.min(size - head.length, pos + MAX_RECORD_CHARS * 4 + 4 - head.length)))]);
        nl = head.indexOf(0x0a, pos);
        if (nl === -1 && head.length < size) throw recordTooLong(lineNo);
      }
      const end = nl === -1 ? head.length : nl;
      const text = head.subarray(pos, end).toString('utf8').replace(/\r$/, '');
      if (text.trim() !== '') {
        if (text.length > MAX_RECORD_CHARS) throw recordTooLong(lineNo);
        headerText = text;
        headerLine = lineNo;
        break;
      }
      if (nl === -1) break;
      pos = nl + 1;
      lineNo++;
    }
    if (headerText === null) throw badRequest('The file has no text lines: expected a header line and at least one data row.', fileField('no lines'));
    const counts = { ',': 0, ';': 0, '\t': 0 };
    for (const ch of headerText) if (ch === ',' || ch === ';' || ch === '\t') counts[ch]++;
    if (counts[','] === 0 && counts[';'] === 0 && counts['\t'] === 0) {
      throw new AppError(415, 'not_csv', `The first line (line ${headerLine}) has no comma, semicolon or tab: expected a CSV header line naming the columns.`, fileField('no delimiter in the header line'));
    }
    delimiter = (Object.entries(counts) as [string, number][]).sort((a, b) => b[1] - a[1])[0][0];
    if (counts[delimiter as ',' | ';' | '\t'] + 1 > MAX_COLUMNS) {
      throw badRequest(`The header line (line ${headerLine}) names ${fmt(counts[delimiter as ',' | ';' | '\t'] + 1)} columns; at most ${fmt(MAX_COLUMNS)} are accepted. Remove the columns Starveil does not need (see GET /api/v1/intake/columns).`, fileField(`over ${MAX_COLUMNS} columns`));
    }
  } finally {
    fs.closeSync(fd);
  }

  // the header and the first rows, parsed as the full check will parse them
  const records = await readHead(filePath, delimiter, previewRows + 1);
  const headers = records[0].fields.map((h) => h.trim());
  const empty = headers.findIndex((h) => h === '');
  if (empty !== -1) throw badRequest(`The header line (line ${records[0].line}) has an empty column name (column ${empty + 1}). Every column needs a name.`, fileField('empty header name'));
  const seen = new Map<string, number>();
  for (let i = 0; i < headers.length; i++) {
    const k = headers[i].toLowerCase();
    const first = seen.get(k);
    if (first !== undefined) {
      const same = headers[first] === headers[i] ? `"${headers[i]}"` : `"${headers[first]}" / "${headers[i]}" (names differing only in case count as one)`;
      throw badRequest(`The header line names the column ${same} twice: columns ${first + 1} and ${i + 1}.`, fileField(`duplicate header ${headers[i]}`));
    }
    seen.set(k, i);
  }
  if (records.length < 2) throw badRequest(`The file has a header line but no data rows (the header is line ${records[0].line}).`, fileField('header only'));
  return { headers, delimiter, preview: records.slice(1, previewRows + 1).map((r) => r.fields) };
}

/** The first `count` records (header first), with their line numbers; blank leading lines skipped. */
async function readHead(filePath: string, delimiter: string, count: number): Promise<CsvRecord[]> {
  const out: CsvRecord[] = [];
  for await (const batch of readCsvRecords(filePath, delimiter, { includeHeader: true, limit: count })) {
    out.push(...batch);
    if (out.length >= count) break;
  }
  return out.slice(0, count);
}

/** Rows per chunk: each chunk is checked and written as a unit. */
export const CSV_CHUNK_ROWS = 2000;
/**
 * Characters per chunk: a chunk of wide or long rows ends sooner, so the memory a chunk takes
 * (in the parse worker, whose heap is small, and on its way to the check) stays bounded whatever
 * the rows look like.
 */
export const CSV_CHUNK_CHARS = 4 << 20;

export interface CsvRecord {
  line: number;
  fields: string[];
}

/** A record of empty fields only (a blank or whitespace-only line). */
const blank = (fields: string[]) => fields.every((f) => f === '');

/**
 * Stream the data rows of a stored upload, with their line numbers (blank lines before the header
 * are skipped and counted). Invalid UTF-8 or a NUL byte anywhere fails the read naming the byte
 * offset and line; a record over MAX_RECORD_CHARS fails naming its line. `onBytes` reports progress.
 */
export async function* readCsvRows(filePath: string, delimiter: string, onBytes?: (bytes: number) => void): AsyncGenerator<CsvRecord[]> {
  yield* readCsvRecords(filePath, delimiter, { includeHeader: false, onBytes });
}

/** One record as read: its fields and the (1-based) line it ends on. */
interface Item {
  record: string[];
  info: { lines: number };
}

/** Does the file contain a double quote anywhere? (a quick byte scan; decides the reader) */
async function hasQuote(filePath: string): Promise<boolean> {
  for await (const chunk of fs.createReadStream(filePath, { highWaterMark: 1 << 20 }) as AsyncIterable<Buffer>) if (chunk.indexOf(34) !== -1) return true;
  return false;
}

/** Characters csv-parse's `trim` removes before a field (its timchars: CR, LF, FF, space, tab); after a field it applies String#trimEnd. */
const LTRIM = /^[\r\n\f \t]+/;

/**
 * Records of text without any double quote, exactly as csv-parse reads them with the options of
 * readCsvRecords (tested against csv-parse itself): one record per line (CRLF, LF or CR), fields
 * split at the delimiter, trimmed; empty and whitespace-only lines skipped (their lines counted).
 * Several times faster than the general parser on the plain files most instruments write.
 */
export function quoteFreeSplitter(delimiter: string) {
  let pending = '';
  let line = 0;
  const maxChars = MAX_RECORD_CHARS;
  const recordOf = (text: string, out: Item[]) => {
    line++;
    // an empty line, or one of trimmed characters only (a tab is a delimiter first when it is the delimiter)
    if (text.length === 0 || (!text.includes(delimiter) && text.replace(LTRIM, '').length === 0)) return;
    const fields = text.split(delimiter);
    let size = 0;
    for (let i = 0; i < fields.length; i++) {
      let f = fields[i];
      const c = f.charCodeAt(0);
      if (c === 32 || c === 9 || c === 12 || c === 13 || c === 10) f = f.replace(LTRIM, '');
      f = f.trimEnd();
      fields[i] = f;
      size += f.length;
    }
    if (size > maxChars) throw recordTooLong(line);
    out.push({ record: fields, info: { lines: line } });
  };
  return {
    /** Text of the file in order; returns the records completed by it. */
    write(text: string): Item[] {
      const out: Item[] = [];
      let s = pending + text;
      let start = 0;
      for (;;) {
        let i = start;
        // next line break (a CR at the very end waits: it may be the first half of CRLF)
        let j = -1;
        for (; i < s.length; i++) {
          const c = s.charCodeAt(i);
          if (c === 10 || c === 13) {
            j = i;
            break;
          }
        }
        if (j === -1 || (s.charCodeAt(j) === 13 && j === s.length - 1)) break;
        recordOf(s.slice(start, j), out);
        start = s.charCodeAt(j) === 13 && s.charCodeAt(j + 1) === 10 ? j + 2 : j + 1;
      }
      s = s.slice(start);
      // a line without its break yet: bounded memory (the record check proper is on its fields)
      if (s.length > 4 * maxChars) throw recordTooLong(line + 1);
      pending = s;
      return out;
    },
    /** The end of the file: the last line, without a line break. */
    end(): Item[] {
      const out: Item[] = [];
      if (pending.endsWith('\r')) pending = pending.slice(0, -1) + '\n';
      if (pending.length) {
        if (pending.endsWith('\n')) recordOf(pending.slice(0, -1), out);
        else recordOf(pending, out);
      }
      pending = '';
      return out;
    },
  };
}

async function* readCsvRecords(filePath: string, delimiter: string, opts: { includeHeader: boolean; limit?: number; onBytes?: (bytes: number) => void }): AsyncGenerator<CsvRecord[]> {
  let offset = 0;
  let line = 1;
  let carry: Buffer = Buffer.alloc(0);
  const decoder = new TextDecoder('utf-8');
  // the head needs a few records: read it in small chunks so the parser does not run through megabytes
  const input = fs.createReadStream(filePath, { highWaterMark: opts.limit ? 1 << 14 : 1 << 20 });
  let lastLine = 0;
  /** The bytes of one read, checked (NUL, UTF-8) and decoded; a sequence cut by the read's end waits for the next. */
  const textOf = (raw: Buffer): string => {
    const chunk = carry.length ? Buffer.concat([carry, raw]) : raw;
    const base = offset - carry.length;
    const nul = chunk.indexOf(0);
    if (nul !== -1) throw notText('nul', base + nul, line + countNewlines(chunk, nul));
    const r = scanChunk(chunk);
    if (r.bad !== -1) throw notText('utf8', base + r.bad, line + countNewlines(chunk, r.bad));
    line += countNewlines(chunk, r.tail);
    carry = Buffer.from(chunk.subarray(r.tail));
    offset += raw.length;
    opts.onBytes?.(offset);
    return decoder.decode(chunk.subarray(0, r.tail), { stream: true });
  };
  const checkEnd = () => {
    if (carry.length) throw notText('utf8', offset - carry.length, line);
  };

  let items: AsyncIterable<Item>;
  let parser: ReturnType<typeof parse> | null = null;
  let feed: Promise<void> = Promise.resolve();
  if (!opts.limit && !(await hasQuote(filePath))) {
    const splitter = quoteFreeSplitter(delimiter);
    items = (async function* () {
      for await (const raw of input) yield* splitter.write(textOf(raw as Buffer));
      checkEnd();
      yield* splitter.end();
    })();
  } else {
    const p = parse({ delimiter, bom: true, relax_column_count: true, relax_quotes: true, trim: true, skip_empty_lines: true, info: true, max_record_size: MAX_RECORD_CHARS, record_delimiter: ['\r\n', '\n', '\r'] });
    parser = p;
    feed = (async () => {
      try {
        for await (const raw of input) {
          if (!p.write(textOf(raw as Buffer))) await new Promise((res) => p.once('drain', res));
        }
        checkEnd();
        p.end();
      } catch (e) {
        p.destroy(e as Error);
      }
    })();
    items = p as AsyncIterable<Item>;
  }
  let batch: CsvRecord[] = [];
  let done = false;
  let headerSeen = false;
  let n = 0;
  /** characters in the chunk being gathered */
  let chars = 0;
  try {
    try {
      for await (const item of items) {
        if (!headerSeen) {
          // blank lines before the header (whitespace only, or empty fields) are not the header
          if (blank(item.record)) continue;
          headerSeen = true;
          if (!opts.includeHeader) {
            lastLine = item.info.lines;
            continue;
          }
        }
        lastLine = item.info.lines;
        batch.push({ line: item.info.lines, fields: item.record });
        n++;
        for (let f = 0; f < item.record.length; f++) chars += item.record[f].length + 1;
        if (batch.length >= CSV_CHUNK_ROWS || chars >= CSV_CHUNK_CHARS || (opts.limit && n >= opts.limit)) {
          yield batch;
          batch = [];
          chars = 0;
          if (opts.limit && n >= opts.limit) return;
        }
      }
    } catch (e) {
      if (e instanceof AppError) throw e;
      const ce = e as CsvError;
      if (ce?.code === 'CSV_MAX_RECORD_SIZE') throw recordTooLong(lastLine + 1);
      if (ce?.code && typeof ce.code === 'string' && ce.code.startsWith('CSV_')) {
        const at = (ce as unknown as { lines?: number }).lines ?? lastLine + 1;
        throw badRequest(`Line ${fmt(at)} cannot be read as CSV: ${ce.message}`, { fields: [{ field: 'file', message: `line ${at}: ${ce.code}` }] });
      }
      throw e;
    }
    await feed;
    done = true;
    if (batch.length) yield batch;
  } finally {
    // the reader stopped early: release the file
    if (!done) {
      input.destroy();
      parser?.destroy();
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Writing CSV lives in server/lib/csv.ts (one writer); re-exported for existing callers.
export { neutraliseCell, safeCsv } from '../lib/csv.js';
