/**
 * npm run fuzz [-- --seed N] — the fuzz properties of tests/fuzz/properties.ts at full length
 * (≥ 10,000 cases in all), printing how many cases ran and how they were answered.
 * The seeded short run is part of `npm test` (tests/api/fuzz.test.ts).
 */
import { makeTestApp, signedIn } from '../tests/helpers/app.js';
import { csvFileProperty, decimalProperty, normaliseProperty, requestProperty, safeCsvProperty, uploadProperty } from '../tests/fuzz/properties.js';

const seedArg = process.argv.indexOf('--seed');
const seed = seedArg > 0 ? Number(process.argv[seedArg + 1]) : Date.now() % 2147483647;
const RUNS = { normalise: 10_000, decimal: 10_000, safeCsv: 2_000, csvFiles: 2_000, uploads: 300, requests: 1_000 };
console.log(`fuzz seed ${seed} (repeat with: npm run fuzz -- --seed ${seed})`);

let total = 0;
async function step(name: string, runs: number, f: () => unknown): Promise<void> {
  const t0 = performance.now();
  const detail = await f();
  total += runs;
  console.log(`${name.padEnd(48)} ${String(runs).padStart(6)} cases  ${((performance.now() - t0) / 1000).toFixed(1).padStart(6)} s  ${detail ? JSON.stringify(detail) : 'ok'}`);
}

await step('normaliseRow (fuzzed rows)', RUNS.normalise, () => normaliseProperty(RUNS.normalise, seed));
await step('isDecimalNumber vs the decimal grammar', RUNS.decimal, () => decimalProperty(RUNS.decimal, seed));
await step('safeCsv: formulas neutralised, round trip', RUNS.safeCsv, () => safeCsvProperty(RUNS.safeCsv, seed));
await step('sniffCsv + readCsvRows on fuzzed files', RUNS.csvFiles, () => csvFileProperty(RUNS.csvFiles, seed));

const t = await makeTestApp({}, { tomography: true });
try {
  const observer = await signedIn(t.app, 'observer');
  const modeler = await signedIn(t.app, 'modeler');
  const unmapped = await observer.post('/api/v1/batches').attach('file', Buffer.from('colA,colB,colC\n1,2,3\n'), 'unmapped.csv');
  await step('HTTP uploads (status counts)', RUNS.uploads, () => uploadProperty(observer as never, t.db as never, RUNS.uploads, seed));
  await step('HTTP queries and mapping bodies (status counts)', RUNS.requests, () => requestProperty(modeler as never, observer as never, unmapped.body.id ?? null, RUNS.requests, seed));
} finally {
  await t.close();
}
console.log(`fuzz: ${total} cases, no failure (no crash, no 500, no partial batch)`);
