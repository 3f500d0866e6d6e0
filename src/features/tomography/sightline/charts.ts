/**
 * The sightline charts, built with Observable Plot. Stokes values are drawn in per cent, angles in
 * degrees (IAU, the run's frame), distances in parsec on a logarithmic axis.
 */
import * as Plot from '@observablehq/plot';
import { PLOT_FONT_FAMILY, squarePlot } from '../../../lib/plot';
import type { Sightline } from '../types';
import { layerBands, layerNumber, segmentSteps, starPoints, stepLine, type DistanceBand, type Step, type StarPoint } from './steps';

export const CHART_COLOURS = {
  star: '#1f2657',
  errorBar: '#a3a8c8',
  step: '#c4841c',
  band: '#6c7bd9',
  foregroundBand: '#b9b3c9',
  zero: '#8c8fa3',
};

const FONT = { fontFamily: PLOT_FONT_FAMILY, fontSize: '11px', overflow: 'visible' } as const;

export interface SightlineChartData {
  stars: StarPoint[];
  steps: Step[];
  bands: DistanceBand[];
  domain: [number, number];
  frame: 'G' | 'C';
}

export function chartData(s: Sightline, domain: [number, number], frame: 'G' | 'C'): SightlineChartData {
  return { stars: starPoints(s.stars ?? [], s.starsNotPlaced), steps: segmentSteps(s, domain), bands: layerBands(s, domain), domain, frame };
}

/** Round distances for the colour legend [pc]. */
const DISTANCE_TICKS = [20, 50, 100, 200, 500, 1000, 2000, 5000, 10000];

const frameWord = (f: 'G' | 'C') => (f === 'G' ? 'Galactic' : 'equatorial');

/** The 16–84 % distance range of each layer as a shaded band, labelled with the layer number at the top. */
function bandMarks(bands: DistanceBand[]) {
  return [
    Plot.rect(bands, {
      x1: 'loPc',
      x2: 'hiPc',
      fill: (d: DistanceBand) => (d.kind === 'foreground' ? CHART_COLOURS.foregroundBand : CHART_COLOURS.band),
      fillOpacity: 0.2,
      className: 'layer-bands',
    }),
    Plot.ruleX(bands, { x: 'medianPc', stroke: CHART_COLOURS.band, strokeOpacity: 0.7, strokeDasharray: '3 2' }),
    Plot.text(bands, { x: 'medianPc', frameAnchor: 'top', dy: -8, text: (d: DistanceBand) => `layer ${layerNumber(d.layer)}`, fill: CHART_COLOURS.band, fontWeight: 600 }),
  ];
}

const distanceX = (domain: [number, number]) => ({ type: 'log' as const, domain, label: 'Distance [pc]', labelArrow: 'none' as const, labelAnchor: 'center' as const, grid: true, tickFormat: '~s' });

/** Stokes q or u of every star against distance, with error bars, the fitted steps and the layer bands. */
export function stokesChart(d: SightlineChartData, key: 'q' | 'u', width: number): SVGSVGElement | HTMLElement {
  const errKey = key === 'q' ? 'qErr' : 'uErr';
  return Plot.plot({
    width,
    height: 230,
    marginTop: 26,
    marginLeft: 56,
    marginBottom: 38,
    style: FONT,
    ariaLabel: `Stokes ${key} against distance`,
    x: distanceX(d.domain),
    y: { label: `Stokes ${key} [%] (${frameWord(d.frame)})`, labelArrow: 'none', grid: true, nice: true },
    marks: [
      ...bandMarks(d.bands),
      Plot.ruleY([0], { stroke: CHART_COLOURS.zero, strokeOpacity: 0.6 }),
      Plot.ruleY(d.stars, { y: key, x1: 'distanceLoPc', x2: 'distanceHiPc', stroke: CHART_COLOURS.errorBar, strokeWidth: 1 }),
      Plot.ruleX(d.stars, { x: 'distancePc', y1: (s: StarPoint) => s[key] - s[errKey], y2: (s: StarPoint) => s[key] + s[errKey], stroke: CHART_COLOURS.errorBar, strokeWidth: 1 }),
      Plot.line(stepLine(d.steps, key), { x: 'distancePc', y: 'value', stroke: CHART_COLOURS.step, strokeWidth: 2.4, className: 'fitted-steps' }),
      Plot.dot(d.stars, {
        x: 'distancePc',
        y: key,
        r: 2.8,
        fill: CHART_COLOURS.star,
        fillOpacity: (st: StarPoint) => (st.placed ? 1 : 0.3),
        channels: { star: 'id', [`σ${key} [%]`]: errKey },
        tip: { format: { x: (v: number) => `${v.toFixed(0)} pc`, y: (v: number) => `${v.toFixed(3)} %` } },
      }),
    ],
  });
}

