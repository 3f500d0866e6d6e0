import { describe, expect, it } from 'vitest';
import { once } from 'node:events';
import { startWorker, workerEntry } from '../../server/lib/workers';

describe('startWorker', () => {
  it('runs a .ts entry from source and hands it workerData', async () => {
    const w = startWorker(new URL('./echo-worker.ts', import.meta.url), { batch: 7 });
    try {
      w.postMessage('hello');
      const [reply] = await once(w, 'message');
      expect(reply).toEqual({ workerData: { batch: 7 }, got: 'hello', typed: 1 });
    } finally {
      await w.terminate();
    }
  });

  it('reports an entry that cannot load as an error event', async () => {
    const w = startWorker(new URL('./no-such-worker.ts', import.meta.url));
    const [err] = await once(w, 'error');
    expect(String(err)).toMatch(/no-such-worker/);
  });
});

describe('workerEntry', () => {
  it('keeps the .ts entry from source and names its .js sibling in a build', () => {
    const entry = new URL('file:///app/server/intake/check-worker.ts');
    expect(workerEntry(entry, true).href).toBe('file:///app/server/intake/check-worker.ts');
    expect(workerEntry(entry, false).href).toBe('file:///app/server/intake/check-worker.js');
    expect(workerEntry(new URL('file:///app/w.mjs'), false).href).toBe('file:///app/w.mjs');
  });
});
