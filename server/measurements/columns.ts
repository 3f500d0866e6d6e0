/**
 * The canonical upload columns: the contract outside scripts rely on. Header matching is
 * case-insensitive; `synonyms` are other headers recognised automatically (compared after
 * lower-casing and dropping spaces, underscores, dots, brackets and dashes).
 */
export type ColumnKind = 'text' | 'number' | 'ra' | 'dec' | 'band' | 'frame' | 'digits';

export interface ColumnSpec {
  name: string;
  kind: ColumnKind;
  unit: string;
  description: string;
  required: string;
  synonyms: string[];
  /** For *_pct columns: the fraction column they fill. */
  percentOf?: string;
}

const STOKES_RULE = 'one set of: q, u, q_err, u_err (or the _pct forms) — or p, p_err, theta_deg, theta_err_deg';
const POSITION_RULE = 'one pair of: ra_deg, dec_deg — or glon_deg, glat_deg';
const DISTANCE_RULE = 'optional: parallax_mas with parallax_err_mas, or distance_pc with distance_err_pc (else the star’s catalog parallax)';

export const COLUMNS: ColumnSpec[] = [
  { name: 'name', kind: 'text', unit: '', required: 'optional', description: 'Star name or designation', synonyms: ['star', 'object', 'designation', 'starname', 'target'] },
  { name: 'source_id', kind: 'digits', unit: '', required: 'optional (preferred for matching)', description: 'Astrometric catalog source identifier (64-bit; kept as text, never rounded)', synonyms: ['sourceid', 'source', 'astrometricid', 'catalogid'] },
  { name: 'ra_deg', kind: 'ra', unit: 'deg (or h:m:s text)', required: POSITION_RULE, description: 'ICRS right ascension: decimal degrees, or sexagesimal hours such as 05:34:31.9', synonyms: ['ra', 'raj2000', 'raicrs', 'radeg', 'alpha'] },
  { name: 'dec_deg', kind: 'dec', unit: 'deg (or d:m:s text)', required: POSITION_RULE, description: 'ICRS declination: decimal degrees, or sexagesimal such as +22 00 52', synonyms: ['dec', 'de', 'dej2000', 'decj2000', 'deicrs', 'decdeg', 'dedeg', 'delta'] },
  { name: 'glon_deg', kind: 'number', unit: 'deg', required: POSITION_RULE, description: 'Galactic longitude l', synonyms: ['glon', 'l', 'lii', 'gall'] },
  { name: 'glat_deg', kind: 'number', unit: 'deg', required: POSITION_RULE, description: 'Galactic latitude b', synonyms: ['glat', 'b', 'bii', 'galb'] },
  { name: 'band', kind: 'band', unit: '', required: 'required', description: 'Photometric band: U, B, V, R or I (Johnson–Cousins; Rc and Ic accepted)', synonyms: ['filter', 'filt', 'passband'] },
  { name: 'q', kind: 'number', unit: 'fraction', required: STOKES_RULE, description: 'Normalised Stokes q = Q/I', synonyms: ['qfrac', 'stokesq'] },
  { name: 'u', kind: 'number', unit: 'fraction', required: STOKES_RULE, description: 'Normalised Stokes u = U/I', synonyms: ['ufrac', 'stokesu'] },
  { name: 'q_err', kind: 'number', unit: 'fraction', required: STOKES_RULE, description: 'Uncertainty (1σ) of q', synonyms: ['eq', 'qerr', 'sigq', 'sigmaq', 'dq'] },
  { name: 'u_err', kind: 'number', unit: 'fraction', required: STOKES_RULE, description: 'Uncertainty (1σ) of u', synonyms: ['eu', 'uerr', 'sigu', 'sigmau', 'du'] },
  { name: 'q_pct', kind: 'number', unit: '%', required: STOKES_RULE, description: 'Stokes q in percent', synonyms: ['q%', 'qpercent'], percentOf: 'q' },
  { name: 'u_pct', kind: 'number', unit: '%', required: STOKES_RULE, description: 'Stokes u in percent', synonyms: ['u%', 'upercent'], percentOf: 'u' },
  { name: 'q_err_pct', kind: 'number', unit: '%', required: STOKES_RULE, description: 'Uncertainty of q in percent', synonyms: ['eq%', 'qerr%', 'sigq%'], percentOf: 'q_err' },
  { name: 'u_err_pct', kind: 'number', unit: '%', required: STOKES_RULE, description: 'Uncertainty of u in percent', synonyms: ['eu%', 'uerr%', 'sigu%'], percentOf: 'u_err' },
  { name: 'p', kind: 'number', unit: 'fraction', required: STOKES_RULE, description: 'Polarization fraction (not debiased)', synonyms: ['pol', 'pfrac', 'polfrac'] },
  { name: 'p_err', kind: 'number', unit: 'fraction', required: STOKES_RULE, description: 'Uncertainty (1σ) of p', synonyms: ['ep', 'perr', 'sigp', 'sigmap', 'dp'] },
  { name: 'p_pct', kind: 'number', unit: '%', required: STOKES_RULE, description: 'Polarization fraction in percent', synonyms: ['p%', 'pol%', 'ppercent', 'polpct'], percentOf: 'p' },
  { name: 'p_err_pct', kind: 'number', unit: '%', required: STOKES_RULE, description: 'Uncertainty of p in percent', synonyms: ['ep%', 'perr%', 'sigp%', 'epol%'], percentOf: 'p_err' },
  { name: 'theta_deg', kind: 'number', unit: 'deg', required: STOKES_RULE, description: 'Polarization angle, IAU convention (from north through east); wrapped into [0, 180) with a warning', synonyms: ['theta', 'pa', 'evpa', 'angle', 'polangle', 'posangle', 'thetadeg', 'padeg'] },
  { name: 'theta_err_deg', kind: 'number', unit: 'deg', required: STOKES_RULE, description: 'Uncertainty (1σ) of the angle', synonyms: ['etheta', 'epa', 'thetaerr', 'paerr', 'sigtheta', 'sigmatheta', 'sigpa', 'dtheta', 'dpa'] },
  { name: 'angle_frame', kind: 'frame', unit: '', required: 'optional (default equatorial)', description: 'Reference of q, u and the angle: equatorial (from celestial north) or galactic (from Galactic north)', synonyms: ['frame', 'paframe', 'angleframe', 'reference'] },
  { name: 'parallax_mas', kind: 'number', unit: 'mas', required: DISTANCE_RULE, description: 'Parallax as published (the +0.017 mas global zero point is applied by Starveil)', synonyms: ['plx', 'parallax', 'varpi', 'plxmas'] },
  { name: 'parallax_err_mas', kind: 'number', unit: 'mas', required: DISTANCE_RULE, description: 'Uncertainty (1σ) of the parallax', synonyms: ['eplx', 'plxerr', 'parallaxerror', 'eparallax', 'sigplx', 'parallaxerr'] },
  { name: 'distance_pc', kind: 'number', unit: 'pc', required: DISTANCE_RULE, description: 'Distance, when known otherwise than from the parallax', synonyms: ['dist', 'distance', 'dpc', 'distpc'] },
  { name: 'distance_err_pc', kind: 'number', unit: 'pc', required: DISTANCE_RULE, description: 'Uncertainty (1σ) of the distance', synonyms: ['edist', 'disterr', 'distanceerror', 'edistance'] },
  { name: 'mjd', kind: 'number', unit: 'd', required: 'recommended', description: 'Modified Julian date of the observation (UTC)', synonyms: ['epoch', 'obsmjd', 'mjdobs', 'date'] },
  { name: 'instrument', kind: 'text', unit: '', required: 'required here or as the batch’s instrument', description: 'Instrument code as registered (e.g. KR-HAWK)', synonyms: ['inst', 'instr', 'camera', 'polarimeter'] },
  { name: 'ebv', kind: 'number', unit: 'mag', required: 'optional', description: 'Colour excess E(B−V), for the polarization-efficiency check', synonyms: ['e(b-v)', 'ebmv', 'eb-v', 'reddening'] },
];

export const COLUMN_BY_NAME = new Map(COLUMNS.map((c) => [c.name, c]));

/** Normalise a header for synonym matching. */
export function headerKey(h: string): string {
  return h.trim().toLowerCase().replace(/[\s_.\-()[\]]/g, '');
}

const SYNONYMS = new Map<string, string>();
for (const c of COLUMNS) {
  SYNONYMS.set(headerKey(c.name), c.name);
  for (const s of c.synonyms) SYNONYMS.set(headerKey(s), c.name);
}

/** Canonical name that a header means, if any. */
export function canonicalFor(header: string): string | undefined {
  return SYNONYMS.get(headerKey(header));
}
