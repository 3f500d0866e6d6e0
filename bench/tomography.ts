/**
 * Tomography benchmark (not a test): a whole-sky synthetic run and the cost per cell as cells
 * grow. Run: npm run bench:tomography [-- --stars 1000000 --nside 64 --draws 100 --threads N]
 *
 * Stars are spread over the 12·nside² equal-area HEALPix cells by a uniform random cell
 * index per star — the same counts as stars uniform on the sphere — and each cell gets a
 * synthetic sightline of 1–3 clouds (synthesizeField; 1–5 % parallax errors, σq = σu
 * 0.1–0.3 %). The fit is timed on a worker_threads pool (server/tomography/pool.ts) with one worker per core.
 */

import { availableParallelism } from 'node:os';
import { mulberry32, hashSeed } from '../server/science/random';
import { synthesizeField, type SyntheticCloudSpec } from '../server/science/tomography/synthesize';
import { fitSightline } from '../server/science/tomography/fit';
import { runCellsInWorkers, type TomographyCell } from '../server/tomography/pool';
import { numberFlag } from './flags';

const flag = numberFlag;

const nStars = flag('stars', 1_000_000);
const nside = flag('nside', 64);
const draws = flag('draws', 100);
const threads = flag('threads', availableParallelism());
const scalingCells = flag('scaling-cells', 40);

function randomClouds(cell: number): SyntheticCloudSpec[] {
  const rng = mulberry32(hashSeed('bench-clouds', cell));
  const k = 1 + Math.floor(rng() * 3);
  const clouds: SyntheticCloudSpec[] = [];
  for (let c = 0; c < k; c++) {
    clouds.push({ distancePc: 100 + 1400 * rng(), p: 0.005 + 0.025 * rng(), thetaDeg: 180 * rng() });
  }
  return clouds;
}

function makeCell(cell: number, count: number): TomographyCell {
  return {
    cellId: `bench-${nside}-${cell}`,
    stars: synthesizeField({ clouds: randomClouds(cell), nStars: count, maxDistancePc: 2000, seed: cell, idPrefix: `c${cell}s` }).stars,
  };
}

const mib = (kib: number): string => `${(kib / 1024).toFixed(0)} MiB`;

async function wholeSky(): Promise<void> {
  const nCells = 12 * nside * nside;
  console.log(`tomography bench: ${nStars.toLocaleString('en')} stars, NSIDE ${nside} (${nCells.toLocaleString('en')} cells, ${(nStars / nCells).toFixed(1)} stars/cell), ${draws} draws, ${threads} worker threads`);
  const t0 = performance.now();
  const counts = new Int32Array(nCells);
  const rng = mulberry32(hashSeed('bench-sky', nStars, nside));
  for (let i = 0; i < nStars; i++) counts[Math.floor(rng() * nCells)]++;
  const cells: TomographyCell[] = [];
  for (let c = 0; c < nCells; c++) if (counts[c] > 0) cells.push(makeCell(c, counts[c]));
  const tGen = performance.now() - t0;
  console.log(`  generated ${cells.length.toLocaleString('en')} non-empty cells in ${(tGen / 1000).toFixed(1)} s`);

  let lastPrint = 0;
  const t1 = performance.now();
  const results = await runCellsInWorkers(cells, { draws }, (p) => {
    if (p.elapsedMs - lastPrint > 10_000) {
      lastPrint = p.elapsedMs;
      console.log(`  … ${p.cellsDone}/${p.cellsTotal} cells, ${(p.elapsedMs / 1000).toFixed(0)} s`);
    }
  }, { threads });
  const wall = (performance.now() - t1) / 1000;
  const hist: number[] = [];
  let complex = 0;
  for (const r of results) {
    while (hist.length <= r.nLayers) hist.push(0);
    hist[r.nLayers]++;
    if (r.complex) complex++;
  }
  const rss = process.resourceUsage().maxRSS;
  console.log(`  fit wall time        ${wall.toFixed(1)} s (target < 120 s on 2 cores)`);
  console.log(`  cells/s              ${(cells.length / wall).toFixed(0)}`);
  console.log(`  stars/s              ${(nStars / wall).toFixed(0)}`);
  console.log(`  total wall incl. gen ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  console.log(`  peak RSS (process)   ${mib(rss)}`);
  console.log(`  layers per cell      ${hist.map((n, k) => `${k}: ${n}`).join(', ')}; complex ${complex}`);
}

function scaling(): void {
  console.log(`time per cell as stars per cell double (one thread, ${draws} draws, CPU time, ${scalingCells} cells each, fewer at 160):`);
  let prev = 0;
  for (const perCell of [10, 20, 40, 80, 160]) {
    const k = perCell >= 160 ? Math.max(4, Math.floor(scalingCells / 4)) : scalingCells;
    const cells = Array.from({ length: k }, (_, c) => makeCell(1_000_000 + perCell * 1000 + c, perCell));
    fitSightline(cells[0].stars, { draws: 5, cellId: 'warm-up' });
    const c0 = process.cpuUsage();
    for (const cell of cells) fitSightline(cell.stars, { draws, cellId: cell.cellId });
    const ms = process.cpuUsage(c0).user / 1000 / k;
    console.log(`  ${String(perCell).padStart(4)} stars/cell: ${ms.toFixed(2).padStart(9)} ms/cell${prev ? `  (×${(ms / prev).toFixed(2)} for ×2 stars)` : ''}`);
    prev = ms;
  }
}

await wholeSky();
scaling();
