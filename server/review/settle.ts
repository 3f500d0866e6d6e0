import type { Knex } from 'knex';
import { startWorker } from '../lib/workers.js';
import { settleChunks, type DecisionCounts } from './approve.js';

/** Attempts of a settling batch before it is left for the next start (each resumes where the last stopped). */
const MAX_ATTEMPTS = 3;

/**
 * Settle a batch off the request thread: a worker thread with its own connection when the
 * database is a file, else (an in-memory database of a test) chunk by chunk here, yielding
 * between chunks. Resolves with the counts once the batch has flipped (null if it was not settling).
 */
export async function settleInBackground(db: Knex, dbFile: string | undefined, batchId: number): Promise<DecisionCounts | null> {
  if (!dbFile || dbFile === ':memory:') return settleChunks(db, batchId);
  let last: unknown;
  for (let attempt = 1; attempt <= MAX_ATTEMPTS; attempt++) {
    try {
      return await new Promise<DecisionCounts | null>((resolve, reject) => {
        const w = startWorker(new URL('./settle-worker.ts', import.meta.url), { dbFile, batchId });
        let settled = false;
        w.on('message', (m: { kind: string; counts?: DecisionCounts | null; message?: string }) => {
          if (m.kind === 'done') {
            settled = true;
            resolve(m.counts ?? null);
          } else if (m.kind === 'error') {
            settled = true;
            reject(new Error(m.message));
          }
        });
        w.on('error', (e) => {
          if (!settled) reject(e);
        });
        w.on('exit', (code) => {
          if (!settled) reject(new Error(`settle worker exited with code ${code}`));
        });
      });
    } catch (e) {
      last = e;
      console.error(`review: settling batch ${batchId}, attempt ${attempt}`, e);
    }
  }
  throw last;
}
