// Intake benchmark (prints figures; not a test).
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

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
};
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
