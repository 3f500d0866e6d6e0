// Checking the yardstick files in this process (not a benchmark by itself): used by
// check-profile.ts and sqlite-floor.ts, which print figures.
import fs from 'node:fs';
import path from 'node:path';
import type { Knex } from 'knex';
import { checkBatch } from '../server/intake/check.js';
import { sniffCsv } from '../server/intake/csv.js';
import { proposeMapping } from '../server/measurements/mapping.js';

/** An observer and the instrument of the yardstick files (KR-bench) in a fresh migrated database; the observer's id. */
export async function benchUser(db: Knex): Promise<number> {
  const now = new Date().toISOString();
  const [uid] = await db('users').insert({ email: 'bench@kestrel.example', name: 'Bench', role: 'observer', password_hash: 'x', disabled: false, created_at: now, updated_at: now });
  await db('instruments').insert({ code: 'KR-bench', name: 'Bench', bands: 'V,R', created_at: now });
  return uid;
}

/**
 * Check `file` with checkBatch on this thread (the parse worker as in the server), as a batch of
 * `uid` with the proposed mapping; with `approve`, then approve it as a curator would. Returns the
 * batch (its counts or failure), its id and the check's wall and CPU time (ms).
 */
export async function checkFile(db: Knex, uid: number, file: string, opts: { approve?: boolean; timingFile?: string | null } = {}) {
  const now = new Date().toISOString();
  const name = path.basename(file);
  const head = await sniffCsv(file);
  const proposal = proposeMapping(head.headers, {}, {}, { batchInstrument: null });
  const [id] = await db('batches').insert({ filename: name, size_bytes: fs.statSync(file).size, stored_path: file, sha256: `${name}-${Date.now()}`, state: 'checking', uploaded_by: uid, mapping_json: JSON.stringify(proposal.mapping), proposal_json: JSON.stringify({ ...proposal, preview: [], delimiter: head.delimiter }), created_at: now, updated_at: now });
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  await checkBatch(db, id, { crossmatchArcsec: 1, mjdToleranceDays: 1e-3, timingFile: opts.timingFile ?? null }, () => {});
  const cpu = process.cpuUsage(cpu0);
  const ms = performance.now() - t0;
  const batch = await db('batches').where({ id }).first();
  if (opts.approve) {
    await db('batches').where({ id }).update({ state: 'approved' });
    await db('measurements').where({ batch_id: id }).update({ state: 'approved' });
  }
  return { id: id as number, batch, ms, cpuMs: (cpu.user + cpu.system) / 1000 };
}
