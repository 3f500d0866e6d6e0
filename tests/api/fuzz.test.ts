/**
 * Seeded fuzzing (fast-check) of the CSV reader, the row normaliser, the CSV writer and the HTTP
 * routes: no crash, no 500, no partial batch. `npm run fuzz` runs the same properties ≥ 10,000 times.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type request from 'supertest';
import { makeTestApp, signedIn, type TestApp } from '../helpers/app.js';
import { csvFileProperty, decimalProperty, normaliseProperty, requestProperty, safeCsvProperty, uploadProperty } from '../fuzz/properties.js';

const SEED = 20261202;

describe('pure functions (seeded, 3,300 cases)', () => {
  it('normaliseRow: 1,500 fuzzed rows', () => normaliseProperty(1500, SEED));
  it('isDecimalNumber agrees with the decimal grammar: 1,000 cells', () => decimalProperty(1000, SEED));
  it('safeCsv neutralises formulas and round-trips through csv-parse: 500 tables', () => safeCsvProperty(500, SEED));
  it('sniffCsv + readCsvRows refuse with a 4xx or read: 300 files', async () => {
    const r = await csvFileProperty(300, SEED);
    expect(r.refused + r.read).toBe(300);
    expect(r.refused).toBeGreaterThan(0);
    expect(r.read).toBeGreaterThan(0);
  }, 120_000);
});

describe('over HTTP (seeded)', () => {
  let t: TestApp;
  let observer: request.Agent;
  let modeler: request.Agent;
  let mappingBatch: number | null = null;
  beforeAll(async () => {
    t = await makeTestApp({}, { tomography: true });
    observer = await signedIn(t.app, 'observer');
    modeler = await signedIn(t.app, 'modeler');
    const res = await observer.post('/api/v1/batches').attach('file', Buffer.from('colA,colB,colC\n1,2,3\n'), 'unmapped.csv');
    mappingBatch = res.body.state === 'needs_mapping' ? res.body.id : null;
  }, 180_000);
  afterAll(async () => t?.close());

  it('80 fuzzed uploads: 2xx/400/413/415 only, failed batches hold no rows', async () => {
    const statuses = await uploadProperty(observer as never, t.db as never, 80, SEED);
    expect(Object.values(statuses).reduce((a, b) => a + b, 0)).toBe(80);
  }, 180_000);

  it('200 fuzzed queries and mapping bodies: never a 500', async () => {
    expect(mappingBatch).not.toBeNull();
    const statuses = await requestProperty(modeler as never, observer as never, mappingBatch, 200, SEED);
    expect(Object.values(statuses).reduce((a, b) => a + b, 0)).toBeGreaterThan(0);
  }, 180_000);
});
