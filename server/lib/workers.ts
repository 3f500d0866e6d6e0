/**
 * Starting a worker thread, written once for every capability that runs work off the request
 * thread (intake's check and prepare workers, the tomography pool).
 *
 *   const w = startWorker(new URL('./check-worker.ts', import.meta.url), workerData, { resourceLimits });
 *
 * Name the entry by its .ts file. Under tsx or vitest (this module itself is a .ts source) the new
 * thread gets a one-line bootstrap (eval) that imports tsx's ESM API, resolved to an absolute file
 * URL so the working directory does not matter, calls its register() in that thread and then
 * imports the entry. `execArgv: ['--import', 'tsx']` is not enough on Node 20: tsx's --import
 * entry registers its hooks on the main thread only. From a compiled build the entry's .js
 * sibling is started directly.
 */
import { Worker, type WorkerOptions } from 'node:worker_threads';
import { createRequire } from 'node:module';
import { pathToFileURL } from 'node:url';

/** Everything Worker accepts except what startWorker sets itself. */
export type StartWorkerOptions = Omit<WorkerOptions, 'eval' | 'workerData'>;

/** True when this module runs from TypeScript source (tsx, vitest), false in a compiled build. */
export const RUNNING_FROM_SOURCE = import.meta.url.endsWith('.ts');

let tsxApiUrl: string | undefined;
/** tsx's documented ESM API (tsx/esm/api, its "import" condition: index.mjs), as a file URL. */
function tsxApi(): string {
  if (!tsxApiUrl) {
    const apiPath = createRequire(import.meta.url).resolve('tsx/esm/api').replace(/index\.cjs$/, 'index.mjs');
    tsxApiUrl = pathToFileURL(apiPath).href;
  }
  return tsxApiUrl;
}

/** The file a worker entry runs from: the .ts source under tsx, its .js sibling in a build. */
export function workerEntry(entry: URL, fromSource = RUNNING_FROM_SOURCE): URL {
  if (fromSource || !entry.pathname.endsWith('.ts')) return entry;
  const built = new URL(entry.href);
  built.pathname = built.pathname.replace(/\.ts$/, '.js');
  return built;
}

/**
 * Start the worker whose entry is `entry` (a .ts file URL, usually
 * `new URL('./x-worker.ts', import.meta.url)`), handing it `workerData`. A failure to load the
 * entry surfaces as the worker's 'error' event, as for any other worker.
 */
export function startWorker(entry: URL, workerData?: unknown, options: StartWorkerOptions = {}): Worker {
  const file = workerEntry(entry);
  if (!RUNNING_FROM_SOURCE || !file.pathname.endsWith('.ts')) return new Worker(file, { ...options, workerData });
  const bootstrap =
    `import(${JSON.stringify(tsxApi())}).then((m) => { m.register(); return import(${JSON.stringify(file.href)}); })` +
    `.catch((e) => { setImmediate(() => { throw e; }); });`;
  return new Worker(bootstrap, { ...options, eval: true, workerData });
}
