/**
 * Worker thread that applies a large batch decision in short transactions on its own SQLite
 * connection (approve.ts settleChunks), so the thread that answers requests never does.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { openDb } from '../db.js';
import { settleChunks } from './approve.js';

if (!parentPort) throw new Error('settle-worker.ts must run as a worker thread');
const port = parentPort;
const { dbFile, batchId } = workerData as { dbFile: string; batchId: number };
// its writes walk the batch in id order: a small page cache is enough (the process stays under 1 GB beside a check)
const db = openDb(dbFile, { role: 'background', cacheMb: 32 });
try {
  const counts = await settleChunks(db, batchId, (done, total) => port.postMessage({ kind: 'progress', done, total }));
  port.postMessage({ kind: 'done', counts });
} catch (e) {
  port.postMessage({ kind: 'error', message: e instanceof Error ? e.message : String(e) });
} finally {
  await db.destroy();
}
