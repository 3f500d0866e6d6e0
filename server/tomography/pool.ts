/**
 * Compute pool for tomography runs: fits many cells on node worker_threads, one worker per core
 * by default (os.availableParallelism()).
 *
 * Cells are packed into typed arrays (packing.ts) and sent in chunks; a worker asks for
 * the next chunk when it returns one (dynamic scheduling, so uneven cells balance). Each cell's
 * random streams depend only on its cellId and draw number, so results are identical whatever
 * the number of workers or the order in which chunks finish.
 *
 * Workers start through server/lib/workers.ts (the .ts source under tsx, worker.js in a build).
 * The fitting itself is pure (server/science/tomography); only this scheduling is Node.
 */

import type { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import type { FitOptions, SightlineResult, TomographyStar } from '../science/tomography/types.js';
import { packCells, type PackedCells } from '../science/tomography/packing.js';
import { startWorker } from '../lib/workers.js';

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
        const w = startWorker(new URL('./worker.ts', import.meta.url));
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
