import type { Sightline } from '../types';

/** How many of the Monte Carlo distance draws gave each number of layers; the reported count is highlighted. */
export function LayerSupport({ sightline }: { sightline: Sightline }) {
  const hist = sightline.layerCountHistogram ?? [];
  const total = hist.reduce((a, b) => a + b, 0);
  const share = Math.round(100 * sightline.layerCountSupport);
  return (
    <div className="space-y-2">
      <p className="text-sm text-ink" data-testid="layer-support">
        <span className="num text-2xl font-semibold text-night">{share} %</span> of {total || sightline.draws} distance draws give {sightline.nLayers} layer{sightline.nLayers === 1 ? '' : 's'}
      </p>
      {total > 0 && (
        <ul className="space-y-1" aria-label="Number of layers per distance draw">
          {hist.map((n, k) =>
            n === 0 && k !== sightline.nLayers ? null : (
              <li key={k} className="num flex items-center gap-2 text-xs">
                <span className="w-16 text-muted">
                  {k} layer{k === 1 ? '' : 's'}
                </span>
                <span className="h-2.5 flex-1 overflow-hidden rounded-full bg-veil-soft">
                  <span className={`block h-full rounded-full ${k === sightline.nLayers ? 'bg-night' : 'bg-veil'}`} style={{ width: `${(100 * n) / total}%` }} />
                </span>
                <span className="w-20 text-right text-muted">
                  {n} draw{n === 1 ? '' : 's'}
                </span>
              </li>
            ),
          )}
        </ul>
      )}
    </div>
  );
}
