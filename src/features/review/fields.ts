/** The measurement columns of the review table: header, unit, display precision, and whether a curator may edit or sort them. */
import type { EditableField, MeasurementSort, ReviewRow } from './types';

export type FieldKey = keyof ReviewRow & string;

export interface FieldSpec {
  key: FieldKey;
  /** column header, units in brackets */
  header: string;
  /** what the header means, for its tooltip */
  description: string;
  kind: 'number' | 'text';
  /** decimals shown (the editor always starts from the full stored value) */
  digits?: number;
  editable: boolean;
  sort?: MeasurementSort;
  width: number;
  hiddenByDefault?: boolean;
}

export const FIELDS: FieldSpec[] = [
  { key: 'band', header: 'band', description: 'Photometric band', kind: 'text', editable: true, sort: 'band', width: 64 },
  { key: 'instrument', header: 'instrument', description: 'Instrument code', kind: 'text', editable: true, sort: 'instrument', width: 100 },
  { key: 'mjd', header: 'MJD [d]', description: 'Epoch of the observation, modified Julian date (UTC)', kind: 'number', digits: 5, editable: true, sort: 'mjd', width: 112 },
  { key: 'ra_deg', header: 'RA [deg]', description: 'Right ascension, ICRS', kind: 'number', digits: 6, editable: true, width: 108 },
  { key: 'dec_deg', header: 'Dec [deg]', description: 'Declination, ICRS', kind: 'number', digits: 6, editable: true, width: 108 },
  { key: 'q', header: 'q [fraction]', description: 'Stokes q = Q/I, equatorial reference, IAU convention', kind: 'number', digits: 6, editable: true, sort: 'q', width: 104 },
  { key: 'q_err', header: 'σq [fraction]', description: 'Uncertainty (1σ) of q', kind: 'number', digits: 6, editable: true, width: 104 },
  { key: 'u', header: 'u [fraction]', description: 'Stokes u = U/I, equatorial reference, IAU convention', kind: 'number', digits: 6, editable: true, sort: 'u', width: 104 },
  { key: 'u_err', header: 'σu [fraction]', description: 'Uncertainty (1σ) of u', kind: 'number', digits: 6, editable: true, width: 104 },
  { key: 'p', header: 'p [fraction]', description: 'Polarization fraction (not debiased)', kind: 'number', digits: 5, editable: true, sort: 'p', width: 96 },
  { key: 'p_err', header: 'σp [fraction]', description: 'Uncertainty (1σ) of p', kind: 'number', digits: 5, editable: true, width: 100 },
  { key: 'p_debiased', header: 'p debiased [fraction]', description: 'Debiased polarization fraction (derived, not editable)', kind: 'number', digits: 5, editable: false, sort: 'p_debiased', width: 128 },
  { key: 'theta_deg', header: 'θ [deg]', description: 'Polarization angle east of north, [0, 180)', kind: 'number', digits: 2, editable: true, sort: 'theta_deg', width: 80 },
  { key: 'theta_err_deg', header: 'σθ [deg]', description: 'Uncertainty (1σ) of the angle', kind: 'number', digits: 2, editable: true, sort: 'theta_err_deg', width: 84 },
  { key: 'theta_gal_deg', header: 'θ Galactic [deg]', description: 'Angle from Galactic north through east (derived)', kind: 'number', digits: 2, editable: false, width: 112, hiddenByDefault: true },
  { key: 'parallax_mas', header: 'parallax [mas]', description: 'Parallax as published', kind: 'number', digits: 4, editable: true, width: 104 },
  { key: 'parallax_err_mas', header: 'σϖ [mas]', description: 'Uncertainty (1σ) of the parallax', kind: 'number', digits: 4, editable: true, width: 88 },
  { key: 'distance_pc', header: 'distance [pc]', description: 'Distance (derived from the parallax unless given); 16th–84th percentile in the tooltip', kind: 'number', digits: 0, editable: true, sort: 'distance_pc', width: 104 },
  { key: 'distance_method', header: 'distance method', description: 'How the distance was found', kind: 'text', editable: false, width: 124 },
  { key: 'ebv', header: 'E(B−V) [mag]', description: 'Colour excess', kind: 'number', digits: 3, editable: true, width: 96, hiddenByDefault: true },
];

export const FIELD_BY_KEY = new Map(FIELDS.map((f) => [f.key, f]));

export const isEditableField = (k: string): k is EditableField => FIELD_BY_KEY.get(k as FieldKey)?.editable === true;

/** Flags the server derives, with the cells they concern and what they mean. */
export const FLAG_INFO: Record<string, { fields: FieldKey[]; text: string; /** how the matching warning text reads, to say it once */ same: RegExp }> = {
  low_p_snr: { fields: ['q', 'u', 'p', 'theta_deg'], text: 'p/σp is below 5: the angle distribution is not Gaussian', same: /p\/σp/ },
  low_parallax_snr: { fields: ['parallax_mas', 'distance_pc'], text: 'parallax S/N is below 5: the distance is the EDSD posterior mode, not 1/parallax', same: /parallax S\/N/ },
  no_distance: { fields: ['parallax_mas', 'distance_pc'], text: 'no parallax or distance: the star cannot enter tomography until one is known', same: /no parallax or distance/ },
  above_efficiency_envelope: { fields: ['p', 'ebv'], text: 'p/E(B−V) is above the 9 %/mag envelope: intrinsic polarization or a bad value?', same: /E\(B−V\)/ },
};

/** Fields whose values are re-derived together when one of them is edited. */
const POLARIZATION = ['q', 'u', 'q_err', 'u_err', 'p', 'p_err', 'theta_deg', 'theta_err_deg', 'ebv'];
const DISTANCE = ['parallax_mas', 'parallax_err_mas', 'distance_pc'];
export function fieldsAffectedBy(field: string): string[] {
  if (POLARIZATION.includes(field)) return POLARIZATION;
  if (DISTANCE.includes(field)) return DISTANCE;
  return [field];
}

/** The notes (warnings and flags) that concern one cell of a row. */
export function cellNotes(row: ReviewRow, key: string): string[] {
  const notes = row.warnings.filter((w) => (w.field ?? w.column) === key).map((w) => w.message);
  for (const f of row.flags) {
    const info = FLAG_INFO[f];
    if (info?.fields.includes(key as FieldKey) && !notes.some((n) => info.same.test(n))) notes.push(info.text);
  }
  return notes;
}

/** The text a cell editor starts from: the full stored value, never the rounded display. */
export const editText = (v: unknown) => (v === null || v === undefined ? '' : String(v));

/**
 * The value sent for an edit: numbers as JSON numbers; text that is not a number is sent as typed
 * so the server's schema names the problem (one source of truth); an empty cell clears the value.
 */
export function parseEdit(spec: FieldSpec, text: string): number | string | null {
  const t = text.trim();
  if (t === '') return null;
  if (spec.kind === 'text') return t;
  const n = Number(t.replace(/\u2212/g, '-'));
  return Number.isFinite(n) ? n : t;
}
