import type { BatchCounts as Counts } from '../types';
import { formatCount } from '../../../lib/format';

const FIGURES: { key: keyof Counts; label: string; tone?: (n: number) => string }[] = [
  { key: 'rows', label: 'rows' },
  { key: 'accepted', label: 'accepted', tone: (n) => (n > 0 ? 'text-ok' : '') },
  { key: 'rejected', label: 'rejected', tone: (n) => (n > 0 ? 'text-bad' : '') },
  { key: 'duplicates', label: 'duplicates' },
  { key: 'conflicts', label: 'conflicts', tone: (n) => (n > 0 ? 'text-warn' : '') },
  { key: 'ambiguous', label: 'ambiguous', tone: (n) => (n > 0 ? 'text-veil' : '') },
  { key: 'newStars', label: 'new stars' },
  { key: 'matchedStars', label: 'matched stars' },
];

/** The batch's counts as a row of figures. */
export function BatchCounts({ counts }: { counts: Counts }) {
  return (
    <dl className="grid grid-cols-4 divide-line overflow-hidden rounded-xl border border-line bg-card md:grid-cols-8 md:divide-x">
      {FIGURES.map((f) => {
        const n = counts[f.key] ?? 0;
        return (
          <div key={f.key} className="px-4 py-3">
            <dt className="text-xs uppercase tracking-wide text-muted">{f.label}</dt>
            <dd data-testid={`count-${f.key}`} className={`num mt-0.5 text-2xl font-semibold ${f.tone?.(n) || 'text-night'}`}>
              {formatCount(n)}
            </dd>
          </div>
        );
      })}
    </dl>
  );
}
