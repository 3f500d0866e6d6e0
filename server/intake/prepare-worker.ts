/** Worker thread of intake (prepare-stream.ts): reads the stored file and prepares each chunk. */
import { parentPort, workerData } from 'node:worker_threads';
import { AppError } from '../errors.js';
import { readCsvRows } from './csv.js';
import { chunkPreparer, type PrepareContext } from './prepare.js';
import type { ToMain } from './prepare-stream.js';

if (!parentPort) throw new Error('prepare-worker.ts must run as a worker thread');
const port = parentPort;
const job = workerData as { path: string; delimiter: string; ctx: PrepareContext; ahead: number; skipChunks: number };

// credit-based flow: at most `ahead` prepared chunks wait on the main thread
let credits = job.ahead;
let wake: (() => void) | null = null;
port.on('message', (m: { kind: 'more' }) => {
  if (m.kind === 'more') {
    credits++;
    wake?.();
    wake = null;
  }
});

const send = (m: ToMain, transfer?: ArrayBuffer[]) => port.postMessage(m, transfer);

(async () => {
  const prepare = chunkPreparer(job.ctx);
  let bytes = 0;
  let skip = job.skipChunks;
  for await (const records of readCsvRows(job.path, job.delimiter, (b) => (bytes = b))) {
    if (skip > 0) {
      skip--; // prepared by the main thread while this worker started
      continue;
    }
    while (credits <= 0) await new Promise<void>((r) => (wake = r));
    credits--;
    const chunk = prepare(records);
    send({ kind: 'chunk', chunk, bytes }, [chunk.num.buffer as ArrayBuffer, chunk.lines.buffer as ArrayBuffer, chunk.ok.buffer as ArrayBuffer]);
  }
  send({ kind: 'end', bytes });
})().catch((e: unknown) => {
  if (e instanceof AppError) send({ kind: 'error', app: { status: e.status, code: e.code, message: e.message, details: e.details } });
  else send({ kind: 'error', message: e instanceof Error ? e.message : String(e) });
});
