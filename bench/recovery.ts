/**
 * Recovery benchmark (not a test): how often the tomography fit finds the right layers on seeded
 * synthetic sightlines with survey-like parallaxes (server/science/tomography/surveyFields.ts:
 * 30–300 stars per cell, 1–3 clouds, 85 % of stars at 1–20 % parallax errors and 15 % at
 * ϖ/σϖ 1.5–5, the catalog's −0.017 mas zero point, intrinsic scatter inside each cloud), for the
 * current method ('survey') beside the earlier one ('classic', the baseline), and the same with
 * good parallaxes (1–5 %).
 *
 * Run: npm run bench:recovery [-- --fields 150 --draws 100 --seed 1]
 *
 * Per true number of clouds: share of fields with the right count; false extra layers on
 * one-cloud fields; for fields with the right count, the median and 90th percentile of the
 * relative distance error |d̂ − d|/d of 'break' layers, the median jump error |Δθ̂ − Δθ|, and the
 * coverage of 16–84 % ranges (share of layers reported as a range whose range contains the true
 * distance); layers reported as an upper bound or an interval are counted apart (how many contain
 * the truth). CPU per cell
 * is measured on fixed cells of 100 and 300 stars. Targets (issue 10) apply to resolvable fields:
 * ≥ 6 stars in front of and ≥ 8 behind each cloud, each step ≥ 5σ, clouds ≥ 25 % apart.
 */

import { surveyField, type SurveyField } from '../server/science/tomography/surveyFields';
import { fitSightline } from '../server/science/tomography/fit';
import { angleDifferenceDeg } from '../server/science/axial';
import { percentileSorted } from '../server/science/tomography/fit';
import type { SightlineResult } from '../server/science/tomography/types';
import { numberFlag } from './flags';

const flag = numberFlag;

const FIELDS = flag('fields', 150);
const DRAWS = flag('draws', 100);
const SEED = flag('seed', 1);
const METHODS = ['classic', 'survey'] as const;
type Method = (typeof METHODS)[number];

interface Tally {
  fields: number;
  right: number;
  extra: number;
  distErr: number[];
  jumpErr: number[];
  covered: number;
  ranges: number;
  zeroWidth: number;
  boundsOk: number;
  bounds: number;
}

const newTally = (): Tally => ({ fields: 0, right: 0, extra: 0, distErr: [], jumpErr: [], covered: 0, ranges: 0, zeroWidth: 0, boundsOk: 0, bounds: 0 });

function score(t: Tally, f: SurveyField, r: SightlineResult): void {
  const K = f.clouds.length;
  t.fields++;
  if (r.nLayers > K) t.extra++;
  if (r.nLayers !== K) return;
  t.right++;
  r.layers.forEach((l, k) => {
    const truth = f.clouds[k].distancePc;
    const bound = l.distanceBound ?? (l.kind === 'foreground' ? 'upper' : 'range');
    if (bound === 'upper') {
      t.bounds++;
      if (truth <= l.distanceHiPc) t.boundsOk++;
      return;
    }
    t.distErr.push(Math.abs(l.distancePc - truth) / truth);
    if (bound === 'interval') {
      // an interval ("somewhere between") is not a 16–84 % range: counted with the bounds
      t.bounds++;
      if (truth >= l.distanceLoPc && truth <= l.distanceHiPc) t.boundsOk++;
      return;
    }
    t.ranges++;
    if (l.distanceHiPc - l.distanceLoPc <= 0) t.zeroWidth++;
    if (truth >= l.distanceLoPc && truth <= l.distanceHiPc) t.covered++;
  });
  for (let k = 1; k < K; k++) {
    const trueJump = angleDifferenceDeg(f.clouds[k].thetaDeg, f.clouds[k - 1].thetaDeg);
    t.jumpErr.push(Math.abs(angleDifferenceDeg(r.jumps[k - 1].deltaThetaDeg, trueJump)));
  }
}

const pct = (a: number, b: number) => (b > 0 ? `${((100 * a) / b).toFixed(1)} %` : '—');
const q = (xs: number[], p: number, scale = 1, unit = '') => {
  if (!xs.length) return '—';
  return `${(scale * percentileSorted(Float64Array.from(xs).sort(), p)).toFixed(1)}${unit}`;
};

function row(label: string, t: Tally): string[] {
  return [
    label,
    String(t.fields),
    pct(t.right, t.fields),
    label.startsWith('1') ? pct(t.extra, t.fields) : '',
    q(t.distErr, 0.5, 100, ' %'),
    q(t.distErr, 0.9, 100, ' %'),
    q(t.jumpErr, 0.5, 1, '°'),
    pct(t.covered, t.ranges),
    t.bounds ? `${t.boundsOk}/${t.bounds}` : '—',
    String(t.zeroWidth),
  ];
}

