// Availability during a big check (prints figures; not a test).
//   npm run bench:availability -- [--rows 300000]
// Starts the server in a child process (fresh data dir, demo seed), uploads a generated night of
// N rows as the demo observer, and while it is checked polls GET /health, GET /me, a cone search
// and the batch itself with signed-in clients, and makes three curator edits. Prints read
// latency p50/p99/max, failures, edit latency and lost edits.
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { DEMO_PASSWORD } from '../server/auth/passwords.js';
import { client, quantile, startServer } from './server-process.js';

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
};
const N = arg('rows', 300_000);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-avail-'));
const files = path.join(dir, 'files');
fs.mkdirSync(files);
console.log(`availability benchmark: a ${N.toLocaleString('en')}-row batch checked while signed-in clients read and a curator edits (Node ${process.version}, ${os.cpus().length} cores)`);
execFileSync('/usr/bin/python3', [path.resolve('../shared/bench/make_big_csv.py'), String(N), files], { stdio: 'inherit' });
const night = path.join(files, 'batch-a.csv');

const server = await startServer(path.join(dir, 'data'));
try {
  const admin = await client(server.base, 'admin@kestrel.example', DEMO_PASSWORD);
  const observer = await client(server.base, 'observer@kestrel.example', DEMO_PASSWORD);
  const curator = await client(server.base, 'curator@kestrel.example', DEMO_PASSWORD);
  const modeler = await client(server.base, 'modeler@kestrel.example', DEMO_PASSWORD);
  const reg = await admin('/instruments', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ code: 'KR-bench', name: 'Benchmark camera', bands: ['V', 'R'] }) });
  if (reg.status !== 201) throw new Error(`registering KR-bench: ${reg.status} ${await reg.text()}`);

  // measurements a curator will edit: a small night awaiting review
  const small = new FormData();
  const rowsSmall = ['name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument'];
  for (let i = 0; i < 10; i++) rowsSmall.push(`Edit star ${i},,${(200 + i * 0.1).toFixed(4)},-5.0,V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61400.5,KR-HAWK`);
  small.append('file', new Blob([rowsSmall.join('\n') + '\n']), 'small-night.csv');
  const smallRes = await observer('/batches', { method: 'POST', body: small });
  const reviewBatch = (await smallRes.json()).id as number;
  const page = await (await curator(`/batches/${reviewBatch}/measurements?limit=3&filter.state=pending`)).json();
  const targets = (page.rows as { id: number; version: number; q: number }[]).slice(0, 3);
  if (targets.length < 3) throw new Error('the demo has no three pending measurements to edit');

  const form = new FormData();
  form.append('file', new Blob([fs.readFileSync(night)]), 'big-night.csv');
  const tUp = performance.now();
  const up = await observer('/batches', { method: 'POST', body: form });
  const upMs = performance.now() - tUp;
  const batch = await up.json();
  if (up.status !== 201) throw new Error(`upload: ${up.status} ${JSON.stringify(batch)}`);
  console.log(`upload answered ${up.status} in ${upMs.toFixed(0)} ms; batch ${batch.id} is ${batch.state}`);

  const reads: Record<string, number[]> = { health: [], me: [], cone: [], batch: [] };
  const failures: string[] = [];
  let checking = true;
  let lastProgress = -1;
  const progressSteps: number[] = [];
  const timed = async (kind: string, f: () => Promise<Response>) => {
    const t0 = performance.now();
    try {
      const res = await f();
      const body = await res.text();
      const ms = performance.now() - t0;
      reads[kind].push(ms);
      if (!res.ok) failures.push(`${kind} → ${res.status} ${body.slice(0, 120)}`);
      return body;
    } catch (e) {
      reads[kind].push(performance.now() - t0);
      failures.push(`${kind} → ${(e as Error).message}`);
      return '';
    }
  };
  const signal = () => AbortSignal.timeout(10_000);
  const loop = async (kind: string, f: () => Promise<Response>, after?: (body: string) => void) => {
    while (checking) {
      const body = await timed(kind, f);
      after?.(body);
      await new Promise((r) => setTimeout(r, 25));
    }
  };
  const tCheck = performance.now();
  const loops = [
    loop('health', () => fetch(`${server.base}/api/v1/health`, { signal: signal() })),
    loop('me', () => curator('/me', { signal: signal() })),
    loop('cone', () => modeler('/stars?ra=83.6&dec=22.0&radius=2&limit=20', { signal: signal() })),
    loop('batch', () => observer(`/batches/${batch.id}`, { signal: signal() }), (body) => {
      try {
        const b = JSON.parse(body);
        if (b.progress?.rowsDone !== lastProgress) {
          lastProgress = b.progress.rowsDone;
          progressSteps.push(performance.now());
        }
        if (b.state !== 'checking') {
          checking = false;
          console.log(`batch ${b.id}: ${b.state} after ${((performance.now() - tCheck) / 1000).toFixed(1)} s`, b.counts ?? '', b.failure ?? '');
        }
      } catch {
        /* counted as a failure by timed() if not 2xx */
      }
    }),
  ];
  // three curator edits spread over the check
  const edits: { ms: number; status: number; id: number; q: number; version: number }[] = [];
  const editing = (async () => {
    for (const [k, m] of targets.entries()) {
      await new Promise((r) => setTimeout(r, 1500 + k * 2000));
      const q = Number((m.q + 0.0001 * (k + 1)).toFixed(6));
      const t0 = performance.now();
      const res = await curator(`/measurements/${m.id}`, { method: 'PATCH', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ changes: { q }, version: m.version, reason: 'availability benchmark edit' }), signal: AbortSignal.timeout(30_000) }).catch((e) => ({ status: 0, text: async () => String(e) }) as Response);
      edits.push({ ms: performance.now() - t0, status: res.status, id: m.id, q, version: m.version + 1 });
      if (res.status !== 200) failures.push(`edit → ${res.status} ${(await res.text()).slice(0, 120)}`);
      console.log(`  edit ${k + 1} during the check: ${res.status} in ${(performance.now() - t0).toFixed(0)} ms (rows done ${lastProgress.toLocaleString('en')})`);
    }
  })();
  await Promise.all([...loops, editing]);
  const checkS = (performance.now() - tCheck) / 1000;

  let lost = 0;
  for (const e of edits) {
    const rows = (await (await curator(`/batches/${reviewBatch}/measurements?limit=500`)).json()).rows as { id: number; q: number; version: number }[];
    const now = rows.find((r) => r.id === e.id);
    if (!now || Math.abs(now.q - e.q) > 1e-12 || now.version !== e.version) lost++;
  }
  const all = Object.values(reads).flat().sort((a, b) => a - b);
  const gaps = progressSteps.slice(1).map((t, i) => t - progressSteps[i]);
  console.log('');
  console.log(`check of ${N.toLocaleString('en')} rows: ${checkS.toFixed(1)} s (${Math.round(N / checkS).toLocaleString('en')} rows/s, upload request excluded)`);
  for (const [k, v] of Object.entries(reads)) {
    const s = [...v].sort((a, b) => a - b);
    console.log(`  ${k.padEnd(7)} ${String(s.length).padStart(6)} reads  p50 ${quantile(s, 0.5).toFixed(1)} ms  p99 ${quantile(s, 0.99).toFixed(1)} ms  max ${s[s.length - 1].toFixed(1)} ms`);
  }
  console.log(`reads during the check: ${all.length}, p50 ${quantile(all, 0.5).toFixed(1)} ms, p99 ${quantile(all, 0.99).toFixed(1)} ms, max ${all[all.length - 1].toFixed(1)} ms   (target p99 < 250 ms)`);
  console.log(`failures: ${failures.length}   (target 0)${failures.length ? `\n  ${failures.slice(0, 10).join('\n  ')}` : ''}`);
  console.log(`curator edits: ${edits.map((e) => `${e.status} in ${e.ms.toFixed(0)} ms`).join(', ')}; slowest ${Math.max(...edits.map((e) => e.ms)).toFixed(0)} ms   (target < 1000 ms)`);
  console.log(`lost edits: ${lost}   (target 0)`);
  console.log(`progress: ${progressSteps.length} distinct values of rowsDone seen; longest gap between changes ${gaps.length ? (Math.max(...gaps) / 1000).toFixed(1) : '—'} s`);

  // the curator approves the big batch: answered at once (202), applied in short transactions on
  // a worker thread; the same reads and one more edit go on until it flips
  const tAp = performance.now();
  const ap = await curator(`/batches/${batch.id}/approve`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ note: 'availability benchmark' }) });
  const apMs = performance.now() - tAp;
  const apBody = await ap.json();
  if (ap.status !== 202 && ap.status !== 200) throw new Error(`approve: ${ap.status} ${JSON.stringify(apBody)}`);
  const settleReads: number[] = [];
  const settleFailures: string[] = [];
  let settling = apBody.state !== 'approved';
  const settleLoop = async (kind: string, f: () => Promise<Response>) => {
    while (settling) {
      const t0 = performance.now();
      try {
        const res = await f();
        await res.text();
        if (!res.ok) settleFailures.push(`${kind} → ${res.status}`);
      } catch (e) {
        settleFailures.push(`${kind} → ${(e as Error).message}`);
      }
      settleReads.push(performance.now() - t0);
      await new Promise((r) => setTimeout(r, 25));
    }
  };
  const watch = (async () => {
    while (settling) {
      try {
        const b = await (await observer(`/batches/${batch.id}`, { signal: signal() })).json();
        if (b.state === 'approved') settling = false;
      } catch (e) {
        settleFailures.push(`batch → ${(e as Error).message}`); // counted; a reused keep-alive socket the server closed shows as ECONNRESET
      }
      if (settling) await new Promise((r) => setTimeout(r, 200));
    }
  })();
  let settleEdit = '';
  const editDuring = (async () => {
    await new Promise((r) => setTimeout(r, 1000));
    if (!settling) return;
    const m = edits[0];
    const t0 = performance.now();
    const res = await curator(`/measurements/${m.id}`, { method: 'PATCH', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ changes: { q: Number((m.q + 0.0001).toFixed(6)) }, version: m.version, reason: 'availability benchmark edit during an approve' }), signal: AbortSignal.timeout(30_000) });
    settleEdit = `${res.status} in ${(performance.now() - t0).toFixed(0)} ms`;
  })();
  await Promise.all([
    settleLoop('health', () => fetch(`${server.base}/api/v1/health`, { signal: signal() })),
    settleLoop('me', () => curator('/me', { signal: signal() })),
    settleLoop('cone', () => modeler('/stars?ra=83.6&dec=22.0&radius=2&limit=20', { signal: signal() })),
    watch,
    editDuring,
  ]);
  const settleS = (performance.now() - tAp) / 1000;
  settleReads.sort((a, b) => a - b);
  console.log('');
  console.log(`approve of the ${N.toLocaleString('en')}-row batch: answered ${ap.status} in ${apMs.toFixed(0)} ms; approved after ${settleS.toFixed(1)} s`);
  if (settleReads.length) console.log(`reads while it was applied: ${settleReads.length}, p50 ${quantile(settleReads, 0.5).toFixed(1)} ms, p99 ${quantile(settleReads, 0.99).toFixed(1)} ms, max ${settleReads[settleReads.length - 1].toFixed(1)} ms; failures ${settleFailures.length}${settleEdit ? `; a curator edit meanwhile: ${settleEdit}` : ''}`);
  console.log(`server peak RSS: ${server.peakRssMb().toFixed(0)} MB`);
} finally {
  await server.stop();
  fs.rmSync(dir, { recursive: true, force: true });
}
