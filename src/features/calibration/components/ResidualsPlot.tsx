import * as Plot from '@observablehq/plot';
import { useCallback } from 'react';
import { PlotFigure } from '../../../components/ui/PlotFigure';
import type { CalibrationGroup } from '../types';

const STYLE = { fontFamily: 'Inter, ui-sans-serif, system-ui, sans-serif', fontSize: '12px', background: 'transparent', color: '#1b1f33' };
const NIGHT = '#13183a';
const AMBER = '#c98a12';

/**
 * Residuals of one calibration: for polarized standards the angle residual (θ_obs − θ_ref − zero-point)
 * with its 1σ error; for unpolarized standards q and u minus the instrumental (q, u), in per cent.
 */
export function ResidualsPlot({ group }: { group: CalibrationGroup }) {
  const make = useCallback(
    (width: number) => {
      const pol = group.standards.filter((s) => s.kind === 'polarized' && s.residualDeg !== null);
      const unpol = group.standards.filter((s) => s.kind === 'unpolarized' && s.qResidual !== null);
      const label = (s: (typeof group.standards)[number]) => `line ${s.line} · ${s.standardName}`;
      const figs = document.createElement('div');
      figs.className = 'flex flex-wrap gap-6';
      const w = Math.max(260, Math.min(420, (width - 24) / 2));
      if (pol.length) {
        figs.append(
          Plot.plot({
            width: w,
            height: 60 + 34 * pol.length,
            marginLeft: 150,
            style: STYLE,
            x: { label: 'angle residual [deg]', labelAnchor: 'center', labelArrow: 'none', grid: true },
            y: { label: null, domain: pol.map(label) },
            marks: [
              Plot.ruleX([0], { stroke: '#9aa0b8' }),
              Plot.link(pol, { x1: (s) => s.residualDeg! - s.thetaObsErrDeg, x2: (s) => s.residualDeg! + s.thetaObsErrDeg, y1: label, y2: label, stroke: NIGHT }),
              Plot.dot(pol, { x: 'residualDeg', y: label, fill: NIGHT, r: 4, tip: true, title: (s) => `${s.standardName}: θ_obs − θ_ref = ${s.offsetDeg!.toFixed(2)}°, residual ${s.residualDeg!.toFixed(2)}° ± ${s.thetaObsErrDeg.toFixed(2)}°` }),
            ],
          }) as unknown as Node,
        );
      }
      if (unpol.length) {
        const pts = unpol.flatMap((s) => [
          { who: label(s), c: 'q', v: s.qResidual! * 100, e: s.qErr * 100 },
          { who: label(s), c: 'u', v: s.uResidual! * 100, e: s.uErr * 100 },
        ]);
        figs.append(
          Plot.plot({
            width: w,
            height: 60 + 34 * unpol.length,
            marginLeft: 150,
            style: STYLE,
            color: { domain: ['q', 'u'], range: [NIGHT, AMBER], legend: true },
            x: { label: 'residual from instrumental (q, u) [%]', labelAnchor: 'center', labelArrow: 'none', grid: true },
            y: { label: null, domain: unpol.map(label) },
            marks: [
              Plot.ruleX([0], { stroke: '#9aa0b8' }),
              ...(['q', 'u'] as const).flatMap((c) => {
                const part = pts.filter((d) => d.c === c);
                const dy = c === 'q' ? -4 : 4;
                return [
                  Plot.link(part, { x1: (d) => d.v - d.e, x2: (d) => d.v + d.e, y1: 'who', y2: 'who', stroke: 'c', dy }),
                  Plot.dot(part, { x: 'v', y: 'who', fill: 'c', r: 4, dy, tip: true }),
                ];
              }),
            ],
          }) as unknown as Node,
        );
      }
      return figs;
    },
    [group],
  );
  return <PlotFigure make={make} label={`Residuals of the standard stars, ${group.instrument} ${group.band} ${group.night ?? ''}`} testId="calibration-residuals" />;
}
