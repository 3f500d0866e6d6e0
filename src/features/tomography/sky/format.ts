/** Display helpers for sky positions and tomography numbers. */

export const frameName = (f: 'G' | 'C') => (f === 'G' ? 'Galactic' : 'equatorial (ICRS)');
export const frameTitle = (f: 'G' | 'C') => (f === 'G' ? 'Galactic' : 'Equatorial (ICRS)');
export const lonName = (f: 'G' | 'C') => (f === 'G' ? 'l' : 'RA');
export const latName = (f: 'G' | 'C') => (f === 'G' ? 'b' : 'Dec');

/** Degrees with a fixed number of decimals and a sign when asked. */
export function deg(v: number | null | undefined, digits = 2, signed = false): string {
  if (v == null || !Number.isFinite(v)) return '—';
  const s = v.toFixed(digits);
  return `${signed && v >= 0 ? '+' : ''}${s}°`.replace('-', '−');
}

/** A fraction shown as per cent. */
export function pct(v: number | null | undefined, digits = 2): string {
  if (v == null || !Number.isFinite(v)) return '—';
  return (100 * v).toFixed(digits).replace(/^-/, '−');
}

export function num(v: number | null | undefined, digits: number): string {
  if (v == null || !Number.isFinite(v)) return '—';
  return v.toFixed(digits).replace(/^-/, '−');
}

/** "1 m 20 s", "35 s" — time left of a run. */
export function duration(seconds: number | null | undefined): string {
  if (seconds == null || !Number.isFinite(seconds)) return '—';
  const s = Math.max(0, Math.round(seconds));
  if (s < 60) return `${s} s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m} min ${s % 60} s`;
  return `${Math.floor(m / 60)} h ${m % 60} min`;
}

export const shortFingerprint = (f: string | null | undefined) => (f ? f.slice(0, 12) : '—');
