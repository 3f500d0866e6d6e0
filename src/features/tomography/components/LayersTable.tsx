import type { ComponentProps } from 'react';
import { cols, DataTable } from '../../../components/ui/Table';
import { deg, num, pct } from '../sky/format';
import { layerNumber } from '../sightline/steps';
import type { TomographyJump, TomographyLayer } from '../types';

const th = 'py-2 pr-4 text-right font-medium';

/** How a layer's distance reads; runs made before distanceBound existed: from its kind. */
export function distanceBoundOf(l: TomographyLayer): 'range' | 'upper' | 'interval' {
  return l.distanceBound ?? (l.kind === 'foreground' ? 'upper' : 'range');
}

/** The distance column: a median, an upper bound "< X", or an interval "X – Y". */
export function distanceText(l: TomographyLayer): string {
  const b = distanceBoundOf(l);
  if (b === 'upper') return `< ${num(l.distanceHiPc, 0)}`;
  if (b === 'interval') return `${num(l.distanceLoPc, 0)} – ${num(l.distanceHiPc, 0)}`;
  return num(l.distancePc, 0);
}

/** The range column: 16–84 % range, or what the bound or interval is, in words. */
export function rangeText(l: TomographyLayer): string {
  const b = distanceBoundOf(l);
  if (b === 'upper') return `nearer than ${num(l.distanceHiPc, 0)}`;
  if (b === 'interval') return 'somewhere in between';
  return `${num(l.distanceLoPc, 0)} – ${num(l.distanceHiPc, 0)}`;
}
const td = 'py-1.5 pr-4 text-right';

/** The sightline's tables: numbers right-aligned in tabular figures. */
const SightlineTable = (props: Omit<ComponentProps<typeof DataTable>, 'className' | 'bodyClassName'>) => <DataTable className="w-full text-sm" bodyClassName="num" {...props} />;

/** One row per layer: distance with its range, own Stokes contribution, p (debiased), θ and S/N. */
export function LayersTable({ layers }: { layers: TomographyLayer[] }) {
  return (
    <SightlineTable
      label="Layers"
      columns={[
        { label: 'Layer', className: 'py-2 pr-4 text-left font-medium' },
        ...cols(th, 'Distance [pc]', '16–84 % [pc]', 'Stars behind', 'Δq [%]', 'Δu [%]', 'p debiased [%]', 'θ [deg]', 'σθ [deg]', 'Scatter [%]'),
        { label: 'S/N', className: 'py-2 text-right font-medium' },
      ]}
      after={
        <>
          {layers.some((l) => l.angleNonGaussian) && <p className="mt-2 text-xs text-warn">* p/σp below 5: the angle’s distribution is not Gaussian and σθ understates it.</p>}
          {layers.some((l) => l.kind === 'foreground') && (
            <p className="mt-2 text-xs text-muted">A foreground layer already polarizes the nearest stars with usable distances: it lies nearer than them, so its distance is only an upper limit.</p>
          )}
          {layers.some((l) => l.distanceNote) && (
            <ul className="mt-2 space-y-1 text-xs text-muted" aria-label="Distance notes" data-testid="distance-notes">
              {layers.filter((l) => l.distanceNote).map((l) => (
                <li key={l.index}>
                  <span className="font-medium text-night">{layerNumber(l.index)}</span>: {l.distanceNote}
                </li>
              ))}
            </ul>
          )}
        </>
      }
    >
      {layers.map((l) => (
        <tr key={l.index} className="border-b border-line/60" data-testid="layer-row">
          <td className="py-1.5 pr-4 text-left">
            <span className="font-medium text-night">{layerNumber(l.index)}</span>
            {l.kind === 'foreground' && <span className="ml-2 rounded bg-line/70 px-1.5 py-0.5 text-xs text-muted">foreground</span>}
          </td>
          <td className={td} data-testid="layer-distance">{distanceText(l)}</td>
          <td className={td} data-testid="layer-range" title={l.distanceNote ?? undefined}>{rangeText(l)}</td>
          <td className={td}>{l.nStars}</td>
          <td className={td}>
            {pct(l.deltaQ, 3)} <span className="text-muted">± {pct(l.deltaQErr, 3)}</span>
          </td>
          <td className={td}>
            {pct(l.deltaU, 3)} <span className="text-muted">± {pct(l.deltaUErr, 3)}</span>
          </td>
          <td className={td}>
            {pct(l.pDebiased, 3)} <span className="text-muted">± {pct(l.pErr, 3)}</span>
          </td>
          <td className={td}>{num(l.thetaDeg, 1)}</td>
          <td className={td}>
            {num(l.thetaErrDeg, 1)}
            {l.angleNonGaussian && (
              <span className="ml-1 text-warn" title="p/σp below 5: the angle distribution is not Gaussian">
                *
              </span>
            )}
          </td>
          <td className={td}>{pct(l.scatter, 3)}</td>
          <td className="py-1.5 text-right">{num(l.snr, 1)}</td>
        </tr>
      ))}
    </SightlineTable>
  );
}

/** One row per pair of successive layers: the change of angle and how significant it is. */
export function JumpsTable({ jumps, thresholdDeg }: { jumps: TomographyJump[]; thresholdDeg: number }) {
  if (jumps.length === 0) return <p className="text-sm text-muted">One layer only: no angle jump along this sightline.</p>;
  return (
    <SightlineTable
      label="Angle jumps"
      columns={[
        { label: 'Between layers', className: 'py-2 pr-4 text-left font-medium' },
        ...cols(th, 'Δθ [deg]', 'σ [deg]', 'Significance [σ]'),
        { label: `Above the ${thresholdDeg}° threshold`, className: 'py-2 text-left font-medium' },
      ]}
      after={<p className="mt-2 text-xs text-muted">Δθ = θ of the farther layer − θ of the nearer, wrapped to (−90°, 90°]; σ = √(σθ₁² + σθ₂²); significance = |Δθ| / σ.</p>}
    >
      {jumps.map((j) => (
        <tr key={`${j.fromLayer}-${j.toLayer}`} className="border-b border-line/60" data-testid="jump-row">
          <td className="py-1.5 pr-4 text-left">
            {layerNumber(j.fromLayer)} → {layerNumber(j.toLayer)}
          </td>
          <td className={td} data-testid="jump-delta">
            {deg(j.deltaThetaDeg, 1, true).replace('°', '')}
          </td>
          <td className={td}>{num(j.sigmaDeg, 1)}</td>
          <td className={td}>{num(j.significance, 1)}</td>
          <td className="py-1.5 text-left">{Math.abs(j.deltaThetaDeg) > thresholdDeg ? 'yes' : 'no'}</td>
        </tr>
      ))}
    </SightlineTable>
  );
}
