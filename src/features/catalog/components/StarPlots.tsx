import * as Plot from '@observablehq/plot';
import { useCallback, useMemo } from 'react';
import { PlotFigure } from '../../../components/ui/PlotFigure';
import { PLOT_FONT_FAMILY, squarePlot } from '../../../lib/plot';
import type { CombinedValue, StarMeasurement } from '../types';

/** Band colours: Starveil's own, ordered blue to red like the bands. */
export const BAND_COLOURS: Record<string, string> = { U: '#6c7bd9', B: '#3b5bc4', V: '#2f7d5b', R: '#b8503f', I: '#7a3fa0' };
const BANDS = Object.keys(BAND_COLOURS);
const NIGHT = '#13183a';
const AMBER = '#f2b544';

const STYLE = { fontFamily: PLOT_FONT_FAMILY, fontSize: '12px', background: 'transparent', color: '#1b1f33' };

function bandScale(bands: string[]) {
  const domain = BANDS.filter((b) => bands.includes(b)).concat(bands.filter((b) => !BANDS.includes(b)));
  return { domain, range: domain.map((b) => BAND_COLOURS[b] ?? '#6a6d80'), legend: true, label: 'band' };
}

/** Only approved values are filled; the others are drawn hollow. */
const fillOf = (m: StarMeasurement) => (m.state === 'approved' ? m.band : 'none');

const combinedLabel = (c: CombinedValue) => `combined ${c.band} · ${c.instrument}`;

/**
 * Equal spans on both axes (so p reads as distance from the origin) around the points and their
 * error bars; the origin is included when it is no further away than the points are spread.
 */
export function quDomains(ms: StarMeasurement[], cs: CombinedValue[]): [[number, number], [number, number]] {
  const qs = [...ms.flatMap((m) => [m.q - m.q_err, m.q + m.q_err]), ...cs.flatMap((c) => [c.q - c.qErr, c.q + c.qErr])];
  const us = [...ms.flatMap((m) => [m.u - m.u_err, m.u + m.u_err]), ...cs.flatMap((c) => [c.u - c.uErr, c.u + c.uErr])];
  if (qs.length === 0) return [[-0.01, 0.01], [-0.01, 0.01]];
  let [q0, q1, u0, u1] = [Math.min(...qs), Math.max(...qs), Math.min(...us), Math.max(...us)];
  const spread = Math.max(q1 - q0, u1 - u0, 1e-4);
  const cq = (q0 + q1) / 2, cu = (u0 + u1) / 2;
  if (Math.hypot(cq, cu) <= 1.5 * spread) [q0, q1, u0, u1] = [Math.min(q0, 0), Math.max(q1, 0), Math.min(u0, 0), Math.max(u1, 0)];
  const half = (Math.max(q1 - q0, u1 - u0, 1e-4) / 2) * 1.2;
  const mq = (q0 + q1) / 2, mu = (u0 + u1) / 2;
  return [[mq - half, mq + half], [mu - half, mu + half]];
}

/**
 * The q–u plane: a point per measurement with 1σ error bars in q and u, and the combined
 * (inverse-variance weighted) value per band and instrument as a star. Equal scales, so the
 * distance from the origin is p and the angle from the +q axis is 2θ.
 */
export function QuPlanePlot({ measurements, combined }: { measurements: StarMeasurement[]; combined: CombinedValue[] }) {
  const make = useCallback(
    (width: number) => {
      const [qDomain, uDomain] = quDomains(measurements, combined);
      const bands = [...new Set([...measurements.map((m) => m.band), ...combined.map((c) => c.band)])];
      const colour = bandScale(bands);
      return squarePlot(width, {
        marginLeft: 78,
        marginBottom: 44,
        style: STYLE,
        x: { domain: qDomain, label: 'Stokes q [fraction]', labelAnchor: 'center', labelArrow: 'none', grid: true, ticks: 5 },
        y: { domain: uDomain, label: 'Stokes u [fraction]', labelAnchor: 'center', labelArrow: 'none', grid: true, ticks: 5 },
        color: colour,
        marks: [
          Plot.ruleX(qDomain[0] <= 0 && qDomain[1] >= 0 ? [0] : [], { stroke: '#b9b6ab' }),
          Plot.ruleY(uDomain[0] <= 0 && uDomain[1] >= 0 ? [0] : [], { stroke: '#b9b6ab' }),
          Plot.link(measurements, { x1: (m: StarMeasurement) => m.q - m.q_err, x2: (m: StarMeasurement) => m.q + m.q_err, y1: 'u', y2: 'u', stroke: 'band', strokeOpacity: 0.7 }),
          Plot.link(measurements, { x1: 'q', x2: 'q', y1: (m: StarMeasurement) => m.u - m.u_err, y2: (m: StarMeasurement) => m.u + m.u_err, stroke: 'band', strokeOpacity: 0.7 }),
          Plot.dot(measurements, {
            x: 'q',
            y: 'u',
            r: 4,
            stroke: 'band',
            fill: fillOf,
            strokeWidth: 1.5,
            channels: { epoch: (m: StarMeasurement) => (m.mjd == null ? 'no epoch' : `MJD ${m.mjd}`), state: 'state', instrument: 'instrument' },
            tip: true,
          }),
          Plot.link(combined, { x1: (c: CombinedValue) => c.q - c.qErr, x2: (c: CombinedValue) => c.q + c.qErr, y1: 'u', y2: 'u', stroke: NIGHT, strokeWidth: 2 }),
          Plot.link(combined, { x1: 'q', x2: 'q', y1: (c: CombinedValue) => c.u - c.uErr, y2: (c: CombinedValue) => c.u + c.uErr, stroke: NIGHT, strokeWidth: 2 }),
          Plot.dot(combined, { x: 'q', y: 'u', symbol: 'star', r: 9, fill: AMBER, stroke: NIGHT, strokeWidth: 1.2 }),
          // labels above and below in turn, and on the inner side of the star, so they stay readable and inside the frame
          ...combined.map((c, i) => {
            const right = c.q > (qDomain[0] + qDomain[1]) / 2;
            return Plot.text([c], { x: 'q', y: 'u', text: combinedLabel, dx: right ? -12 : 12, dy: i % 2 ? 14 : -12, textAnchor: right ? 'end' : 'start', fill: NIGHT, fontWeight: 600, stroke: 'white', strokeWidth: 3, paintOrder: 'stroke' });
          }),
        ],
      });
    },
    [measurements, combined],
  );
  return <PlotFigure make={make} label="Measurements in the q–u plane" testId="plot-qu" />;
}

