import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Browser, Locator, Page } from 'playwright-core';
import { mustRunBrowserTests, pageApiGet, SCREENSHOTS, signInPage, useLiveBrowser } from '../helpers/browser.js';
import { DEMO } from '../helpers/app.js';

const run = mustRunBrowserTests();

interface ApiRun {
  id: number;
  state: string;
  params: { nside: number; coordsys: string; jumpThresholdDeg: number };
  fingerprint: string;
  progress: { cellsDone: number; cellsTotal: number };
  starsUsed: number;
}
interface ApiCell {
  ipix: number;
  lon_deg: number;
  lat_deg: number;
  ra_deg: number;
  dec_deg: number;
  n_stars: number;
  n_layers: number;
  layer_support: number;
  max_jump_deg: number | null;
}
interface ApiSightline {
  nLayers: number;
  layerCountSupport: number;
  clearForeground: boolean;
  layers: { kind: string; distancePc: number }[];
  jumps: { deltaThetaDeg: number; significance: number }[];
  segments: unknown[];
}

const signIn = (browser: Browser, url: string, role: keyof typeof DEMO) => signInPage(browser, url, role, { width: 1280, height: 900 });

const nav = (page: Page) => page.getByRole('navigation', { name: 'Main' });
/** "−66.8" (the page's minus sign) → -66.8 */
const readNumber = (s: string | null) => Number((s ?? '').replace('−', '-').replace(/[^0-9.+-]/g, ''));
const cell = (page: Page, ipix: number): Locator => page.locator(`[data-testid="sky-cell"][data-ipix="${ipix}"]`);

/** Distinct y values of a polyline path ("M x,y L x,y …" as Plot writes it). */
function pathLevels(d: string): number[] {
  const ys = [...d.matchAll(/[ML]\s*([-\d.e]+)[ ,]([-\d.e]+)/g)].map((m) => Number(Number(m[2]).toFixed(2)));
  return [...new Set(ys)];
}

