// Intake benchmark (prints figures; not a test).
//   npm run bench:ingest -- --yardstick [--rows 300000]
//     generates batch A (N new stars) and batch B (N rows, half re-observing A) with
//     ../shared/bench/make_big_csv.py, runs the yardstick ../shared/bench/ingest_peer.py on them, then
//     through the HTTP API of a server in its own process: batch A upload + approve, batch B upload
//     → awaiting_review; prints both rates for batch B and the ratio, and the server's peak RSS.
//   npm run bench:ingest -- [--rows 1000000] [--catalog 1000000]
// Generates N synthetic rows against a catalog of M stars and times the whole intake path
// (parse → validate → derive → cross-match → de-duplicate → insert, in one transaction) through
// the same service the API uses; in the same run it times a bare better-sqlite3 prepared INSERT
// of the same rows into the same table as the baseline.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { loadConfig, randomSecret } from '../server/config.js';
import { migrateLatest, openDb } from '../server/db.js';
import { intakeService } from '../server/intake/service.js';
import { mulberry32 } from '../server/science/random.js';
import { ang2pixNest } from '../server/science/healpix.js';
import { icrsToGalactic } from '../server/science/frames.js';
import { INDEX_NSIDE } from '../server/measurements/derive.js';
import { execFileSync } from 'node:child_process';
import { DEMO_PASSWORD } from '../server/auth/passwords.js';
import { client, startServer } from './server-process.js';

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
};
if (process.argv.includes('--yardstick')) {
  await yardstick(arg('rows', 300_000));
  process.exit(0);
}
const N = arg('rows', 1_000_000);
const M = arg('catalog', 1_000_000);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-bench-'));
const config = loadConfig({ NODE_ENV: 'test' } as NodeJS.ProcessEnv, { dbFile: path.join(dir, 'bench.sqlite'), dataDir: dir, sessionSecret: randomSecret(), uploadMaxBytes: 2 ** 40 });
const rss = () => (process.memoryUsage().rss / 2 ** 20).toFixed(0);
let peakRss = 0;
const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 50);

console.log(`intake benchmark: ${N.toLocaleString('en')} rows against a catalog of ${M.toLocaleString('en')} stars (Node ${process.version}, ${os.cpus().length} cores)`);
const db = openDb(config.dbFile);
await migrateLatest(db);
const now = new Date().toISOString();
await db('users').insert({ email: 'bench@kestrel.example', name: 'Bench', role: 'observer', password_hash: 'x', disabled: false, created_at: now, updated_at: now });
await db('instruments').insert({ code: 'KR-HAWK', name: 'Hawk', bands: 'R,V', created_at: now });
await db.destroy();

