// API benchmark (prints figures; not a test).
//   npm run bench:api -- [--stars 1000000] [--connections 16] [--seconds 10]
// Builds a catalog of N approved stars with one measurement each, runs tomography on it, then
// loads the cone search and the HEALPix pixel query with autocannon from 16 concurrent clients
// over loopback and prints p50, p99 and requests/s, and the time to build a mask at NSIDE 256.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import autocannon from 'autocannon';
import Database from 'better-sqlite3';
import { createApp } from '../server/app.js';
import { loadConfig, randomSecret } from '../server/config.js';
import { migrateLatest, openDb } from '../server/db.js';
import { hashPassword } from '../server/auth/passwords.js';
import { mulberry32, gaussian } from '../server/science/random.js';
import { icrsToGalactic, rotateStokesToGalactic } from '../server/science/frames.js';
import { ang2pixNest } from '../server/science/healpix.js';
import { INDEX_NSIDE } from '../server/measurements/derive.js';
import { distanceFromParallax } from '../server/science/distance.js';

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
};
const N = arg('stars', 1_000_000);
const CONNECTIONS = arg('connections', 16);
const SECONDS = arg('seconds', 10);
const NSIDE = arg('nside', 64);
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-apibench-'));
const config = loadConfig({ NODE_ENV: 'test' } as NodeJS.ProcessEnv, { dbFile: path.join(dir, 'bench.sqlite'), dataDir: dir, sessionSecret: randomSecret(), distDir: path.join(dir, 'none') });
console.log(`API benchmark: ${N.toLocaleString('en')} stars, ${CONNECTIONS} concurrent clients, ${SECONDS} s per query (Node ${process.version}, ${os.cpus().length} cores)`);

const db = openDb(config.dbFile);
await migrateLatest(db);
const now = new Date().toISOString();
await db('users').insert({ email: 'bench@kestrel.example', name: 'Bench', role: 'curator', password_hash: await hashPassword('bench-password'), disabled: false, created_at: now, updated_at: now });
await db('instruments').insert({ code: 'KR-HAWK', name: 'Hawk', bands: 'R,V', created_at: now });
await db('batches').insert({ id: 1, uploaded_by: 1, filename: 'bench.csv', size_bytes: 0, sha256: 'bench', stored_path: '-', state: 'approved', created_at: now, updated_at: now });
await db.destroy();

