/** Worker thread of the tomography pool (pool.ts): fits the cells of each chunk it is sent. */

import { parentPort } from 'node:worker_threads';
import { fitSightline } from '../science/tomography/fit.js';
import { unpackCell } from '../science/tomography/packing.js';
import type { SightlineResult } from '../science/tomography/types.js';
import type { WorkFailure, WorkRequest, WorkResult } from './pool.js';

if (!parentPort) throw new Error('tomography worker.ts must run as a worker thread');
const port = parentPort;

port.on('message', (m: WorkRequest) => {
  try {
    const results: SightlineResult[] = [];
    for (let c = 0; c < m.packed.cellIds.length; c++) {
      results.push(fitSightline(unpackCell(m.packed, c), { ...m.options, cellId: m.packed.cellIds[c] }));
    }
    const reply: WorkResult = { kind: 'result', chunk: m.chunk, results };
    port.postMessage(reply);
  } catch (e) {
    const reply: WorkFailure = { kind: 'error', chunk: m.chunk, message: e instanceof Error ? e.message : String(e) };
    port.postMessage(reply);
  }
});
