import { Worker } from 'node:worker_threads';
import { createRequire } from 'node:module';
import { pathToFileURL } from 'node:url';

/**
 * Start a worker thread from a module next to `here` (import.meta.url of the caller). Under tsx
 * or vitest (.ts sources) the worker registers tsx first, then imports the .ts entry.
 */
export function startModuleWorker(here: string, name: string, data: unknown, resourceLimits?: { maxOldGenerationSizeMb?: number }): Worker {
  if (here.endsWith('.ts')) {
    const req = createRequire(here);
    const apiPath = req.resolve('tsx/esm/api').replace(/index\.cjs$/, 'index.mjs');
    const tsxApi = pathToFileURL(apiPath).href;
    const workerUrl = new URL(`./${name}.ts`, here).href;
    const bootstrap =
      `import(${JSON.stringify(tsxApi)}).then((m) => { m.register(); return import(${JSON.stringify(workerUrl)}); })` +
      `.catch((e) => { setImmediate(() => { throw e; }); });`;
    return new Worker(bootstrap, { eval: true, workerData: data, resourceLimits });
  }
  return new Worker(new URL(`./${name}.js`, here), { workerData: data, resourceLimits });
}
