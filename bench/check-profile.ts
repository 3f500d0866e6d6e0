// Profile harness (prints figures; not a test): batch A then batch B of the yardstick files,
// checked by checkBatch on this thread (the parse worker as in the server), so `node --cpu-prof`
// sees the check loop.   npx tsx bench/check-profile.ts DIR   (DIR with batch-a.csv, batch-b.csv)
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { migrateLatest, openDb } from '../server/db.js';
import { checkBatch } from '../server/intake/check.js';
import { sniffCsv } from '../server/intake/csv.js';
import { proposeMapping } from '../server/measurements/mapping.js';

const src = process.argv[2];
const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-profile-'));
const db = openDb(path.join(dir, 'p.sqlite'), { role: 'background' });
await migrateLatest(db);
const now = new Date().toISOString();
const [uid] = await db('users').insert({ email: 'p@kestrel.example', name: 'P', role: 'observer', password_hash: 'x', disabled: false, created_at: now, updated_at: now });
await db('instruments').insert({ code: 'KR-bench', name: 'Bench', bands: 'V,R', created_at: now });
for (const name of ['batch-a.csv', 'batch-b.csv']) {
  const file = path.join(src, name);
  const head = await sniffCsv(file);
  const proposal = proposeMapping(head.headers, {}, {}, { batchInstrument: null });
  const [id] = await db('batches').insert({ filename: name, size_bytes: fs.statSync(file).size, stored_path: file, sha256: name, state: 'checking', uploaded_by: uid, mapping_json: JSON.stringify(proposal.mapping), proposal_json: JSON.stringify({ ...proposal, preview: [], delimiter: head.delimiter }), created_at: now, updated_at: now });
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  await checkBatch(db, id, { crossmatchArcsec: 1, mjdToleranceDays: 1e-3, timingFile: process.env.STARVEIL_INTAKE_TIMING ?? null }, () => {});
  const cpu = process.cpuUsage(cpu0);
  const b = await db('batches').where({ id }).first();
  console.log(`${name}: ${b.state} in ${((performance.now() - t0) / 1000).toFixed(1)} s (this thread's CPU ${((cpu.user + cpu.system) / 1e6).toFixed(1)} s)`, b.counts_json ?? b.failure);
  await db('batches').where({ id }).update({ state: 'approved' });
  await db('measurements').where({ batch_id: id }).update({ state: 'approved' });
}
await db.destroy();
fs.rmSync(dir, { recursive: true, force: true });
