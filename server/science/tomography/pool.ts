/**
 * Compute pool for tomography runs: fits many cells on node worker_threads, one worker per core
 * by default (os.availableParallelism()). Node only — not exported from index.ts, so the pure
 * module stays importable by the browser.
 *
 * Cells are packed into typed arrays (packing.ts) and sent in chunks; a worker asks for
 * the next chunk when it returns one (dynamic scheduling, so uneven cells balance). Each cell's
 * random streams depend only on its cellId and draw number, so results are identical whatever
 * the number of workers or the order in which chunks finish.
 *
 * Workers run the TypeScript source under tsx (see startWorker), or worker.js next to a
 * compiled build.
 */

import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { createRequire } from 'node:module';
import { pathToFileURL } from 'node:url';
import type { FitOptions, SightlineResult, TomographyStar } from './types';
import { packCells, type PackedCells } from './packing';

export interface TomographyCell {
  cellId: string;
  stars: TomographyStar[];
}

export interface PoolOptions {
  /** Worker threads; default os.availableParallelism(). */
  threads?: number;
  /** Cells per message; default chosen from the number of cells and threads. */
  chunkSize?: number;
  /** Stops the run: no further chunks are sent and the promise rejects with an AbortError. */
  signal?: AbortSignal;
}

export interface PoolProgress {
  cellsDone: number;
  cellsTotal: number;
  starsDone: number;
  elapsedMs: number;
}

/** Messages between pool and worker. */
export interface WorkRequest {
  kind: 'work';
  chunk: number;
  packed: PackedCells;
  options: FitOptions;
}
export interface WorkResult {
  kind: 'result';
  chunk: number;
  results: SightlineResult[];
}
export interface WorkFailure {
  kind: 'error';
  chunk: number;
  message: string;
}

/**
 * How to start a worker. From TypeScript source: a one-line bootstrap (eval) imports tsx's ESM
 * API (resolved to an absolute file URL, so the working directory does not matter), calls its
 * register() in the new thread, then imports worker.ts. `execArgv: ['--import', 'tsx']` is not
 * enough on Node 20: tsx's --import entry registers its hooks on the main thread only. From a
 * compiled build: worker.js directly.
 */
function startWorker(): Worker {
  const here = import.meta.url;
  if (here.endsWith('.ts')) {
    const req = createRequire(here);
    // tsx's documented ESM API (tsx/esm/api, its "import" condition: index.mjs).
    const apiPath = req.resolve('tsx/esm/api').replace(/index\.cjs$/, 'index.mjs');
    const tsxApi = pathToFileURL(apiPath).href;
    const workerUrl = new URL('./worker.ts', here).href;
    const bootstrap =
      `import(${JSON.stringify(tsxApi)}).then((m) => { m.register(); return import(${JSON.stringify(workerUrl)}); })` +
      `.catch((e) => { setImmediate(() => { throw e; }); });`;
    return new Worker(bootstrap, { eval: true });
  }
  return new Worker(new URL('./worker.js', here));
}

/**
 * Fits every cell with fitSightline(cell.stars, {...options, cellId: cell.cellId}) on worker
 * threads. Results come back in the order of `cells`. onProgress is called after each chunk.
 */
export async function runCellsInWorkers(
  cells: TomographyCell[],
  options: Omit<FitOptions, 'cellId' | 'seed'> = {},
  onProgress?: (p: PoolProgress) => void,
  pool: PoolOptions = {},
): Promise<SightlineResult[]> {
  const started = performance.now();
  const total = cells.length;
  const results: SightlineResult[] = new Array(total);
  if (total === 0) return results;
  const threads = Math.max(1, Math.min(pool.threads ?? availableParallelism(), total));
  const chunkSize = pool.chunkSize ?? Math.max(1, Math.min(256, Math.ceil(total / (threads * 16))));
  const chunks: { start: number; end: number }[] = [];
  for (let s = 0; s < total; s += chunkSize) chunks.push({ start: s, end: Math.min(total, s + chunkSize) });
    const workers: Worker[] = [];
  let next = 0;
  let done = 0;
  let starsDone = 0;
  try {
    await new Promise<void>((resolve, reject) => {
      let failed = false;
      const fail = (err: Error): void => {
        if (failed) return;
        failed = true;
        reject(err);
      };
      pool.signal?.addEventListener('abort', () => fail(Object.assign(new Error('tomography run cancelled'), { name: 'AbortError' })), { once: true });
      if (pool.signal?.aborted) fail(Object.assign(new Error('tomography run cancelled'), { name: 'AbortError' }));
      const send = (w: Worker): boolean => {
        if (next >= chunks.length || failed) return false;
        const c = next++;
        const { start, end } = chunks[c];
        const packed = packCells(cells.slice(start, end));
        const msg: WorkRequest = { kind: 'work', chunk: c, packed, options };
        w.postMessage(msg, [packed.numbers.buffer as ArrayBuffer, packed.offsets.buffer as ArrayBuffer]);
        return true;
      };
      for (let i = 0; i < threads; i++) {
        const w = startWorker();
        workers.push(w);
        w.on('message', (m: WorkResult | WorkFailure) => {
          if (m.kind === 'error') { fail(new Error(`tomography worker, chunk ${m.chunk}: ${m.message}`)); return; }
          const { start } = chunks[m.chunk];
          for (let k = 0; k < m.results.length; k++) {
            results[start + k] = m.results[k];
            starsDone += m.results[k].nStars;
          }
          done += m.results.length;
          onProgress?.({ cellsDone: done, cellsTotal: total, starsDone, elapsedMs: performance.now() - started });
          if (done === total) resolve();
          else send(w);
        });
        w.on('error', (e) => fail(e instanceof Error ? e : new Error(String(e))));
        w.on('exit', (code) => { if (code !== 0 && done < total) fail(new Error(`tomography worker exited with code ${code}`)); });
        send(w);
      }
    });
  } finally {
    await Promise.all(workers.map((w) => w.terminate()));
  }
  return results;
}