describe.runIf(run)('tomography pages in a real browser', () => {
  const env = useLiveBrowser({ tomography: true, startTimeoutMs: 120_000 });

  it('a modeler reads the sky map, switches frame and colouring, and opens a two-layer sightline', async () => {
    const { ctx, page } = await signIn(env.browser, env.live.url, 'modeler');
    const links = await nav(page).getByRole('link').allTextContents();
    expect(links).toContain('Sky');
    expect(links).toContain('Runs');

    await nav(page).getByRole('link', { name: 'Sky' }).click();
    await page.waitForURL(/\/sky$/);
    const runs = (await pageApiGet<{ runs: ApiRun[] }>(page, '/tomography/runs')).runs;
    const demo = runs.find((r) => r.state === 'done')!;
    expect(demo.params).toMatchObject({ nside: 32, coordsys: 'G' });
    const { cells } = await pageApiGet<{ cells: ApiCell[] }>(page, `/tomography/runs/${demo.id}/cells`);

    // one polygon per cell of the run, on a Galactic map by default
    const map = page.getByTestId('sky-map');
    await expect.poll(() => page.getByTestId('sky-cell').count()).toBe(cells.length);
    expect(cells.length).toBeGreaterThanOrEqual(200);
    expect(await map.getAttribute('data-frame')).toBe('G');
    expect(await page.getByTestId('run-summary').textContent()).toContain(demo.fingerprint.slice(0, 12));
    expect(await page.getByTestId('lon-label').allTextContents()).toEqual(['0°', '60°', '120°', '240°', '300°']);
    // every polygon has an outline, and the two-layer cells are the ones the API says
    const empty = await page.locator('[data-testid="sky-cell"]').evaluateAll((els) => els.filter((e) => !(e.getAttribute('d') ?? '').startsWith('M')).length);
    expect(empty).toBe(0);
    const twoOnMap = (await page.locator('[data-testid="sky-cell"][data-layers="2"]').evaluateAll((els) => els.map((e) => Number(e.getAttribute('data-ipix'))))).sort((a, b) => a - b);
    const twoInApi = cells.filter((c) => c.n_layers === 2).map((c) => c.ipix).sort((a, b) => a - b);
    expect(twoOnMap).toEqual(twoInApi);

    // the legend counts the cells of each class
    const legend = page.getByTestId('sky-legend');
    await legend.waitFor();
    for (const k of [1, 2, 3]) {
      const n = cells.filter((c) => c.n_layers === k).length;
      expect(Number(await page.getByTestId(`legend-layers-${k}`).getAttribute('data-count')), `${k} layers`).toBe(n);
      expect(await page.getByTestId(`legend-layers-${k}`).textContent()).toContain(`(${n})`);
    }
    // cells of different classes get different colours
    const fillOf = (ipix: number) => cell(page, ipix).getAttribute('fill');
    const one = cells.find((c) => c.n_layers === 1)!;

    // a two-layer cell away from the map's edge, whose fit has both layers as breaks (two steps up from an unpolarized foreground)
    let target: ApiCell | undefined;
    let sight: ApiSightline | undefined;
    for (const c of cells.filter((x) => x.n_layers === 2 && Math.abs(x.lon_deg - 180) > 30 && Math.abs(x.lat_deg) < 60)) {
      const s = (await pageApiGet<{ cells: ApiSightline[] }>(page, `/sightlines?nside=32&ipix=${c.ipix}&run=${demo.id}`)).cells[0];
      if (s.clearForeground && s.layers.every((l) => l.kind === 'break')) {
        target = c;
        sight = s;
        break;
      }
    }
    expect(target, 'a two-layer cell with two breaks').toBeDefined();
    expect(await fillOf(target!.ipix)).not.toBe(await fillOf(one.ipix));

    // hovering names the cell
    await cell(page, target!.ipix).hover();
    const tip = page.getByTestId('cell-tooltip');
    await tip.waitFor();
    const tipText = (await tip.textContent()) ?? '';
    expect(tipText).toContain(`Cell ${target!.ipix}`);
    expect(tipText).toContain(`l ${target!.lon_deg.toFixed(2)}°`);
    expect(tipText).toMatch(new RegExp(`stars\\s*${target!.n_stars}`));
    expect(tipText).toMatch(/layers\s*2/);
    expect(tipText).toContain(`${target!.max_jump_deg!.toFixed(1)}°`);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'sky-map.png'), fullPage: true });

    // zooming in draws the cells larger, and back out restores the whole sky
    const before = (await cell(page, target!.ipix).boundingBox())!;
    await page.getByRole('button', { name: 'Zoom in' }).click();
    await page.getByRole('button', { name: 'Zoom in' }).click();
    await expect.poll(() => map.getAttribute('data-zoom')).toBe('4');
    const zoomed = (await cell(page, target!.ipix).boundingBox())!;
    expect(zoomed.width / before.width).toBeCloseTo(4, 0);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'sky-map-zoom.png') });
    await page.getByRole('button', { name: 'Whole sky' }).click();
    await expect.poll(() => map.getAttribute('data-zoom')).toBe('1');
    expect((await cell(page, target!.ipix).boundingBox())!.width).toBeCloseTo(before.width, 0);

    // equatorial: the same cells, drawn again in RA/Dec
    const galacticD = await cell(page, target!.ipix).getAttribute('d');
    await page.getByRole('radio', { name: 'Equatorial' }).click();
    await expect.poll(() => map.getAttribute('data-frame')).toBe('C');
    expect(await page.getByTestId('sky-cell').count()).toBe(cells.length);
    expect(await cell(page, target!.ipix).getAttribute('d')).not.toBe(galacticD);
    expect(await page.getByTestId('lon-label').allTextContents()).toEqual(['0h', '4h', '8h', '16h', '20h']);
    await cell(page, target!.ipix).hover();
    await expect.poll(() => tip.textContent()).toContain(`RA ${target!.ra_deg.toFixed(2)}°`);
    expect(new URL(page.url()).searchParams.get('frame')).toBe('C');
    await page.screenshot({ path: path.join(SCREENSHOTS, 'sky-map-equatorial.png'), fullPage: true });

    // colour by the largest jump: single-layer cells share the "no jump" colour
    await page.getByRole('radio', { name: 'Largest jump' }).click();
    await expect.poll(() => map.getAttribute('data-colour-by')).toBe('jump');
    expect(Number(await page.getByTestId('legend-no-jump').getAttribute('data-count'))).toBe(cells.filter((c) => c.max_jump_deg === null).length);
    const small = cells.filter((c) => c.max_jump_deg !== null).sort((a, b) => a.max_jump_deg! - b.max_jump_deg!);
    expect(await fillOf(small[0].ipix)).not.toBe(await fillOf(small[small.length - 1].ipix));
    await page.screenshot({ path: path.join(SCREENSHOTS, 'sky-map-jumps.png'), fullPage: true });

    // a click opens the sightline
    await page.getByRole('radio', { name: 'Galactic' }).click();
    await expect.poll(() => map.getAttribute('data-frame')).toBe('G');
    await cell(page, target!.ipix).click();
    await page.waitForURL(new RegExp(`/sky/32/${target!.ipix}\\?run=${demo.id}$`));
    await page.getByRole('table', { name: 'Layers' }).waitFor();
    expect(await page.getByTestId('layer-row').count()).toBe(2);
    expect(sight!.layers).toHaveLength(2);
    expect(await page.getByTestId('layer-count').textContent()).toBe('2');
    expect(await page.getByTestId('layer-support').textContent()).toContain(`${Math.round(100 * sight!.layerCountSupport)} %`);
    expect(await page.getByTestId('jump-row').count()).toBe(1);
    const shown = readNumber(await page.getByTestId('jump-delta').textContent());
    expect(Math.abs(shown - sight!.jumps[0].deltaThetaDeg)).toBeLessThanOrEqual(0.05 + 1e-9); // one decimal shown

    // the plots are SVG with units on their axes
    const q = page.getByTestId('chart-q');
    await q.locator('svg').first().waitFor();
    const qText = (await q.textContent()) ?? '';
    expect(qText).toContain('Distance [pc]');
    expect(qText).toContain('Stokes q [%]');
    expect(await page.getByTestId('chart-u').textContent()).toContain('Stokes u [%]');
    expect(await page.getByTestId('chart-p').textContent()).toContain('p [%]');
    expect(await page.getByTestId('chart-theta').textContent()).toContain('θ [deg]');
    expect(await page.getByTestId('chart-qu').textContent()).toContain('Stokes u [%]');
    // two steps: the fitted line has three levels (foreground, after layer 1, after layer 2), and a shaded 16–84 % band per layer
    const steps = q.locator('g.fitted-steps path');
    expect(pathLevels((await steps.first().getAttribute('d')) ?? '')).toHaveLength(sight!.segments.length);
    expect(sight!.segments).toHaveLength(3);
    expect(await q.locator('g.layer-bands rect').count()).toBe(2);
    expect(await page.getByTestId('angle-note').textContent()).toMatch(/IAU.*north through east/s);
    expect(await page.getByTestId('angle-note').textContent()).toContain('perpendicular');
    await page.screenshot({ path: path.join(SCREENSHOTS, 'sightline.png'), fullPage: true });

    // a modeler reads the runs but cannot start or cancel one
    await nav(page).getByRole('link', { name: 'Runs' }).click();
    await page.waitForURL(/\/runs$/);
    const row = page.locator(`[data-testid="run-row"][data-run="${demo.id}"]`);
    await row.waitFor();
    expect(await row.getAttribute('data-state')).toBe('done');
    expect(await row.getByTestId('run-fingerprint').textContent()).toBe(demo.fingerprint.slice(0, 12));
    expect(await row.getByTestId('run-stars').textContent()).toContain(demo.starsUsed.toLocaleString('en'));
    expect(await page.getByRole('button', { name: 'Start run' }).count()).toBe(0);
    await ctx.close();
  }, 120_000);

  it('a curator cancels a big run while it fits, then runs a small cone to the end', async () => {
    const { ctx, page } = await signIn(env.browser, env.live.url, 'curator');
    await nav(page).getByRole('link', { name: 'Runs' }).click();
    const form = page.getByRole('form', { name: 'Start a run' });
    await form.waitFor();

    // big: the whole sky in large cells with many draws — seconds of work
    await form.getByLabel('NSIDE').selectOption('16');
    await form.getByLabel('Min stars per cell').fill('4');
    await form.getByLabel('Distance draws').fill('500');
    await form.getByLabel('Min stars per segment').fill('2');
    const bigAnswer = page.waitForResponse((r) => r.request().method() === 'POST' && new URL(r.url()).pathname === '/api/v1/tomography/runs');
    await form.getByRole('button', { name: 'Start run' }).click();
    const bigRes = await bigAnswer;
    expect(bigRes.status()).toBe(202);
    const big = (await bigRes.json()) as ApiRun;
    const bigRow = page.locator(`[data-testid="run-row"][data-run="${big.id}"]`);
    await bigRow.waitFor();
    // progress: cells done of the total, and the time left
    const progress = page.getByTestId('run-progress');
    await expect.poll(async () => Number((await progress.getAttribute('data-done').catch(() => null)) ?? 0), { timeout: 30_000, interval: 100 }).toBeGreaterThan(0);
    const total = Number(await progress.getAttribute('data-total'));
    expect(total).toBeGreaterThan(0);
    expect(await progress.textContent()).toMatch(new RegExp(`of ${total.toLocaleString('en')} cells`));
    expect(await progress.getByRole('progressbar').getAttribute('aria-valuenow')).not.toBeNull();
    await page.screenshot({ path: path.join(SCREENSHOTS, 'runs-progress.png') });
    await page.getByRole('button', { name: `Cancel run ${big.id}` }).click();
    await expect.poll(() => bigRow.getAttribute('data-state'), { timeout: 30_000 }).toBe('cancelled');
    const bigEnd = await pageApiGet<ApiRun>(page, `/tomography/runs/${big.id}`);
    expect(bigEnd.state).toBe('cancelled');
    expect(bigEnd.progress.cellsDone).toBeLessThan(bigEnd.progress.cellsTotal);
    expect(await page.getByRole('button', { name: `Cancel run ${big.id}` }).count()).toBe(0);

    // small: a 6° cone around a demo cell, few draws
    const demo = (await pageApiGet<{ runs: ApiRun[] }>(page, '/tomography/runs')).runs.find((r) => r.state === 'done')!;
    const centre = (await pageApiGet<{ cells: ApiCell[] }>(page, `/tomography/runs/${demo.id}/cells`)).cells[0];
    await form.getByLabel('NSIDE').selectOption('32');
    await form.getByLabel('Min stars per cell').fill('10');
    await form.getByLabel('Distance draws').fill('5');
    await form.getByLabel('Min stars per segment').fill('3');
    await form.getByLabel('Only a cone of the sky').check();
    await form.getByLabel('Cone RA [deg]').fill(centre.ra_deg.toFixed(4));
    await form.getByLabel('Cone Dec [deg]').fill(centre.dec_deg.toFixed(4));
    await form.getByLabel('Cone radius [deg]').fill('6');
    const smallAnswer = page.waitForResponse((r) => r.request().method() === 'POST' && new URL(r.url()).pathname === '/api/v1/tomography/runs');
    await form.getByRole('button', { name: 'Start run' }).click();
    const smallRes = await smallAnswer;
    expect(smallRes.status()).toBe(202);
    const small = (await smallRes.json()) as ApiRun & { params: { region: { radius: number } | null } };
    expect(['queued', 'running']).toContain(small.state);
    expect(small.params.region?.radius).toBe(6);
    const smallRow = page.locator(`[data-testid="run-row"][data-run="${small.id}"]`);
    await expect.poll(() => smallRow.getAttribute('data-state'), { timeout: 30_000 }).toBe('done');
    const smallEnd = await pageApiGet<ApiRun>(page, `/tomography/runs/${small.id}`);
    expect(smallEnd.starsUsed).toBeGreaterThan(0);
    expect(smallEnd.starsUsed).toBeLessThan(demo.starsUsed);
    expect(await smallRow.getByTestId('run-stars').textContent()).toContain(smallEnd.starsUsed.toLocaleString('en'));
    expect(await smallRow.getByTestId('run-cells').textContent()).toBe(`${smallEnd.progress.cellsTotal} / ${smallEnd.progress.cellsTotal}`);
    expect(await smallRow.getByTestId('run-fingerprint').textContent()).toBe(smallEnd.fingerprint.slice(0, 12));
    await page.screenshot({ path: path.join(SCREENSHOTS, 'runs.png'), fullPage: true });

    // its map holds only the cone's cells
    await smallRow.getByRole('link', { name: 'Open the map' }).click();
    await page.waitForURL(new RegExp(`/sky\\?run=${small.id}$`));
    const smallCells = (await pageApiGet<{ cells: ApiCell[] }>(page, `/tomography/runs/${small.id}/cells`)).cells;
    expect(smallCells.length).toBeGreaterThan(0);
    expect(smallCells.length).toBeLessThan(50);
    await expect.poll(() => page.getByTestId('sky-cell').count()).toBe(smallCells.length);
    expect(smallCells.map((c) => c.ipix)).toContain(centre.ipix);
    await ctx.close();
  }, 120_000);
});
