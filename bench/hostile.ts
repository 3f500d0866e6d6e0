/**
 * npm run bench:hostile — the hostile requests of the reliability work, each timed end to end and
 * with the longest stall of the event loop while it ran (perf_hooks.monitorEventLoopDelay): a stall
 * is time every other request would have waited. In-process (supertest), demo data with its run.
 */
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { makeTestApp, signedIn } from '../tests/helpers/app.js';

const t = await makeTestApp({}, { tomography: true });
const observer = await signedIn(t.app, 'observer');
const modeler = await signedIn(t.app, 'modeler');
const HEADER = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument';

async function measure(label: string, f: () => Promise<{ status: number; detail?: string }>): Promise<void> {
  const h = monitorEventLoopDelay({ resolution: 5 });
  h.enable();
  const t0 = performance.now();
  const r = await f();
  const ms = performance.now() - t0;
  h.disable();
  console.log(`${label.padEnd(64)} ${String(r.status).padStart(4)}  ${ms.toFixed(0).padStart(6)} ms total  longest stall ${(h.max / 1e6).toFixed(0).padStart(5)} ms${r.detail ? `  ${r.detail}` : ''}`);
}

try {
  // the same measure around cheap requests: the stalls the process has anyway (GC, background work)
  for (let i = 0; i < 3; i++) {
    await measure('baseline: GET /me, three times in a row', async () => {
      let status = 0;
      for (let k = 0; k < 3; k++) status = (await modeler.get('/api/v1/me')).status;
      return { status };
    });
  }
  const cell = `${'1'.repeat(60000)}e${'1'.repeat(60000)}x`;
  const hostile = `${HEADER}\nH,,10.5,20.25,V,${cell},0.01,0.001,0.001,1,0.1,61000,KR-HAWK\nF,,10.6,20.25,V,${cell},0.01,0.001,0.001,1,0.1,61000,KR-HAWK\n`;
  await measure(`upload: two ${Math.round(cell.length / 1000)} KB number cells (${Math.round(hostile.length / 1024)} KB file)`, async () => {
    const res = await observer.post('/api/v1/batches').attach('file', Buffer.from(hostile), 'hostile.csv');
    return { status: res.status, detail: `state ${res.body.state}, rejected ${res.body.counts?.rejected}` };
  });
  const names = Array.from({ length: 43395 }, (_, i) => `c${i}`);
  await measure('upload: header of 43,395 distinct names', async () => {
    const res = await observer.post('/api/v1/batches').attach('file', Buffer.from(`${names.join(',')}\n${names.map(() => '1').join(',')}\n`), 'wide.csv');
    return { status: res.status, detail: res.body.error?.message.slice(0, 60) };
  });
  await measure('upload: a 10 MB field', async () => {
    const res = await observer.post('/api/v1/batches').attach('file', Buffer.from(`${HEADER}\nH,,1,2,V,${'x'.repeat(10 * 1024 * 1024)}\n`), 'huge.csv');
    return { status: res.status, detail: res.body.error?.message.slice(0, 60) };
  });
  await measure('GET /masks?nside=512&format=csv&minLayers=0 (streamed)', async () => {
    const res = await modeler.get('/api/v1/masks?nside=512&format=csv&minLayers=0');
    return { status: res.status, detail: `${res.headers['starveil-rows']} rows, ${(res.text.length / 1e6).toFixed(1)} MB` };
  });
  await measure('GET /sightlines?ra=10&dec=10&radius=30 (index)', async () => {
    const res = await modeler.get('/api/v1/sightlines?ra=10&dec=10&radius=30');
    return { status: res.status, detail: `${res.body.cells?.length} cells` };
  });
  await measure('GET /sightlines?ra=10&dec=10&radius=30&include=stars', async () => {
    const res = await modeler.get('/api/v1/sightlines?ra=10&dec=10&radius=30&include=stars');
    return { status: res.status, detail: res.body.error?.message.slice(0, 60) };
  });
  await measure('GET /sightlines?ra=10&dec=10&radius=5&include=stars', async () => {
    const res = await modeler.get('/api/v1/sightlines?ra=10&dec=10&radius=5&include=stars');
    return { status: res.status, detail: `${res.body.cells?.length} cells` };
  });
} finally {
  await t.close();
}
