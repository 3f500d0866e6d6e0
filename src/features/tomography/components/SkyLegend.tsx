import { JUMP_DOMAIN_DEG, JUMP_GRADIENT, LAYER_CLASSES, LAYER_COLOURS, NO_JUMP_COLOUR, layerClass } from '../sky/palette';
import type { SkyCell } from '../types';
import type { ColourBy } from './SkyMap';

/** What the colours of the map mean, with how many cells each holds. */
export function SkyLegend({ cells, colourBy, jumpThresholdDeg }: { cells: SkyCell[]; colourBy: ColourBy; jumpThresholdDeg: number }) {
  if (colourBy === 'layers') {
    const counts = LAYER_CLASSES.map(() => 0);
    for (const c of cells) counts[layerClass(c.n_layers)]++;
    return (
      <div data-testid="sky-legend" aria-label="Legend: number of layers" className="flex flex-wrap items-center gap-x-5 gap-y-2 text-sm">
        <span className="font-medium text-night">Layers along the sightline</span>
        {LAYER_CLASSES.map((k, i) =>
          counts[i] === 0 && k.layers === 0 ? null : (
            <span key={k.layers} className="inline-flex items-center gap-1.5" data-testid={`legend-layers-${k.layers}`} data-count={counts[i]}>
              <span className="inline-block h-3.5 w-3.5 rounded-sm ring-1 ring-night/30" style={{ background: LAYER_COLOURS[i] }} />
              {k.label}
              <span className="num text-muted">({counts[i]})</span>
            </span>
          ),
        )}
      </div>
    );
  }
  const single = cells.filter((c) => c.max_jump_deg == null).length;
  const [lo, hi] = JUMP_DOMAIN_DEG;
  const ticks = [0, 30, 60, 90];
  const at = (v: number) => `${(100 * (v - lo)) / (hi - lo)}%`;
  return (
    <div data-testid="sky-legend" aria-label="Legend: largest angle jump" className="flex flex-wrap items-end gap-x-6 gap-y-2 text-sm">
      <span className="font-medium text-night">Largest |Δθ| between successive layers [deg]</span>
      <div className="w-72">
        <div className="relative h-3.5 rounded-sm ring-1 ring-night/30" style={{ background: JUMP_GRADIENT }}>
          <span className="absolute -top-1 -bottom-1 w-0.5 bg-night" style={{ left: at(jumpThresholdDeg) }} title={`the run's threshold, ${jumpThresholdDeg}°`} />
        </div>
        <div className="num relative mt-0.5 h-4 text-xs text-muted">
          {ticks.map((t) => (
            <span key={t} className="absolute -translate-x-1/2" style={{ left: at(t) }}>
              {t}°
            </span>
          ))}
        </div>
      </div>
      <span className="text-xs text-muted">bar: the run’s threshold for “complex”, {jumpThresholdDeg}°</span>
      <span className="inline-flex items-center gap-1.5" data-testid="legend-no-jump" data-count={single}>
        <span className="inline-block h-3.5 w-3.5 rounded-sm ring-1 ring-night/30" style={{ background: NO_JUMP_COLOUR }} />
        one layer, no jump <span className="num text-muted">({single})</span>
      </span>
    </div>
  );
}