/** One quantity with its 1σ error bars against the epoch, the combined value as a dashed line per band. */
function epochPlot(width: number, ms: StarMeasurement[], combined: CombinedValue[], y: { value: (m: StarMeasurement) => number; err: (m: StarMeasurement) => number; combined: (c: CombinedValue) => number; label: string; domain?: [number, number] }) {
  const bands = [...new Set(ms.map((m) => m.band))];
  const mjds = ms.map((m) => m.mjd as number);
  const span = Math.max(1, Math.max(...mjds) - Math.min(...mjds));
  return Plot.plot({
    width,
    height: 210,
    marginLeft: 78,
    marginBottom: 40,
    style: STYLE,
    x: { label: 'epoch, MJD [d]', labelAnchor: 'center', labelArrow: 'none', tickFormat: 'd', domain: [Math.min(...mjds) - span * 0.08, Math.max(...mjds) + span * 0.08], ticks: 6 },
    y: { label: y.label, labelAnchor: 'center', labelArrow: 'none', grid: true, nice: true, domain: y.domain },
    color: bandScale(bands),
    marks: [
      Plot.ruleY(
        combined.filter((c) => bands.includes(c.band)),
        { y: y.combined, stroke: 'band', strokeDasharray: '5,4', strokeOpacity: 0.9 },
      ),
      Plot.link(ms, { x1: 'mjd', x2: 'mjd', y1: (m: StarMeasurement) => y.value(m) - y.err(m), y2: (m: StarMeasurement) => y.value(m) + y.err(m), stroke: 'band', strokeOpacity: 0.75 }),
      Plot.dot(ms, { x: 'mjd', y: y.value, r: 4, stroke: 'band', fill: fillOf, strokeWidth: 1.5, channels: { state: 'state', instrument: 'instrument' }, tip: true }),
    ],
  });
}

/** p and θ against the epoch, one panel each. */
export function EpochPlots({ measurements, combined }: { measurements: StarMeasurement[]; combined: CombinedValue[] }) {
  const withEpoch = useMemo(() => measurements.filter((m) => m.mjd != null), [measurements]);
  const makeP = useCallback(
    (width: number) => epochPlot(width, withEpoch, combined, { value: (m) => m.p, err: (m) => m.p_err, combined: (c) => c.p, label: 'p [fraction]' }),
    [withEpoch, combined],
  );
  const makeTheta = useCallback(
    (width: number) => epochPlot(width, withEpoch, combined, { value: (m) => m.theta_deg, err: (m) => m.theta_err_deg, combined: (c) => c.thetaDeg, label: 'θ [deg, east of north]' }),
    [withEpoch, combined],
  );
  if (withEpoch.length === 0) return <p className="text-sm text-muted">No measurement of this star has an epoch (MJD), so there is nothing to plot against time.</p>;
  return (
    <div className="space-y-2" data-testid="plot-epoch">
      <PlotFigure make={makeP} label="Polarization fraction against epoch" testId="plot-p-epoch" />
      <PlotFigure make={makeTheta} label="Polarization angle against epoch" testId="plot-theta-epoch" />
      {withEpoch.length < measurements.length && <p className="text-xs text-muted">{measurements.length - withEpoch.length} measurement(s) without an epoch are left out.</p>}
    </div>
  );
}
