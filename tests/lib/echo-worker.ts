/** Worker entry for tests/lib/workers.test.ts: answers each message with its workerData and the message. */
import { parentPort, workerData } from 'node:worker_threads';

const typed: number = 1; // a type annotation: this entry only loads if the worker runs TypeScript
parentPort!.on('message', (m: unknown) => parentPort!.postMessage({ workerData, got: m, typed }));
