import { startWorker } from '../lib/workers.js';
import { AppError } from '../errors.js';
import { readCsvRows } from './csv.js';
import { chunkPreparer, type PrepareContext, type PreparedChunk } from './prepare.js';

export type ToMain =
  | { kind: 'chunk'; chunk: PreparedChunk; bytes: number }
  | { kind: 'end'; bytes: number }
  | { kind: 'error'; app?: { status: number; code: string; message: string; details?: unknown }; message?: string };

/** Chunks prepared ahead by the worker (memory stays bounded by a few chunks). */
const AHEAD = 2;
/** Chunks the main thread prepares itself while the worker starts. */
const INLINE_CHUNKS = 4;

/**
 * The worker's live data is a read buffer and a few chunks of 2,000 rows, whatever the file's
 * size: a small heap keeps V8 from growing it (and the server's memory) with its garbage.
 */
const PREPARE_HEAP = { maxOldGenerationSizeMb: 64, maxYoungGenerationSizeMb: 16 };

const startPrepareWorker = (data: unknown) => startWorker(new URL('./prepare-worker.ts', import.meta.url), data, { resourceLimits: PREPARE_HEAP });

/**
 * Prepared chunks of a stored upload, in file order. `inWorker`: parse and prepare on a worker
 * thread, overlapping the main thread's cross-match and inserts; otherwise in this thread.
 */
export async function* preparedChunks(path: string, delimiter: string, ctx: PrepareContext, onBytes: (bytes: number) => void, inWorker: boolean): AsyncGenerator<PreparedChunk> {
  if (!inWorker) {
    const prepare = chunkPreparer(ctx);
    for await (const records of readCsvRows(path, delimiter, onBytes)) yield prepare(records);
    return;
  }
  const worker = startPrepareWorker({ path, delimiter, ctx, ahead: AHEAD, skipChunks: INLINE_CHUNKS });
  const queue: ToMain[] = [];
  let wake: (() => void) | null = null;
  let failure: Error | null = null;
  const signal = () => {
    wake?.();
    wake = null;
  };
  worker.on('message', (m: ToMain) => {
    queue.push(m);
    signal();
  });
  worker.on('error', (e) => {
    failure = e instanceof Error ? e : new Error(String(e));
    signal();
  });
  worker.on('exit', (code) => {
    if (!failure) failure = new Error(`intake worker exited with code ${code}`);
    signal();
  });
  try {
    // while the worker starts (~0.4 s), prepare the first chunks here; the worker skips them
    const prepare = chunkPreparer(ctx);
    let k = 0;
    for await (const records of readCsvRows(path, delimiter, onBytes)) {
      yield prepare(records);
      if (++k >= INLINE_CHUNKS) break;
    }
    if (k < INLINE_CHUNKS) return; // the whole file
    for (;;) {
      while (!queue.length) {
        if (failure) throw failure;
        await new Promise<void>((r) => (wake = r));
      }
      const m = queue.shift()!;
      if (m.kind === 'error') throw m.app ? new AppError(m.app.status, m.app.code, m.app.message, m.app.details) : new Error(m.message);
      onBytes(m.bytes);
      if (m.kind === 'end') return;
      worker.postMessage({ kind: 'more' });
      yield m.chunk;
    }
  } finally {
    worker.removeAllListeners();
    await worker.terminate();
  }
}