function printTable(title: string, rows: string[][]): void {
  const head = ['clouds', 'fields', 'count right', 'extra (1-cloud)', 'dist err med', 'dist err p90', 'jump err med', 'coverage 16–84', 'bounds/intervals ok', 'zero-width'];
  const all = [head, ...rows];
  const w = head.map((_, c) => Math.max(...all.map((r) => r[c].length)));
  console.log(`\n${title}`);
  for (const r of all) console.log('  ' + r.map((x, c) => x.padEnd(w[c])).join('  '));
}

function runSet(good: boolean): Record<Method, { all: Tally[]; resolvable: Tally[] }> {
  const out = {} as Record<Method, { all: Tally[]; resolvable: Tally[] }>;
  for (const m of METHODS) out[m] = { all: [newTally(), newTally(), newTally()], resolvable: [newTally(), newTally(), newTally()] };
  for (const K of [1, 2, 3] as const) {
    for (let i = 0; i < FIELDS; i++) {
      const f = surveyField({ nClouds: K, seed: `${SEED}-${i}`, goodParallaxes: good });
      for (const m of METHODS) {
        const r = fitSightline(f.stars, { draws: DRAWS, cellId: `rec-${K}-${i}`, method: m });
        score(out[m].all[K - 1], f, r);
        if (f.resolvable) score(out[m].resolvable[K - 1], f, r);
      }
    }
  }
  return out;
}

function cpuPerCell(method: Method, nStars: number, cells: number): number {
  const fields = Array.from({ length: cells }, (_, i) => surveyField({ nClouds: (1 + (i % 3)) as 1 | 2 | 3, seed: `cpu-${nStars}-${i}`, nStars }));
  fitSightline(fields[0].stars, { draws: DRAWS, cellId: 'warm', method }); // JIT warm-up
  const t0 = process.cpuUsage();
  fields.forEach((f, i) => fitSightline(f.stars, { draws: DRAWS, cellId: `cpu-${i}`, method }));
  const t = process.cpuUsage(t0);
  return (t.user + t.system) / 1000 / cells;
}

console.log(`recovery bench: ${FIELDS} fields per cloud count, ${DRAWS} distance draws, seed ${SEED}; methods: classic (baseline) and survey (current)`);
for (const good of [false, true]) {
  const res = runSet(good);
  const label = good ? 'good parallaxes (1–5 %)' : 'survey-like parallaxes';
  for (const subset of ['resolvable', 'all'] as const) {
    for (const m of METHODS) {
      printTable(`${label}, ${subset} fields — ${m === 'classic' ? 'classic (baseline)' : 'survey (current)'}`, res[m][subset].map((t, k) => row(`${k + 1}`, t)));
    }
  }
  if (!good) {
    const r = res.survey.resolvable;
    const fields = r.reduce((a, t) => a + t.fields, 0);
    const right = r.reduce((a, t) => a + t.right, 0);
    const cov = r.reduce((a, t) => a + t.covered, 0) / Math.max(1, r.reduce((a, t) => a + t.ranges, 0));
    const med = percentileSorted(Float64Array.from(r.flatMap((t) => t.distErr)).sort(), 0.5);
    console.log('\ntargets on resolvable survey-like fields (survey method):');
    console.log(`  count right ≥ 90 %: ${(100 * right / fields).toFixed(1)} % ${right / fields >= 0.9 ? 'met' : 'NOT met'}`);
    console.log(`  false extra layers on one-cloud fields ≤ 5 %: ${(100 * r[0].extra / Math.max(1, r[0].fields)).toFixed(1)} % ${r[0].extra / Math.max(1, r[0].fields) <= 0.05 ? 'met' : 'NOT met'}`);
    console.log(`  coverage 68 ± 5 %: ${(100 * cov).toFixed(1)} % ${Math.abs(cov - 0.68) <= 0.05 ? 'met' : 'NOT met'}`);
    console.log(`  median distance error ≤ 5 %: ${(100 * med).toFixed(1)} % ${med <= 0.05 ? 'met' : 'NOT met'}`);
  }
}

console.log('\nCPU per cell (ms, one thread, fixed survey-like cells):');
for (const nStars of [100, 300]) {
  const cells = nStars === 100 ? 30 : 12;
  const c = cpuPerCell('classic', nStars, cells);
  const s = cpuPerCell('survey', nStars, cells);
  console.log(`  ${nStars} stars: classic ${c.toFixed(1)} ms, survey ${s.toFixed(1)} ms, ratio ${(s / c).toFixed(2)} (target ≤ 1.5)`);
}