// catalog (setup, not timed): N stars uniform on the sky, one approved R measurement each
{
  const t0 = Date.now();
  const raw = new Database(config.dbFile);
  raw.pragma('journal_mode = WAL');
  const rng = mulberry32(99);
  const star = raw.prepare('INSERT INTO stars (id, name, source_id, ra_deg, dec_deg, glon_deg, glat_deg, parallax_mas, parallax_err_mas, hpx15, created_at) VALUES (?,?,?,?,?,?,?,?,?,?,?)');
  const row = raw.prepare("INSERT INTO batch_rows (id, batch_id, line, state, values_json) VALUES (?, 1, ?, 'accepted', '[]')");
  const meas = raw.prepare(`INSERT INTO measurements (id, star_id, batch_id, batch_row_id, state, version, band, instrument, mjd, ra_deg, dec_deg, q, u, q_err, u_err, p, p_err, p_debiased, theta_deg, theta_err_deg,
    q_gal, u_gal, q_gal_err, u_gal_err, theta_gal_deg, glon_deg, glat_deg, parallax_mas, parallax_err_mas, distance_pc, distance_lo_pc, distance_hi_pc, distance_method, hpx15, created_at, updated_at)
    VALUES (?, ?, 1, ?, 'approved', 1, 'R', 'KR-HAWK', 61000, ?, ?, ?, ?, 0.001, 0.001, ?, 0.001, ?, ?, 1, ?, ?, 0.001, 0.001, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  raw.transaction(() => {
    for (let i = 1; i <= N; i++) {
      const ra = rng() * 360;
      const dec = (Math.asin(2 * rng() - 1) * 180) / Math.PI;
      const g = icrsToGalactic(ra, dec);
      const d = 50 + rng() * 2500;
      const plx = 1000 / d - 0.017 + 0.03 * gaussian(rng);
      const hpx = ang2pixNest(INDEX_NSIDE, ra, dec);
      // one cloud at 300 pc whose angle depends on longitude, a second at 900 pc in half the sky
      let q = 0, u = 0;
      if (d > 300) { q += 0.01 * Math.cos(g.lDeg * 0.03); u += 0.01 * Math.sin(g.lDeg * 0.03); }
      if (d > 900 && g.bDeg > 0) { q -= 0.008; u += 0.006; }
      q += 0.001 * gaussian(rng);
      u += 0.001 * gaussian(rng);
      const gal = rotateStokesToGalactic(q, u, 0.001, 0.001, ra, dec);
      const p = Math.hypot(q, u);
      const dist = distanceFromParallax(plx, 0.03);
      star.run(i, `b${i}`, String(6_000_000_000_000_000_000n + BigInt(i)), ra, dec, g.lDeg, g.bDeg, plx, 0.03, hpx, now);
      row.run(i, i + 1);
      meas.run(i, i, i, ra, dec, q, u, p, p, ((0.5 * Math.atan2(u, q) * 180) / Math.PI + 180) % 180, gal.q, gal.u, ((0.5 * Math.atan2(gal.u, gal.q) * 180) / Math.PI + 180) % 180, g.lDeg, g.bDeg, plx, 0.03, dist.distancePc, dist.distanceLoPc, dist.distanceHiPc, dist.method, hpx, now, now);
    }
  })();
  raw.close();
  console.log(`catalog of ${N.toLocaleString('en')} stars built in ${((Date.now() - t0) / 1000).toFixed(1)} s`);
}

const writeDb = openDb(config.dbFile);
const readDb = openDb(config.dbFile);
const app = createApp({ db: writeDb, readDb, config });
{
  const t0 = Date.now();
  const { done, id } = await app.services.tomography.start(1, { nside: NSIDE, coordsys: 'G', band: 'R', minStars: 5, draws: 20 });
  await done;
  const run = await app.services.tomography.get(id);
  console.log(`tomography run at NSIDE ${NSIDE} (20 draws): ${run.progress.cellsTotal.toLocaleString('en')} cells in ${((Date.now() - t0) / 1000).toFixed(1)} s, state ${run.state}`);
}
const server = app.listen(0, '127.0.0.1');
await new Promise((r) => server.once('listening', r));
const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
const login = await fetch(`${base}/api/v1/auth/login`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: 'bench@kestrel.example', password: 'bench-password' }) });
const cookie = (login.headers.get('set-cookie') ?? '').split(';')[0];

const rng = mulberry32(5);
const conePaths = Array.from({ length: 2000 }, () => `/api/v1/stars?ra=${(rng() * 360).toFixed(4)}&dec=${((Math.asin(2 * rng() - 1) * 180) / Math.PI).toFixed(4)}&radius=0.5&limit=100`);
const npix = 12 * NSIDE * NSIDE;
const pixelPaths = Array.from({ length: 2000 }, () => `/api/v1/sightlines?nside=${NSIDE}&ipix=${Math.floor(rng() * npix)}`);

async function load(label: string, paths: string[]) {
  let k = 0;
  const result = await autocannon({
    url: base,
    connections: CONNECTIONS,
    duration: SECONDS,
    headers: { cookie },
    requests: [{ method: 'GET', setupRequest: (req) => ({ ...req, path: paths[k++ % paths.length] }) }],
  });
  const ok = result['2xx'];
  console.log(`${label.padEnd(34)} p50 ${String(result.latency.p50).padStart(5)} ms   p99 ${String(result.latency.p99).padStart(5)} ms   ${result.requests.average.toFixed(0).padStart(6)} req/s   (${ok} ok, ${result.non2xx} non-2xx, ${result.errors} errors)`);
}
console.log('');
await load('cone search, radius 0.5° (stars)', conePaths);
await load(`pixel query (sightlines, NSIDE ${NSIDE})`, pixelPaths);
const maskUrl = `${base}/api/v1/masks?nside=256&format=fits`;
const t0 = performance.now();
const mask = await fetch(maskUrl, { headers: { cookie } });
const bytes = (await mask.arrayBuffer()).byteLength;
console.log(mask.ok ? `mask at NSIDE 256 (FITS, ${(bytes / 2 ** 20).toFixed(1)} MB): ${(performance.now() - t0).toFixed(0)} ms` : `mask route answered ${mask.status} (not available yet)`);
server.close();
await Promise.all([writeDb.destroy(), readDb.destroy()]);
fs.rmSync(dir, { recursive: true, force: true });
