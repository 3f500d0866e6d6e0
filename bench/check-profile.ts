// Profile harness (prints figures; not a test): batch A then batch B of the yardstick files,
// checked by checkBatch on this thread (the parse worker as in the server), so `node --cpu-prof`
// sees the check loop.   npx tsx bench/check-profile.ts DIR   (DIR with batch-a.csv, batch-b.csv)
// With STARVEIL_INTAKE_TIMING=FILE the check appends where its time and memory went.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { migrateLatest, openDb } from '../server/db.js';
import { benchUser, checkFile } from './check-local.js';

const src = process.argv[2];
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-profile-'));
const db = openDb(path.join(dir, 'p.sqlite'), { role: 'background' });
await migrateLatest(db);
const uid = await benchUser(db);
for (const name of ['batch-a.csv', 'batch-b.csv']) {
  const { batch: b, ms, cpuMs } = await checkFile(db, uid, path.join(src, name), { approve: true, timingFile: process.env.STARVEIL_INTAKE_TIMING ?? null });
  console.log(`${name}: ${b.state} in ${(ms / 1000).toFixed(1)} s (the process's CPU ${(cpuMs / 1000).toFixed(1)} s)`, b.counts_json ?? b.failure);
}
await db.destroy();
fs.rmSync(dir, { recursive: true, force: true });