// catalog: M stars with source ids, uniform on the sphere (setup, not timed)
const rng = mulberry32(42);
const raw = new Database(config.dbFile);
raw.pragma('journal_mode = WAL');
raw.pragma('synchronous = NORMAL');
const starRa = new Float64Array(M);
const starDec = new Float64Array(M);
{
  const ins = raw.prepare('INSERT INTO stars (id, name, source_id, ra_deg, dec_deg, glon_deg, glat_deg, parallax_mas, parallax_err_mas, hpx15, created_at) VALUES (?,?,?,?,?,?,?,?,?,?,?)');
  const t0 = Date.now();
  raw.transaction(() => {
    for (let i = 0; i < M; i++) {
      const ra = rng() * 360;
      const dec = (Math.asin(2 * rng() - 1) * 180) / Math.PI;
      starRa[i] = ra;
      starDec[i] = dec;
      const g = icrsToGalactic(ra, dec);
      ins.run(i + 1, `cat ${i}`, String(5_000_000_000_000_000_000n + BigInt(i)), ra, dec, g.lDeg, g.bDeg, 1 + rng() * 2, 0.03, ang2pixNest(INDEX_NSIDE, ra, dec), now);
    }
  })();
  console.log(`catalog built in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
}
raw.close();

// the upload: 50 % matched by source_id, 30 % by position (no id, within 0.2"), 20 % new stars
const csvPath = path.join(dir, 'night.csv');
{
  const out = fs.createWriteStream(csvPath);
  out.write('name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument\n');
  let buf = '';
  for (let i = 0; i < N; i++) {
    const kind = rng();
    const k = Math.floor(rng() * M);
    let sid = '';
    let ra: number, dec: number;
    if (kind < 0.5) {
      sid = String(5_000_000_000_000_000_000n + BigInt(k));
      ra = starRa[k];
      dec = starDec[k];
    } else if (kind < 0.8) {
      ra = starRa[k];
      dec = Math.max(-90, Math.min(90, starDec[k] + (0.2 / 3600) * (rng() - 0.5)));
    } else {
      ra = rng() * 360;
      dec = (Math.asin(2 * rng() - 1) * 180) / Math.PI;
    }
    const q = (rng() - 0.5) * 0.04;
    const u = (rng() - 0.5) * 0.04;
    buf += `s${i},${sid},${ra.toFixed(7)},${dec.toFixed(7)},V,${q.toFixed(6)},${u.toFixed(6)},0.0008,0.0008,${(1 + rng() * 2).toFixed(4)},0.04,${(61000 + i * 1e-4).toFixed(5)},KR-HAWK\n`;
    if (buf.length > 1 << 20) {
      if (!out.write(buf)) await new Promise<void>((r) => out.once('drain', () => r()));
      buf = '';
    }
  }
  out.write(buf);
  await new Promise<void>((r) => out.end(() => r()));
}
const sizeMb = fs.statSync(csvPath).size / 2 ** 20;
console.log(`upload file ${sizeMb.toFixed(0)} MB; RSS now ${rss()} MB`);

// end to end through the intake service
const db2 = openDb(config.dbFile);
const intake = intakeService(db2, config, { crossmatchArcsec: 1, mjdToleranceDays: 0.001, syncBytes: 2 ** 40 });
peakRss = process.memoryUsage().rss;
const t1 = process.hrtime.bigint();
const tmp = path.join(dir, 'upload.tmp');
fs.copyFileSync(csvPath, tmp);
const { batch } = await intake.upload({ id: 1, email: 'bench@kestrel.example', name: 'Bench', role: 'observer' }, { path: tmp, originalname: 'night.csv' }, { instrument: 'KR-HAWK' });
const endToEndS = Number(process.hrtime.bigint() - t1) / 1e9;
const peakE2E = peakRss;
console.log(`batch ${batch.id}: ${batch.state}`, batch.counts, batch.failure ?? '');
const measCols = await db2('measurements').columnInfo();
const sample = await db2('measurements').orderBy('id').limit(N).select();
await db2.destroy();

// baseline: bare prepared INSERT of the same measurement rows, one transaction
const base = new Database(config.dbFile);
base.pragma('journal_mode = WAL');
base.pragma('synchronous = NORMAL');
// the same table layout, indexes included, under another name
for (const { sql } of base.prepare("SELECT sql FROM sqlite_master WHERE tbl_name = 'measurements' AND sql IS NOT NULL").all() as { sql: string }[]) {
  base.exec(sql.replace(/`measurements`|"measurements"|\bmeasurements\b/g, 'bare_measurements').replace(/(index\s+[`"]?)(\w+)/i, '$1bare_$2'));
}
const cols = Object.keys(measCols);
const ins = base.prepare(`INSERT INTO bare_measurements (${cols.join(',')}) VALUES (${cols.map(() => '?').join(',')})`);
const t2 = process.hrtime.bigint();
base.transaction(() => {
  for (const r of sample) ins.run(cols.map((c) => r[c]));
})();
const bareS = Number(process.hrtime.bigint() - t2) / 1e9;
base.close();
clearInterval(sampler);

const e2eRate = N / endToEndS;
const bareRate = sample.length / bareS;
console.log('');
console.log(`end to end (parse → validate → derive → cross-match → de-duplicate → insert): ${endToEndS.toFixed(1)} s, ${Math.round(e2eRate).toLocaleString('en')} rows/s`);
console.log(`bare better-sqlite3 prepared INSERT of the same ${sample.length.toLocaleString('en')} measurement rows: ${bareS.toFixed(1)} s, ${Math.round(bareRate).toLocaleString('en')} rows/s`);
console.log(`ratio end-to-end / bare: ${((100 * e2eRate) / bareRate).toFixed(1)} %   (target ≥ 40 %)`);
console.log(`peak RSS during the intake run: ${(peakE2E / 2 ** 20).toFixed(0)} MB   (target < 1024 MB)`);
fs.rmSync(dir, { recursive: true, force: true });

/** Starveil (HTTP API, server in its own process) against the practitioner's yardstick, same files, same run. */
async function yardstick(n: number): Promise<void> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-yardstick-'));
  const files = path.join(dir, 'files');
  fs.mkdirSync(files);
  console.log(`intake against the yardstick: batch A ${n.toLocaleString('en')} new stars, batch B ${n.toLocaleString('en')} rows (half new epochs of A within 0.2″) (Node ${process.version}, ${os.cpus().length} cores)`);
  execFileSync('/usr/bin/python3', [path.resolve('../shared/bench/make_big_csv.py'), String(n), files], { stdio: 'inherit' });
  const peerOut = execFileSync('/usr/bin/python3', [path.resolve('../shared/bench/ingest_peer.py'), files], { encoding: 'utf8' });
  process.stdout.write(`yardstick (pandas + astropy + sqlite3):\n${peerOut.replace(/^/gm, '  ')}`);
  const rateOf = (name: string) => Number((new RegExp(`${name}: \\d+ rows in [\\d.]+ s = ([\\d,]+) rows/s`).exec(peerOut)?.[1] ?? 'NaN').replace(/,/g, ''));
  const peerB = rateOf('batch-b.csv');
  fs.rmSync(path.join(files, 'peer.sqlite'), { force: true });
  fs.rmSync(path.join(files, 'peer.sqlite-wal'), { force: true });
  fs.rmSync(path.join(files, 'peer.sqlite-shm'), { force: true });

  const server = await startServer(path.join(dir, 'data'));
  try {
    const admin = await client(server.base, 'admin@kestrel.example', DEMO_PASSWORD);
    const observer = await client(server.base, 'observer@kestrel.example', DEMO_PASSWORD);
    const curator = await client(server.base, 'curator@kestrel.example', DEMO_PASSWORD);
    const reg = await admin('/instruments', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ code: 'KR-bench', name: 'Benchmark camera', bands: ['V', 'R'] }) });
    if (reg.status !== 201) throw new Error(`registering KR-bench: ${reg.status} ${await reg.text()}`);
    const uploadAndWait = async (file: string) => {
      const form = new FormData();
      form.append('file', new Blob([fs.readFileSync(file)]), path.basename(file));
      const t0 = performance.now();
      const up = await observer('/batches', { method: 'POST', body: form });
      let b = await up.json();
      if (up.status !== 201) throw new Error(`upload ${file}: ${up.status} ${JSON.stringify(b)}`);
      while (b.state === 'checking' || b.state === 'received') {
        await new Promise((r) => setTimeout(r, 100));
        b = await (await observer(`/batches/${b.id}`)).json();
      }
      const s = (performance.now() - t0) / 1000;
      if (b.state !== 'awaiting_review') throw new Error(`batch ${b.id} ended ${b.state}: ${b.failure}`);
      return { b, s };
    };
    const a = await uploadAndWait(path.join(files, 'batch-a.csv'));
    console.log(`Starveil batch A: ${a.s.toFixed(1)} s = ${Math.round(n / a.s).toLocaleString('en')} rows/s`, a.b.counts);
    const t0 = performance.now();
    const ap = await curator(`/batches/${a.b.id}/approve`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ note: 'benchmark' }) });
    // a large batch is approved in short transactions on a worker thread (202), then flips
    if (ap.status !== 200 && ap.status !== 202) throw new Error(`approving batch A: ${ap.status} ${await ap.text()}`);
    const answered = (performance.now() - t0) / 1000;
    for (let st = (await ap.json()).state; st !== 'approved'; st = (await (await observer(`/batches/${a.b.id}`)).json()).state) await new Promise((r) => setTimeout(r, 200));
    console.log(`approve request answered in ${answered.toFixed(2)} s (${ap.status})`);
    console.log(`batch A approved in ${((performance.now() - t0) / 1000).toFixed(1)} s`);
    const rssBefore = server.peakRssMb();
    const b = await uploadAndWait(path.join(files, 'batch-b.csv'));
    const oursB = n / b.s;
    console.log(`Starveil batch B: ${b.s.toFixed(1)} s = ${Math.round(oursB).toLocaleString('en')} rows/s (upload request to awaiting_review)`, b.b.counts);
    console.log('');
    console.log(`batch B rows/s: Starveil ${Math.round(oursB).toLocaleString('en')}, yardstick ${Math.round(peerB).toLocaleString('en')}; ratio ${(oursB / peerB).toFixed(2)}×   (target ≥ 1.5×)`);
    console.log(`server peak RSS: ${server.peakRssMb().toFixed(0)} MB (${rssBefore.toFixed(0)} MB before batch B)   (target < 1024 MB)`);
  } finally {
    await server.stop();
    fs.rmSync(dir, { recursive: true, force: true });
  }
}
