import type { InfiniteData, QueryClient } from '@tanstack/react-query';
import { fieldsAffectedBy } from '../fields';
import type { MeasurementPage, ReviewRow, RowWarning, StoredMeasurement } from '../types';
import { batchMeasurementsKey } from './measurements';

/** The listing's fields that a stored measurement carries (the rest — line, star name, candidates — do not change on an edit). */
const STORED_FIELDS = [
  'state', 'version', 'band', 'instrument', 'mjd', 'ra_deg', 'dec_deg', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'p_debiased', 'theta_deg', 'theta_err_deg', 'theta_gal_deg',
  'parallax_mas', 'parallax_err_mas', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc', 'distance_method', 'ebv', 'star_id', 'conflicts_with',
] as const;

/** A stored measurement (the database row the write routes answer with) as a patch for a listed row. */
export function rowPatchFromStored(m: StoredMeasurement): Partial<ReviewRow> {
  const patch: Record<string, unknown> = {};
  for (const k of STORED_FIELDS) if (k in m) patch[k] = (m as Record<string, unknown>)[k];
  if ('flags_json' in m) patch.flags = m.flags_json ? (JSON.parse(m.flags_json) as string[]) : [];
  return patch as Partial<ReviewRow>;
}

/**
 * After an edit of `field`: the listing's warnings were made when the file was checked, so drop
 * those the edit re-derived and keep the edit's own.
 */
export function mergeWarnings(old: RowWarning[], field: string, fresh: RowWarning[]): RowWarning[] {
  const affected = fieldsAffectedBy(field);
  return [...old.filter((w) => !affected.includes(w.field ?? w.column ?? '')), ...fresh];
}

type Pages = InfiniteData<MeasurementPage, number>;

/** Apply a change to one measurement in every cached listing of its batch. */
export function patchCachedRow(qc: QueryClient, batchId: number, id: number, change: (row: ReviewRow) => Partial<ReviewRow>) {
  qc.setQueriesData<Pages>({ queryKey: [...batchMeasurementsKey(batchId), 'list'] }, (data) => {
    if (!data) return data;
    let hit = false;
    const pages = data.pages.map((pg) => {
      const i = pg.rows.findIndex((r) => r.id === id);
      if (i < 0) return pg;
      hit = true;
      const rows = pg.rows.slice();
      rows[i] = { ...rows[i], ...change(rows[i]) };
      return { ...pg, rows };
    });
    return hit ? { ...data, pages } : data;
  });
}

/** The row as currently cached, from whichever listing holds it. */
export function findCachedRow(qc: QueryClient, batchId: number, id: number): ReviewRow | undefined {
  for (const [, data] of qc.getQueriesData<Pages>({ queryKey: [...batchMeasurementsKey(batchId), 'list'] })) {
    for (const pg of data?.pages ?? []) {
      const r = pg.rows.find((x) => x.id === id);
      if (r) return r;
    }
  }
  return undefined;
}
