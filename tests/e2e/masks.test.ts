/**
 * The Masks page applies criteria as they change: after editing Layers ≥ 3 and Jump ≥ 60 (without
 * pressing "Show mask"), the preview says it shows those criteria and the FITS downloaded through
 * the page's own link holds them: header cards MINLAYER = 3 and MINJUMP = 60, and MASK = 1 exactly
 * where N_LAYERS ≥ 3 and MAX_JUMP ≥ 60. The FITS is read back with healpy (tests/reference/read_mask.py).
 */
import fs from 'node:fs';
import path from 'node:path';
import { execFileSync, spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { mustRunBrowserTests, SCREENSHOTS, signInPage, useLiveBrowser } from '../helpers/browser.js';

const PYTHON = '/usr/bin/python3';
const READER = path.resolve('tests/reference/read_mask.py');
const HAVE_HEALPY = spawnSync(PYTHON, ['-c', 'import healpy, astropy, numpy'], { stdio: 'ignore' }).status === 0;
const run = mustRunBrowserTests() && (HAVE_HEALPY || process.env.CI === 'true');

describe.runIf(run)('masks page', () => {
  const env = useLiveBrowser({ tomography: true, startTimeoutMs: 240_000 });

  it('criteria apply as they change; the FITS link downloads the mask of the criteria on the form', async () => {
    const { ctx, page } = await signInPage(env.browser, env.live.url, 'modeler', { width: 1400, height: 1000 });
    await page.goto(`${env.live.url}/masks`);
    const counts = page.getByTestId('mask-counts');
    await expect.poll(() => counts.getAttribute('data-query'), { timeout: 60_000 }).toBe('minLayers=2');

    // edit the criteria; "Show mask" is never pressed
    await page.getByLabel('Layers, at least').fill('3');
    await page.getByLabel('Jump |Δθ|, at least (deg)').fill('60');
    // the FITS link follows the form at once
    const fits = page.locator('a[data-format="fits"]');
    await expect.poll(async () => new URLSearchParams((await fits.getAttribute('href'))!.split('?')[1]).toString(), { timeout: 30_000 }).toBe('minLayers=3&minJumpDeg=60&format=fits');
    // the preview and counts catch up (debounced) and say so
    await expect.poll(() => counts.getAttribute('data-query'), { timeout: 60_000 }).toBe('minLayers=3&minJumpDeg=60');
    await expect.poll(() => page.getByTestId('mask-status').getAttribute('data-current'), { timeout: 30_000 }).toBe('yes');
    const flaggedShown = Number(await counts.locator('dd').first().textContent());
    fs.mkdirSync(SCREENSHOTS, { recursive: true });
    await page.screenshot({ path: path.join(SCREENSHOTS, 'masks-criteria-applied.png'), fullPage: true });

    const [download] = await Promise.all([page.waitForEvent('download', { timeout: 60_000 }), fits.click()]);
    const file = path.join(env.live.t.dir, 'mask-from-page.fits');
    await download.saveAs(file);
    const m = JSON.parse(execFileSync(PYTHON, [READER, 'map', file], { maxBuffer: 256 * 1024 * 1024 }).toString()) as {
      nside: number; header: Record<string, string | number>; values: Record<string, number[]>; unseen: number;
    };
    // header cards state the criteria of the form (server/masks/mask.ts provenanceCards)
    expect(m.header.MINLAYER).toBe(3);
    expect(Number(m.header.MINJUMP)).toBe(60);
    // MASK = 1 exactly where the file's own N_LAYERS ≥ 3 and MAX_JUMP ≥ 60 (significance 0: any jump)
    let flagged = 0;
    let twoLayerCells = 0;
    for (let i = 0; i < m.values.MASK.length; i++) {
      const n = m.values.N_LAYERS[i];
      const jump = m.values.MAX_JUMP[i];
      const want = n >= 3 && jump !== m.unseen && jump > -1e30 && jump >= 60 ? 1 : 0;
      expect(m.values.MASK[i], `pixel ${i}`).toBe(want);
      flagged += m.values.MASK[i];
      if (n === 2) twoLayerCells++;
    }
    // the default criteria (layers ≥ 2) would have flagged the two-layer cells: this file does not
    expect(twoLayerCells).toBeGreaterThan(0);
    expect(flagged).toBe(flaggedShown);
    await ctx.close();
  }, 240_000);
});
