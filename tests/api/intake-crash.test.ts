// The server as a separate process: a SIGKILL in the middle of a chunked check, then a restart;
// and a broken session store that answers 503 instead of ending the process.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';
import { spawnServer, type ServerProcess } from '../../bench/server-process.js';

const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';
const ROWS = 60_000;
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-crash-'));
const ENV = { NODE_ENV: 'test', SESSION_SECRET: 'crash-test-secret-0123456789' };
let port: number | undefined;
let base = '';
let server: ServerProcess | null = null;

async function waitFor<T>(what: string, probe: () => Promise<T | undefined | false>, timeoutMs = 240_000): Promise<T> {
  const end = Date.now() + timeoutMs;
  let last: unknown;
  while (Date.now() < end) {
    try {
      const v = await probe();
      if (v) return v as T;
    } catch (e) {
      last = e;
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error(`timed out waiting for ${what} (${String(last ?? '')})\n${(server?.log() ?? '').slice(-3000)}`);
}

/** The server on the same port each time (the first start picks a free one), once /health answers. */
async function startServer(): Promise<void> {
  server = await spawnServer({ dataDir: dir, env: ENV, port });
  base = server.base;
  port = Number(new URL(base).port);
}

async function signIn(email: string): Promise<string> {
  const res = await fetch(`${base}/api/v1/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', origin: base }, body: JSON.stringify({ email, password: DEMO_PASSWORD }) });
  expect(res.status).toBe(200);
  return res.headers.get('set-cookie')!.split(';')[0];
}

const api = (cookie: string, p: string, init: RequestInit = {}) => fetch(`${base}/api/v1${p}`, { ...init, headers: { ...(init.headers ?? {}), cookie, origin: base } });

beforeAll(startServer, 300_000);

afterAll(async () => {
  server?.child.kill('SIGKILL');
  await server?.stop();
  fs.rmSync(dir, { recursive: true, force: true });
});

describe('a SIGKILL in the middle of a chunked check', () => {
  it('leaves nothing visible; after a restart the batch is checked again and lands with exact counts', async () => {
    const observer = await signIn('observer@kestrel.example');
    const curator = await signIn('curator@kestrel.example');
    const lines = [HEADER];
    for (let i = 0; i < ROWS; i++) {
      const ra = (100 + (i % 600) * 0.05).toFixed(5);
      const dec = (-40 + Math.floor(i / 600) * 0.05).toFixed(5);
      lines.push(`Crash star ${i},${6100000000000000000n + BigInt(i)},${ra},${dec},V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61200.5,KR-HAWK`);
    }
    const form = new FormData();
    form.append('file', new Blob([lines.join('\n') + '\n']), 'crash-night.csv');
    const up = await api(observer, '/batches', { method: 'POST', body: form });
    expect(up.status).toBe(201);
    const id = (await up.json()).id as number;

    // progress moves; kill the server once rows have been written
    const mid = await waitFor('progress > 0', async () => {
      const b = await (await api(observer, `/batches/${id}`)).json();
      return b.state === 'checking' && b.progress.rowsDone > 0 && b.progress.rowsDone < ROWS ? b : undefined;
    });
    expect(mid.progress.rowsTotal).toBe(ROWS);
    server!.child.kill('SIGKILL');
    await new Promise((r) => server!.child.once('exit', r));
    await server!.stop();

    // partial rows are on disk, and the batch still says checking
    const raw = new Database(path.join(dir, 'starveil.sqlite'), { readonly: true });
    const partial = (raw.prepare('SELECT count(*) AS n FROM measurements WHERE batch_id = ?').get(id) as { n: number }).n;
    expect((raw.prepare('SELECT state FROM batches WHERE id = ?').get(id) as { state: string }).state).toBe('checking');
    raw.close();
    expect(partial).toBeGreaterThan(0);
    expect(partial).toBeLessThan(ROWS);

    await startServer();
    const obs2 = await signIn('observer@kestrel.example');
    const cur2 = await signIn('curator@kestrel.example');
    // while it is checked again, none of its rows or stars can be seen
    let sawChecking = false;
    const done = await waitFor('awaiting_review', async () => {
      const b = await (await api(obs2, `/batches/${id}`)).json();
      if (b.state === 'checking') {
        sawChecking = true;
        const rows = await (await api(obs2, `/batches/${id}/rows?limit=10`)).json();
        expect(rows.total).toBe(0);
        const stars = await (await api(cur2, `/stars?q=${encodeURIComponent('Crash star 1')}&limit=5`)).json();
        expect(stars.total).toBe(0);
        const measurements = await api(cur2, `/batches/${id}/measurements?limit=5`);
        if (measurements.status === 200) expect((await measurements.json()).total).toBe(0);
      }
      return b.state !== 'checking' ? b : undefined;
    });
    expect(sawChecking).toBe(true);
    expect(done.state).toBe('awaiting_review');
    expect(done.progress.note).toMatch(/restart interrupted the check at row [\d,]+ of 60,000/);
    expect(done.progress.attempts).toBe(2);
    expect(done.counts).toMatchObject({ rows: ROWS, accepted: ROWS, newStars: ROWS, rejected: 0, duplicates: 0, conflicts: 0 });
    const raw2 = new Database(path.join(dir, 'starveil.sqlite'), { readonly: true });
    const count = (sql: string) => (raw2.prepare(sql).get(id) as { n: number }).n;
    expect(count('SELECT count(*) AS n FROM measurements WHERE batch_id = ?')).toBe(ROWS);
    expect(count('SELECT count(*) AS n FROM batch_rows WHERE batch_id = ?')).toBe(ROWS);
    expect(count('SELECT count(*) AS n FROM stars WHERE batch_id = ?')).toBe(ROWS);
    raw2.close();
    const stars = await (await api(cur2, `/stars?q=${encodeURIComponent('Crash star 1')}&limit=5`)).json();
    expect(stars.total).toBeGreaterThan(0);
    void observer;
    void curator;
  }, 600_000);
});

describe('a broken session store', () => {
  it('answers 503 with a JSON error and the server stays up', async () => {
    const cookie = await signIn('curator@kestrel.example');
    expect((await api(cookie, '/me')).status).toBe(200);
    const raw = new Database(path.join(dir, 'starveil.sqlite'));
    raw.pragma('busy_timeout = 10000');
    raw.exec('ALTER TABLE sessions RENAME TO sessions_away');
    try {
      for (let i = 0; i < 5; i++) {
        const res = await api(cookie, '/me');
        expect(res.status).toBe(503);
        const body = await res.json();
        expect(body.error.code).toBe('unavailable');
        expect(body.error.message).not.toMatch(/SQLITE|no such table/i);
      }
      expect((await fetch(`${base}/api/v1/health`)).status).toBe(200);
      expect(server!.child.exitCode).toBeNull();
    } finally {
      raw.exec('ALTER TABLE sessions_away RENAME TO sessions');
      raw.close();
    }
    // the store is back: the same session works again
    expect((await api(cookie, '/me')).status).toBe(200);
    expect(server!.child.exitCode).toBeNull();
  }, 120_000);
});
