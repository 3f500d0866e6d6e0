// What storing batch B costs SQLite by itself (prints figures; not a test).
//   npx tsx bench/sqlite-floor.ts DIR        (DIR holds batch-a.csv and batch-b.csv of ../shared/bench/make_big_csv.py)
//
// 1. Checks batch A, approves it, then checks batch B with checkBatch, as the server's check worker
//    does (parse, validate, derive, cross-match, de-duplicate, write in short transactions).
// 2. Builds a second database, by the same migrations, holding only batch A's rows.
// 3. Times storing into it exactly the rows Starveil stored for batch B, with nothing else to do:
//    (a) INSERT … SELECT from the first database, one transaction per table (SQLite's own work: no
//        parsing, no checks, no JavaScript); (b) the same rows bound from JavaScript arrays through
//        one prepared better-sqlite3 statement per table, in one transaction; (c) as (b) into tables
//        without their secondary indexes.
// 4. Runs the yardstick (../shared/bench/ingest_peer.py) on the same files.
// The figures say how much of the yardstick's batch-B time the stored rows alone take on this engine.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { execFileSync } from 'node:child_process';
import Database from 'better-sqlite3';
import { migrateLatest, openDb } from '../server/db.js';
import { benchUser, checkFile } from './check-local.js';

const src = path.resolve(process.argv[2] ?? '');
if (!fs.existsSync(path.join(src, 'batch-b.csv'))) {
  console.error('usage: npx tsx bench/sqlite-floor.ts DIR   (DIR with batch-a.csv and batch-b.csv)');
  process.exit(2);
}
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-floor-'));
const sFile = path.join(dir, 'starveil.sqlite');
const fFile = path.join(dir, 'floor.sqlite');
const s = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

// 1. Starveil's check of A (approved) and B
const db = openDb(sFile, { role: 'background' });
await migrateLatest(db);
const uid = await benchUser(db);
const ids: number[] = [];
let checkB = 0;
for (const name of ['batch-a.csv', 'batch-b.csv']) {
  const { id, batch: b, ms } = await checkFile(db, uid, path.join(src, name), { approve: name === 'batch-a.csv' });
  if (b.state !== 'awaiting_review') throw new Error(`${name}: ${b.state} ${b.failure}`);
  console.log(`Starveil check of ${name}: ${s(ms)}`);
  if (name === 'batch-b.csv') checkB = ms;
  ids.push(id);
}
await db.raw('PRAGMA wal_checkpoint(TRUNCATE)');
await db.destroy();
const [aId, bId] = ids;

// 2. a database with A only
const fdb = openDb(fFile, { role: 'background' });
await migrateLatest(fdb);
await fdb.destroy();
const f = new Database(fFile);
f.pragma('journal_mode = WAL');
f.pragma('synchronous = NORMAL');
f.pragma('cache_size = -131072');
f.pragma('foreign_keys = OFF');
f.exec(`ATTACH '${sFile}' AS s`);
const TABLES = ['users', 'instruments', 'batches'];
f.transaction(() => {
  for (const t of TABLES) f.exec(`INSERT INTO main.${t} SELECT * FROM s.${t}`);
  for (const t of ['stars', 'batch_rows', 'measurements']) f.exec(`INSERT INTO main.${t} SELECT * FROM s.${t} WHERE batch_id = ${aId}`);
})();
f.pragma('wal_checkpoint(TRUNCATE)');
const count = (t: string) => (f.prepare(`SELECT count(*) n FROM s.${t} WHERE batch_id = ?`).get(bId) as { n: number }).n;
const nB = { stars: count('stars'), batch_rows: count('batch_rows'), measurements: count('measurements') };
console.log(`rows Starveil stored for batch B: ${nB.measurements.toLocaleString('en')} measurements, ${nB.batch_rows.toLocaleString('en')} batch rows, ${nB.stars.toLocaleString('en')} new stars`);

const ORDER = ['stars', 'batch_rows', 'measurements'] as const;
const timeIt = (fn: () => void) => {
  const t0 = performance.now();
  fn();
  return performance.now() - t0;
};
const undo = () => {
  f.transaction(() => {
    for (const t of ORDER) f.exec(`DELETE FROM main.${t} WHERE batch_id = ${bId}`);
  })();
  f.pragma('wal_checkpoint(TRUNCATE)');
};

// 3a. SQLite's own work
const selectTimes: Record<string, number> = {};
for (const t of ORDER) selectTimes[t] = timeIt(() => f.transaction(() => f.exec(`INSERT INTO main.${t} SELECT * FROM s.${t} WHERE batch_id = ${bId}`))());
undo();

// 3b. bound from JavaScript through prepared statements (rows read first, not timed)
const bind = (into: (t: string) => string) => {
  const times: Record<string, number> = {};
  for (const t of ORDER) {
    const st = f.prepare(`SELECT * FROM s.${t} WHERE batch_id = ?`).raw(true);
    const cols = st.columns().map((c) => c.name);
    const rows = st.all(bId) as unknown[][];
    const ins = f.prepare(`INSERT INTO ${into(t)} (${cols.map((c) => `"${c}"`).join(',')}) VALUES (${cols.map(() => '?').join(',')})`);
    times[t] = timeIt(() =>
      f.transaction(() => {
        for (const r of rows) ins.run(r);
      })(),
    );
  }
  return times;
};
const bindTimes = bind((t) => `main.${t}`);
undo();

// 3c. the same into tables with no secondary index
for (const t of ORDER) f.exec(`CREATE TABLE main.bare_${t} AS SELECT * FROM s.${t} WHERE batch_id = ${aId}`);
const bareTimes = bind((t) => `main.bare_${t}`);
f.close();

// 4. the yardstick on the same files
const peerOut = execFileSync('/usr/bin/python3', [path.resolve(path.dirname(new URL(import.meta.url).pathname), '../../shared/bench/ingest_peer.py'), src], { encoding: 'utf8' });
const m = /batch-b\.csv: (\d+) rows in ([\d.]+) s/.exec(peerOut);
const peerB = m ? Number(m[2]) * 1000 : NaN;
const rows = m ? Number(m[1]) : NaN;
const sum = (o: Record<string, number>) => Object.values(o).reduce((a, b) => a + b, 0);
const line = (label: string, o: Record<string, number>) =>
  console.log(`${label.padEnd(50)} ${ORDER.map((t) => `${t} ${s(o[t])}`).join(', ')}; total ${s(sum(o))} = ${(peerB / sum(o)).toFixed(2)}× the yardstick's time`);
console.log(`yardstick batch B: ${rows.toLocaleString('en')} rows in ${s(peerB)}; 1.5× its rate leaves ${s(peerB / 1.5)} for the whole intake`);
console.log(`Starveil check of batch B: ${s(checkB)} = ${(peerB / checkB).toFixed(2)}×`);
line('(a) INSERT…SELECT, one transaction per table', selectTimes);
line('(b) bound from JS, one transaction per table', bindTimes);
line('(c) as (b), tables without secondary indexes', bareTimes);
fs.rmSync(dir, { recursive: true, force: true });
