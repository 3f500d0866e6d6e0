/** The masks page's criteria as text fields, and the one query string every request and download is built from. */

export interface MaskCriteria {
  run: string;
  release: string;
  minLayers: string;
  minJumpDeg: string;
  minSignificance: string;
  minStars: string;
  minDistancePc: string;
  maxDistancePc: string;
  nside: string;
  convention: 'iau' | 'cosmo';
}

export const CRITERIA_KEYS = ['run', 'release', 'minLayers', 'minJumpDeg', 'minSignificance', 'minStars', 'minDistancePc', 'maxDistancePc', 'nside', 'convention'] as const;

/** The server's defaults (minLayers 2, no jump, star or distance criterion; the run's NSIDE; IAU). */
export const DEFAULT_CRITERIA: MaskCriteria = { run: '', release: '', minLayers: '2', minJumpDeg: '', minSignificance: '', minStars: '', minDistancePc: '', maxDistancePc: '', nside: '', convention: 'iau' };

export type MaskFormat = 'json' | 'fits' | 'moc-json' | 'moc-ascii' | 'csv';

export function criteriaFromParams(params: URLSearchParams): MaskCriteria {
  const out = { ...DEFAULT_CRITERIA };
  for (const k of CRITERIA_KEYS) {
    const v = params.get(k);
    if (v === null) continue;
    if (k === 'convention') out.convention = v === 'cosmo' ? 'cosmo' : 'iau';
    else out[k] = v;
  }
  return out;
}

/** Query string of the non-empty criteria (release wins over run: the server ties them together). */
export function maskQuery(c: MaskCriteria, format?: MaskFormat): string {
  const p = new URLSearchParams();
  for (const k of CRITERIA_KEYS) {
    const v = String(c[k]).trim();
    if (!v || (k === 'convention' && v === 'iau') || (k === 'run' && c.release.trim())) continue;
    p.set(k, v);
  }
  if (format) p.set('format', format);
  return p.toString();
}
