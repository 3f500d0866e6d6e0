import { useCallback, useMemo, type ComponentProps, type ReactNode } from 'react';
import { Card } from '../../../components/ui/primitives';
import { chartData, CHART_COLOURS, fractionAngleChart, quPlaneChart, stokesChart } from '../sightline/charts';
import { distanceDomain } from '../sightline/steps';
import type { CoordSys, Sightline } from '../types';
import { PlotFigure } from '../../../components/ui/PlotFigure';

function Key({ showMeans }: { showMeans?: boolean }) {
  return (
    <ul className="mt-2 flex flex-wrap gap-x-5 gap-y-1 text-xs text-muted">
      <li className="inline-flex items-center gap-1.5">
        <span className="inline-block h-2 w-2 rounded-full" style={{ background: CHART_COLOURS.star }} /> star (bars: 1σ and its 16–84 % distance)
      </li>
      <li className="inline-flex items-center gap-1.5">
        <span className="inline-block h-0.5 w-5" style={{ background: CHART_COLOURS.step }} /> fit: mean of each segment, the sum of every layer in front
      </li>
      <li className="inline-flex items-center gap-1.5">
        <span className="inline-block h-3 w-4 opacity-40" style={{ background: CHART_COLOURS.band }} /> 16–84 % range of a layer’s distance (dashed: median)
      </li>
      {showMeans && (
        <li className="inline-flex items-center gap-1.5">
          <span className="inline-block h-3 w-4 opacity-60" style={{ background: CHART_COLOURS.foregroundBand }} /> foreground layer: nearer than the first star
        </li>
      )}
    </ul>
  );
}

type Chart = ComponentProps<typeof PlotFigure>;

/** A card with two charts stacked on the same distance axis, and what explains them below. */
function ChartPairCard({ title, upper, lower, children }: { title: string; upper: Chart; lower: Chart; children: ReactNode }) {
  return (
    <Card title={title}>
      <div className="space-y-2">
        <PlotFigure {...upper} />
        <PlotFigure {...lower} />
      </div>
      {children}
    </Card>
  );
}

/** Stokes q and u, p and θ against distance, and the q–u plane of one sightline. */
export function SightlineCharts({ sightline, frame }: { sightline: Sightline; frame: CoordSys }) {
  const data = useMemo(() => chartData(sightline, distanceDomain(sightline), frame), [sightline, frame]);
  const q = useCallback((w: number) => stokesChart(data, 'q', w), [data]);
  const u = useCallback((w: number) => stokesChart(data, 'u', w), [data]);
  const p = useCallback((w: number) => fractionAngleChart(data, 'p', w), [data]);
  const theta = useCallback((w: number) => fractionAngleChart(data, 'theta', w), [data]);
  const qu = useCallback((w: number) => quPlaneChart(data, w), [data]);
  const foreground = sightline.layers.some((l) => l.kind === 'foreground');
  return (
    <div className="space-y-6">
      <ChartPairCard
        title="Stokes q and u against distance"
        upper={{ make: q, testId: 'chart-q', label: 'Stokes q against distance' }}
        lower={{ make: u, testId: 'chart-u', label: 'Stokes u against distance' }}
      >
        <Key showMeans={foreground} />
      </ChartPairCard>
      <div className="grid gap-6 lg:grid-cols-[3fr_2fr]">
        <ChartPairCard
          title="Polarization fraction and angle against distance"
          upper={{ make: p, testId: 'chart-p', label: 'Polarization fraction against distance' }}
          lower={{ make: theta, testId: 'chart-theta', label: 'Polarization angle against distance' }}
        >
          <p className="mt-2 text-xs text-muted">Bars: p ± σp and θ ± σθ by linear propagation (unreliable below p/σp ≈ 5). Orange: p and θ of each segment’s mean (q̄, ū); an unpolarized foreground has no angle to draw.</p>
        </ChartPairCard>
        <Card title="q–u plane">
          <PlotFigure make={qu} testId="chart-qu" label="q–u plane" />
          <p className="mt-2 text-xs text-muted">Stars coloured by distance. Diamonds: each segment’s mean, numbered by the layer that starts it (fg: unpolarized foreground); arrows: each layer’s own contribution (Δq, Δu).</p>
        </Card>
      </div>
    </div>
  );
}