/** p (upper) or θ (lower) of every star against distance, with the p and θ of each segment's mean as horizontal runs. */
export function fractionAngleChart(d: SightlineChartData, key: 'p' | 'theta', width: number): SVGSVGElement | HTMLElement {
  const isP = key === 'p';
  const y = isP ? 'p' : 'thetaDeg';
  const err = isP ? 'pErr' : 'thetaErrDeg';
  return Plot.plot({
    width,
    height: 210,
    marginTop: 26,
    marginLeft: 56,
    marginBottom: 38,
    style: FONT,
    ariaLabel: isP ? 'Polarization fraction against distance' : 'Polarization angle against distance',
    x: distanceX(d.domain),
    y: isP
      ? { label: 'p [%]', labelArrow: 'none', grid: true, nice: true, zero: true }
      : { label: `θ [deg] (IAU, ${frameWord(d.frame)} north)`, labelArrow: 'none', grid: true, domain: [0, 180], ticks: [0, 45, 90, 135, 180] },
    marks: [
      ...bandMarks(d.bands),
      Plot.ruleX(d.stars, { x: 'distancePc', y1: (s: StarPoint) => s[y] - s[err], y2: (s: StarPoint) => s[y] + s[err], stroke: CHART_COLOURS.errorBar, strokeWidth: 1, clip: true }),
      Plot.ruleY(isP ? d.steps : d.steps.filter((st) => st.layer !== null), { y: isP ? 'p' : 'thetaDeg', x1: 'fromPc', x2: 'toPc', stroke: CHART_COLOURS.step, strokeWidth: 2.4, className: 'fitted-segments' }),
      Plot.dot(d.stars, { x: 'distancePc', y, r: 2.8, fill: CHART_COLOURS.star, fillOpacity: (st: StarPoint) => (st.placed ? 1 : 0.3), channels: { star: 'id' }, tip: true }),
    ],
  });
}

/** The q–u plane: stars coloured by distance, each segment's mean marked and joined in distance order. */
export function quPlaneChart(d: SightlineChartData, width: number): SVGSVGElement | HTMLElement {
  const extent = Math.max(0.1, ...d.stars.flatMap((s) => [Math.abs(s.q) + s.qErr, Math.abs(s.u) + s.uErr]), ...d.steps.flatMap((s) => [Math.abs(s.q), Math.abs(s.u)])) * 1.08;
  // each layer's own contribution: from the mean in front of it (the origin for a foreground layer) to the mean behind it
  const pairs = d.steps.flatMap((s, i) => (s.layer === null ? [] : [{ x1: i === 0 ? 0 : d.steps[i - 1].q, y1: i === 0 ? 0 : d.steps[i - 1].u, x2: s.q, y2: s.u }]));
  return squarePlot(width, {
    marginLeft: 56,
    marginBottom: 40,
    marginTop: 14,
    style: FONT,
    ariaLabel: 'q–u plane',
    x: { label: `Stokes q [%] (${frameWord(d.frame)})`, labelArrow: 'none', labelAnchor: 'center', domain: [-extent, extent], grid: true },
    y: { label: 'Stokes u [%]', labelArrow: 'none', domain: [-extent, extent], grid: true },
    color: { type: 'log', domain: d.domain, range: ['#f2b544', '#d0587e', '#3d3f9c', '#13183a'], interpolate: 'hcl', label: 'Distance [pc]', legend: true, ticks: DISTANCE_TICKS.filter((t) => t >= d.domain[0] && t <= d.domain[1]), tickFormat: '~s' },
    marks: [
      Plot.ruleX([0], { stroke: CHART_COLOURS.zero, strokeOpacity: 0.7 }),
      Plot.ruleY([0], { stroke: CHART_COLOURS.zero, strokeOpacity: 0.7 }),
      Plot.ruleX(d.stars, { x: 'q', y1: (s: StarPoint) => s.u - s.uErr, y2: (s: StarPoint) => s.u + s.uErr, stroke: 'distancePc', strokeOpacity: 0.35 }),
      Plot.ruleY(d.stars, { y: 'u', x1: (s: StarPoint) => s.q - s.qErr, x2: (s: StarPoint) => s.q + s.qErr, stroke: 'distancePc', strokeOpacity: 0.35 }),
      Plot.dot(d.stars, { x: 'q', y: 'u', r: 3.2, fill: 'distancePc', stroke: 'white', strokeWidth: 0.5, channels: { star: 'id' }, tip: true }),
      Plot.arrow(pairs, { x1: 'x1', y1: 'y1', x2: 'x2', y2: 'y2', stroke: CHART_COLOURS.step, strokeWidth: 2, headLength: 9, inset: 7, className: 'layer-contributions' }),
      Plot.dot(d.steps, { x: 'q', y: 'u', r: 6, symbol: 'diamond2', fill: 'white', stroke: CHART_COLOURS.step, strokeWidth: 2.2, className: 'segment-means' }),
      Plot.text(d.steps, {
        x: 'q',
        y: 'u',
        text: (s: Step) => (s.layer === null ? 'fg' : `${layerNumber(s.layer)}`),
        dx: 12,
        dy: -10,
        fill: CHART_COLOURS.step,
        fontWeight: 700,
        fontSize: 12,
        stroke: 'white',
        strokeWidth: 3,
      }),
    ],
  });
}
