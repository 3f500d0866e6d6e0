import type { MaskSummary } from '../api/maskSummary';
import { maskQuery, type MaskCriteria, type MaskFormat } from '../query';

const FILES: { format: MaskFormat; label: string; about: (s: MaskSummary) => string }[] = [
  { format: 'fits', label: 'HEALPix FITS', about: (s) => `NESTED map, NSIDE ${s.nside}, ${s.frame === 'G' ? 'Galactic' : 'equatorial'}: MASK, MAX_JUMP (deg), N_LAYERS` },
  { format: 'moc-json', label: 'MOC JSON', about: (s) => `IVOA MOC 2.0, ICRS, order ${s.moc.order}` },
  { format: 'moc-ascii', label: 'MOC ASCII', about: (s) => `IVOA MOC 2.0, ICRS, order ${s.moc.order}` },
  { format: 'csv', label: 'CSV', about: () => 'flagged pixels with their values, units in the # header' },
];

/** Download links built from the same criteria as the preview (the browser sends the session cookie). */
export function Downloads({ criteria, summary }: { criteria: MaskCriteria; summary: MaskSummary }) {
  return (
    <ul className="grid gap-2 sm:grid-cols-2" aria-label="Downloads">
      {FILES.map((f) => (
        <li key={f.format}>
          <a className="block rounded-lg border border-line px-3 py-2 hover:border-veil hover:bg-veil-soft" href={`/api/v1/masks?${maskQuery(criteria, f.format)}`} download data-format={f.format}>
            <span className="text-sm font-semibold text-night">{f.label}</span>
            <span className="block text-xs text-muted">{f.about(summary)}</span>
          </a>
        </li>
      ))}
    </ul>
  );
}
