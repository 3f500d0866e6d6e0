import type { Derived } from './derive.js';

/**
 * The one list of stored columns of a measurement (and of the star and batch row intake writes
 * beside it). Intake writes them in bulk from prepared chunks; review and the batch-row reader
 * read the same list.
 */
export const STAR_COLS = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'parallax_mas', 'parallax_err_mas', 'hpx15', 'created_at', 'created_by', 'batch_id'] as const;
export const ROW_COLS = ['id', 'batch_id', 'line', 'values_json', 'state', 'errors_json', 'warnings_json', 'candidates_json', 'star_match', 'star_id', 'measurement_id', 'duplicate_of', 'curator_note'] as const;
/** numeric columns of a measurement (NaN in a prepared chunk = null) */
export const MEAS_NUM = ['ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'hpx15', 'mjd', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'p_debiased', 'theta_deg', 'theta_err_deg', 'q_gal', 'u_gal', 'q_gal_err', 'u_gal_err', 'theta_gal_deg', 'parallax_mas', 'parallax_err_mas', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc', 'ebv'] as const;
export const MEAS_COLS = ['id', 'star_id', 'batch_id', 'batch_row_id', 'state', 'version', 'band', 'instrument', 'distance_method', 'flags_json', 'conflicts_with', 'created_at', 'updated_at', ...MEAS_NUM] as const;
/** the derived values shown beside a batch row */
export const DERIVED_COLUMNS = ['band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'p_debiased', 'theta_deg', 'theta_err_deg', 'q_gal', 'u_gal', 'theta_gal_deg', 'glon_deg', 'glat_deg', 'distance_pc', 'distance_lo_pc', 'distance_hi_pc', 'distance_method', 'state', 'flags_json'] as const;

/** Text columns of a measurement that come from derivation (the rest of MEAS_COLS is numeric or bookkeeping). */
export const MEAS_DERIVED_TEXT = ['band', 'instrument', 'distance_method', 'flags_json'] as const;

/**
 * The stored columns of one derived measurement (a single edit, an attach, a calibration): the
 * same columns intake writes in bulk (MEAS_NUM + MEAS_DERIVED_TEXT), never more.
 */
export function derivedColumns(d: Derived): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const k of MEAS_NUM) out[k] = (d as unknown as Record<string, unknown>)[k] ?? null;
  out.band = d.band;
  out.instrument = d.instrument;
  out.distance_method = d.distance_method;
  out.flags_json = d.flags.length ? JSON.stringify(d.flags) : null;
  return out;
}
