/**
 * Hostile and careless uploads: each answers a 4xx that names the line, field and limit, or
 * rejects the row with such a message, and never blocks the server. Expected values are from the
 * files built here (byte offsets counted by hand from their construction).
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { isDecimalNumber, normaliseRow, unsignedId } from '../../server/measurements/normalise.js';
import { neutraliseCell, safeCsv } from '../../server/intake/csv.js';

const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';
/** A CSV cell: quoted when it holds a comma or a quote (RFC 4180). */
const cell = (v: string) => (/[",]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);
const row = (name: string, extra: Partial<Record<'source_id' | 'q' | 'band' | 'q_err' | 'ra', string>> = {}) =>
  [name, extra.source_id ?? '', extra.ra ?? '10.5', '20.25', extra.band ?? 'V', extra.q ?? '0.01', '0.01', extra.q_err ?? '0.001', '0.001', '1', '0.1', '61000', 'KR-HAWK'].map(cell).join(',');

let t: TestApp;
let observer: request.Agent;
beforeAll(async () => {
  t = await makeTestApp();
  observer = await signedIn(t.app, 'observer');
});
afterAll(async () => t.close());

async function upload(body: Buffer | string, name = 'night.csv', fields: [string, string][] = []) {
  let req = observer.post('/api/v1/batches');
  for (const [k, v] of fields) req = req.field(k, v);
  return req.attach('file', Buffer.isBuffer(body) ? body : Buffer.from(body), name);
}

async function counts() {
  const out: Record<string, number> = {};
  for (const table of ['batches', 'batch_rows', 'measurements', 'stars']) out[table] = Number((await t.db(table).count({ n: '*' }))[0].n);
  return out;
}

/** Rows of ~50 bytes that push the interesting bytes past the first 256 KB (the old sniff window). */
const filler = (n: number, tag: string) => Array.from({ length: n }, (_, i) => row(`${tag}${i}`, { ra: String(10 + i / 1e5) })).join('\n');

describe('number cells are parsed in linear time', () => {
  const hostile = `${'1'.repeat(60000)}e${'1'.repeat(60000)}x`;

  it('the 120 KB cell is refused by the linear scanner at once', () => {
    // the former pattern /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/ took 26.5 s on this cell (quadratic backtracking)
    const t0 = performance.now();
    expect(isDecimalNumber(hostile)).toBe(false);
    const r = normaliseRow({ ra_deg: '10', dec_deg: '20', band: 'V', q: hostile, u: '0', q_err: '0.1', u_err: '0.1', instrument: 'KR-HAWK' }, (c) => c);
    expect(performance.now() - t0).toBeLessThan(1000);
    expect(r.errors[0].field).toBe('q');
    expect(r.errors[0].message).toMatch(/expected a number .*at most 64 characters; this cell has 120002/);
    expect(r.errors[0].value!.length).toBeLessThan(300); // the message quotes the start, not 120 KB
  });

  it('the decimal scanner agrees with the grammar on edge cases (common practice: JSON/C number syntax)', () => {
    for (const ok of ['0', '-0', '+1', '1.', '.5', '-0.5', '1e5', '1E-5', '2.5e+3', '00012']) expect(isDecimalNumber(ok), ok).toBe(true);
    for (const bad of ['', '.', '-', '+', 'e5', '1e', '1e+', '1.2.3', 'NaN', 'Infinity', '-Infinity', '0x10', '1_000', ' 1', '1 ', '1e5x', '--1']) expect(isDecimalNumber(bad), bad).toBe(false);
  });

  it('an upload with the hostile cell (240 KB file) is checked and the row rejected, naming the column and the limit', async () => {
    const body = `${HEADER}\n${row('HOSTILE', { q: hostile })}\n${row('FINE')}\n`;
    expect(body.length).toBeGreaterThan(120_000);
    const res = await upload(body, 'hostile.csv');
    expect(res.status).toBe(201);
    expect(res.body.state).toBe('awaiting_review');
    expect(res.body.counts).toMatchObject({ rows: 2, rejected: 1, accepted: 1 });
    const rows = await observer.get(`/api/v1/batches/${res.body.id}/rows?state=rejected`);
    expect(rows.body.rows[0].line).toBe(2);
    expect(rows.body.rows[0].errors[0]).toMatchObject({ column: 'q', field: 'q' });
    expect(rows.body.rows[0].errors[0].message).toMatch(/at most 64 characters/);
  });
});

describe('source ids are unsigned 64-bit integers kept as text', () => {
  it('unsignedId: 2^64 − 1 is the largest (Python int(2**64 - 1) = 18446744073709551615, from memory)', () => {
    expect(unsignedId('18446744073709551615')).toBe('18446744073709551615');
    expect(unsignedId('0018446744073709551615')).toBe('18446744073709551615');
    expect(unsignedId('18446744073709551616')).toBeNull();
    expect(unsignedId('99999999999999999999')).toBeNull();
    expect(unsignedId('000')).toBe('0');
    expect(unsignedId('-1')).toBeNull();
    expect(unsignedId('1e5')).toBeNull();
  });

  it('an upload keeps 2^64 − 1 exactly and rejects 2^64', async () => {
    const res = await upload(`${HEADER}\n${row('MAXID', { source_id: '18446744073709551615', ra: '11.5' })}\n${row('OVER', { source_id: '18446744073709551616', ra: '12.5' })}\n`, 'ids.csv');
    expect(res.status).toBe(201);
    expect(res.body.counts).toMatchObject({ rows: 2, accepted: 1, rejected: 1 });
    const ok = await observer.get(`/api/v1/batches/${res.body.id}/rows?state=accepted`);
    expect(ok.body.rows[0].star.sourceId).toBe('18446744073709551615');
    const bad = await observer.get(`/api/v1/batches/${res.body.id}/rows?state=rejected`);
    expect(bad.body.rows[0].errors[0]).toMatchObject({ field: 'source_id', value: '18446744073709551616' });
    expect(bad.body.rows[0].errors[0].message).toMatch(/at most 18446744073709551615/);
  });
});

describe('file structure', () => {
  it('blank lines before the header are skipped and the line numbers stay those of the file', async () => {
    const res = await upload(`\n  \r\n${HEADER}\n${row('BLANKFIRST', { ra: '13.5' })}\n${row('BLANKSECOND', { ra: '13.6', band: 'Q' })}\n`, 'blank-first.csv');
    expect(res.status).toBe(201);
    expect(res.body.counts).toMatchObject({ rows: 2, accepted: 1, rejected: 1 });
    const rows = await observer.get(`/api/v1/batches/${res.body.id}/rows`);
    expect(rows.body.rows.map((r: { line: number }) => r.line)).toEqual([4, 5]);
    expect(rows.body.rows[0].values.name).toBe('BLANKFIRST');
    expect(rows.body.rows[1].errors[0]).toMatchObject({ field: 'band', value: 'Q' });
  });

  it('a header of 43,395 distinct names is refused at once with a true message', async () => {
    const names = Array.from({ length: 43395 }, (_, i) => `col${i}`);
    const before = await counts();
    const res = await upload(`${names.join(',')}\n${names.map(() => '1').join(',')}\n`, 'wide.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/names 43,395 columns; at most 1,000/);
    expect(await counts()).toEqual(before);
  });

  it('a duplicate header name is named with both positions', async () => {
    const res = await upload(`${HEADER},Band\n${row('DUP')},V\n`, 'dup.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/"band" \/ "Band".* columns 5 and 14/);
  });

  it('invalid UTF-8 past 256 KB names its byte offset and line', async () => {
    const head = `${HEADER}\n${filler(6000, 'U')}\n`;
    expect(Buffer.byteLength(head)).toBeGreaterThan(256 * 1024);
    const bad = Buffer.concat([Buffer.from(head), Buffer.from('Stern '), Buffer.from([0xe9]), Buffer.from('toile,,1,2,V,0.01,0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n')]);
    const offset = Buffer.byteLength(head) + 'Stern '.length;
    const before = await counts();
    const res = await upload(bad, 'latin1-tail.csv');
    expect(res.status).toBe(415);
    expect(res.body.error.message).toContain(`byte ${offset.toLocaleString('en-US')}, line 6,002`);
    expect(await counts()).toEqual(before);
  });

  it('a NUL byte past 256 KB is refused (the whole file is checked)', async () => {
    const head = `${HEADER}\n${filler(6000, 'N')}\n`;
    const bad = Buffer.concat([Buffer.from(head), Buffer.from('X,,1,2,V,0.01,0.01\u0000,0.001,0.001,1,0.1,61000,KR-HAWK\n')]);
    const offset = Buffer.byteLength(head) + 'X,,1,2,V,0.01,0.01'.length;
    const res = await upload(bad, 'nul-tail.csv');
    expect(res.status).toBe(415);
    expect(res.body.error.message).toContain(`NUL byte (binary data) at byte ${offset.toLocaleString('en-US')}, line 6,002`);
  });

  it('a 10 MB field names the line and the limit', async () => {
    const before = await counts();
    const res = await upload(`${HEADER}\n${row('HUGE', { q: 'x'.repeat(10 * 1024 * 1024) })}\n`, 'huge-field.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/^Line 2 holds a field or record longer than the limit of 1,048,576 characters/);
    expect(await counts()).toEqual(before);
  });

  it('an unclosed quote after the preview rows fails the batch naming the line, and stores nothing of it', async () => {
    // line 22 opens a quote that never closes: the field runs on into line 23 and past the limit
    const body = `${HEADER}\n${filler(20, 'Q')}\nOPEN,,10.5,20.25,V,"0.01,0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n${'y'.repeat(1_100_000)}\n`;
    const before = await counts();
    const res = await upload(body, 'open-quote.csv');
    expect([201, 400]).toContain(res.status);
    if (res.status === 201) {
      expect(res.body.state).toBe('failed');
      expect(res.body.failure).toMatch(/^Line 22 holds a field or record longer than the limit/);
      expect((await counts()).measurements).toBe(before.measurements);
    }
  });
});

describe('multipart fields and file names', () => {
  it('a non-ASCII file name is kept as sent (UTF-8)', async () => {
    const name = 'nuit-étoilée-北天-Ω.csv';
    const res = await upload(`${HEADER}\n${row('UTF8NAME', { ra: '14.5' })}\n`, name);
    expect(res.status).toBe(201);
    expect(res.body.filename).toBe(name);
    const raw = await observer.get(`/api/v1/batches/${res.body.id}/raw`);
    expect(raw.status).toBe(200);
    expect(raw.headers['content-disposition']).toContain(encodeURIComponent('étoilée').replace(/%/g, '%'));
  });

  it('a NUL byte in the file name is a 400 naming the file field', async () => {
    const before = await counts();
    const res = await upload(`${HEADER}\n${row('NULNAME', { ra: '15.5' })}\n`, 'evil\u0000.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields[0].field).toBe('file');
    expect(res.body.error.message).toMatch(/NUL byte in the file name/);
    expect(await counts()).toEqual(before);
    expect(fs.readdirSync(path.join(t.dir, 'uploads', 'tmp'))).toEqual([]);
  });

  it('two instrument fields are a 400 naming the field', async () => {
    const res = await upload(`${HEADER}\n${row('TWOINST', { ra: '16.5' })}\n`, 'two.csv', [['instrument', 'KR-HAWK'], ['instrument', 'KR-HAWK']]);
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields[0].field).toBe('instrument');
    expect(res.body.error.message).toMatch(/"instrument" was sent 2 times/);
  });
});

describe('CSV a person opens neutralises formulas (OWASP, CSV Injection) and keeps numbers', () => {
  it('neutraliseCell', () => {
    expect(neutraliseCell('=HYPERLINK("http://x.example","y")')).toBe('\'=HYPERLINK("http://x.example","y")');
    expect(neutraliseCell("+cmd|' /C calc'!A0")).toBe("'+cmd|' /C calc'!A0");
    expect(neutraliseCell('@SUM(1+1)')).toBe("'@SUM(1+1)");
    expect(neutraliseCell('\tx')).toBe("'\tx");
    expect(neutraliseCell('\rx')).toBe("'\rx");
    expect(neutraliseCell('-1+2')).toBe("'-1+2");
    expect(neutraliseCell('-0.5')).toBe('-0.5');
    expect(neutraliseCell('+1e3')).toBe('+1e3');
    expect(neutraliseCell('KR-HAWK')).toBe('KR-HAWK');
    expect(safeCsv([['a', -0.5, '=1'], ['b,c', 2, '"q"']])).toBe('a,-0.5,\'=1\r\n"b,c",2,"""q"""\r\n');
  });

  it('errors.csv of a batch with formula cells', async () => {
    const body = [
      HEADER,
      row('=HYPERLINK("http://evil.example","click")', { band: '=HYPERLINK("http://evil.example","click")', ra: '17.5' }),
      row('PLUS', { band: "+cmd|' /C calc'!A0", ra: '17.6' }),
      row('AT', { band: '@SUM(1+1)', ra: '17.7' }),
      row('NEG', { q_err: '-0.5', ra: '17.8' }),
    ].join('\n');
    const res = await upload(`${body}\n`, 'formulas.csv');
    expect(res.status).toBe(201);
    const csv = await observer.get(`/api/v1/batches/${res.body.id}/errors.csv`);
    expect(csv.status).toBe(200);
    const lines = csv.text.split('\r\n');
    expect(lines[0]).toBe('line,state,column,field,value,message');
    expect(lines[1]).toMatch(/^2,rejected,band,band,"'=HYPERLINK\(""http:\/\/evil.example"",""click""\)",/);
    expect(lines[2]).toMatch(/^3,rejected,band,band,'\+cmd\|' \/C calc'!A0,/);
    expect(lines[3]).toMatch(/^4,rejected,band,band,'@SUM\(1\+1\),/);
    expect(lines[4]).toMatch(/^5,rejected,q_err,q_err,-0\.5,/);
    for (const l of lines.slice(1).filter(Boolean)) for (const cell of l.split(',')) expect(cell).not.toMatch(/^[=+@\t\r]/);
  });
});
