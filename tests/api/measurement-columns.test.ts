// One list of a measurement's stored columns (server/measurements/stored.ts): intake's bulk
// writes and single edits use it, and it matches the table the migrations build.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../helpers/app.js';
import { deriveMeasurement } from '../../server/measurements/derive.js';
import { derivedColumns, MEAS_COLS, MEAS_DERIVED_TEXT, MEAS_NUM, ROW_COLS, STAR_COLS } from '../../server/measurements/stored.js';

let t: TestApp;
beforeAll(async () => {
  t = await makeTestApp({}, { seed: false });
});
afterAll(async () => t.close());

describe('the stored columns of a measurement', () => {
  it('are columns of the tables, every one', async () => {
    for (const [table, cols] of [['measurements', MEAS_COLS], ['stars', STAR_COLS], ['batch_rows', ROW_COLS]] as const) {
      const actual = Object.keys(await t.db(table).columnInfo());
      expect(cols.filter((c) => !actual.includes(c)), table).toEqual([]);
    }
  });

  it('a single edit writes exactly what intake writes from the same derivation', () => {
    // q = 0.01, u = 0 at (10°, 20°): values checked against references in tests/api/intake.test.ts
    const { derived } = deriveMeasurement({ ra_deg: 10, dec_deg: 20, band: 'V', instrument: 'KR-HAWK', q: 0.01, u: 0, q_err: 0.0005, u_err: 0.0005, parallax_mas: 2, parallax_err_mas: 0.05, mjd: 61000.5 } as never);
    const cols = derivedColumns(derived);
    expect(Object.keys(cols).sort()).toEqual([...MEAS_NUM, ...MEAS_DERIVED_TEXT].sort());
    expect(Object.keys(cols).every((k) => (MEAS_COLS as readonly string[]).includes(k))).toBe(true);
    expect(cols.p).toBeCloseTo(0.01, 12);
    expect(cols.band).toBe('V');
  });
});
