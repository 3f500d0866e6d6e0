/**
 * The intake worker thread: checks batches one at a time on its own SQLite connection, so the
 * thread that answers requests never parses, matches or writes a batch (server/intake/runner.ts).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { openDb } from '../db.js';
import { checkpointPassive } from '../dialect.js';
import { checkBatch, type CheckOptions, type CheckProgress } from './check.js';

export type ToRunner =
  | { kind: 'ready' }
  | ({ kind: 'progress' } & CheckProgress)
  | { kind: 'done'; batchId: number; error?: string };
export type ToWorker = { kind: 'check'; batchId: number };

if (!parentPort) throw new Error('check-worker.ts must run as a worker thread');
const port = parentPort;
const { dbFile, opts } = workerData as { dbFile: string; opts: CheckOptions };
const db = openDb(dbFile, { role: 'background' });
const send = (m: ToRunner) => port.postMessage(m);

const queue: number[] = [];
let busy = false;
async function drain() {
  if (busy) return;
  busy = true;
  while (queue.length) {
    const batchId = queue.shift()!;
    try {
      await checkBatch(db, batchId, opts, (p) => send({ kind: 'progress', ...p }));
      await checkpointPassive(db).catch((e) => console.error('intake worker: checkpoint', e));
      send({ kind: 'done', batchId });
    } catch (e) {
      // checkBatch records its own failures; this is a failure to record one (e.g. the database is gone)
      console.error(`intake worker: batch ${batchId}`, e);
      send({ kind: 'done', batchId, error: e instanceof Error ? e.message : String(e) });
    }
  }
  busy = false;
}
port.on('message', (m: ToWorker) => {
  if (m.kind === 'check') {
    queue.push(m.batchId);
    void drain();
  }
});
process.on('unhandledRejection', (e) => console.error('intake worker: unhandled rejection', e));
send({ kind: 'ready' });
