import fs from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Locator, Page } from 'playwright-core';
import { mustRunBrowserTests, pageApi, SCREENSHOTS, signInPage, useLiveBrowser } from '../helpers/browser.js';

const run = mustRunBrowserTests();

const grid = (page: Page) => page.getByTestId('review-grid');
const cell = (page: Page, line: number, col: string): Locator => grid(page).locator(`[role="row"][data-line="${line}"] [role="gridcell"][data-col="${col}"]`);
const box = async (l: Locator) => (await l.boundingBox())!;

describe.runIf(run)('the review table keeps its bearings (real browser)', () => {
  const env = useLiveBrowser();
  let batchId: number;
  beforeAll(async () => {
    batchId = (await env.live.t.db('batches').where({ filename: 'kestrel-standards-V.csv' }).first()).id;
  });

  it('shows the night’s calibration; a curator applies it once and the angles move by the zero-point', async () => {
    const { ctx, page } = await signInPage(env.browser, env.live.url, 'curator', { width: 1400, height: 1000 });
    const line7 = (await pageApi<{ rows: { line: number; theta_deg: number }[] }>(page, 'GET', `/batches/${batchId}/measurements?limit=50`)).body.rows.find((r) => r.line === 7)!;
    await page.goto(`${env.live.url}/review/batches/${batchId}`);
    const panel = page.getByTestId('calibration-panel');
    await panel.waitFor();
    const zp = (await panel.getByTestId('zero-point').textContent())!;
    expect(zp).toMatch(/^\d\.\d\d° ± \d\.\d\d°$/); // the demo night was made with 2.4°
    expect(Number(zp.split('°')[0])).toBeGreaterThan(2.0);
    expect(Number(zp.split('°')[0])).toBeLessThan(2.8);
    expect(await panel.getByTestId('instrumental-q').textContent()).toMatch(/^0\.1\d\d % ± /); // made with 0.18 %
    await page.getByTestId('calibration-residuals').locator('svg').first().waitFor();
    await panel.screenshot({ path: path.join(SCREENSHOTS, 'calibration-panel.png') });
    const applied = page.waitForResponse((r) => r.url().endsWith('/calibration/apply'));
    await page.getByTestId('apply-calibration').click();
    expect((await applied).status()).toBe(200);
    await panel.getByText(/Calibrated 16 rows/).waitFor();
    await page.getByTestId('revert-calibration').waitFor(); // applied: the button now reverts
    const again = await pageApi<{ error: { code: string } }>(page, 'POST', `/batches/${batchId}/calibration/apply`, {});
    expect(again.status).toBe(409);
    const after = (await pageApi<{ rows: { line: number; theta_deg: number }[] }>(page, 'GET', `/batches/${batchId}/measurements?limit=50`)).body.rows.find((r) => r.line === 7)!;
    const cal = (await pageApi<{ calibrations: { zeroPointDeg: number; instrumentalQ: number }[] }>(page, 'GET', `/batches/${batchId}/calibration`)).body.calibrations[0];
    // θ moves by about −zero-point (the instrumental (q, u) of 0.2 % shifts a 1.7 % star's angle by a little more)
    const moved = ((after.theta_deg - line7.theta_deg + 270) % 180) - 90;
    expect(Math.abs(moved + cal.zeroPointDeg)).toBeLessThan(3);
    await ctx.close();
  });

  it('line, state and star stay in place while the table scrolls sideways', async () => {
    const { ctx, page } = await signInPage(env.browser, env.live.url, 'curator', { width: 1100, height: 900 });
    await page.goto(`${env.live.url}/review/batches/${batchId}`);
    await cell(page, 7, 'q').waitFor();
    const g = await box(grid(page));
    const lineBefore = await box(cell(page, 7, 'line'));
    const starBefore = await box(cell(page, 7, 'star'));
    const qBefore = await box(cell(page, 7, 'q'));
    await grid(page).evaluate((el) => el.scrollTo({ left: el.scrollWidth }));
    await expect.poll(async () => (await box(cell(page, 7, 'q'))).x).toBeLessThan(qBefore.x - 200);
    const lineAfter = await box(cell(page, 7, 'line'));
    const starAfter = await box(cell(page, 7, 'star'));
    expect(lineAfter.x).toBeCloseTo(lineBefore.x, 0);
    expect(starAfter.x).toBeCloseTo(starBefore.x, 0);
    expect(starAfter.x).toBeGreaterThanOrEqual(g.x);
    // the frozen cells are on top: what lies under the star cell's middle is the star cell itself
    const hit = await page.evaluate(([x, y]) => (document.elementFromPoint(x, y)?.closest('[role="gridcell"]') as HTMLElement | null)?.dataset.col ?? null, [starAfter.x + starAfter.width / 2, starAfter.y + starAfter.height / 2] as const);
    expect(hit).toBe('star');
    const header = grid(page).locator('[role="columnheader"][data-col="star"]');
    expect((await box(header)).x).toBeCloseTo(starAfter.x, 0);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'review-grid-frozen.png') });
    await ctx.close();
  });

  it('an RA edit re-runs the match: the row leaves its star and is held; a refusal never covers the cell being typed', async () => {
    const { ctx, page } = await signInPage(env.browser, env.live.url, 'curator', { width: 1400, height: 900 });
    await page.goto(`${env.live.url}/review/batches/${batchId}`);
    await cell(page, 8, 'ra_deg').waitFor();
    // the tied star's separation is shown beside its name
    expect(await cell(page, 8, 'star').getByTestId('star-separation').textContent()).toMatch(/″$/);
    await cell(page, 8, 'ra_deg').click();
    const editor = page.getByTestId('cell-editor');
    await editor.waitFor();
    await page.keyboard.press('Control+A');
    await page.keyboard.type('2.5');
    const saved = page.waitForResponse((r) => r.request().method() === 'PATCH');
    await page.keyboard.press('Enter');
    expect((await saved).status()).toBe(200);
    const row = grid(page).locator('[role="row"][data-line="8"]');
    await expect.poll(() => row.getAttribute('data-state')).toBe('ambiguous');
    await cell(page, 8, 'star').getByTestId('held-untied').waitFor(); // no longer shown as tied to its old star
    const m = (await pageApi<{ rows: { line: number; state: string; star_id: number | null; ra_deg: number; warnings: { message: string }[] }[] }>(page, 'GET', `/batches/${batchId}/measurements?limit=50`)).body.rows.find((r) => r.line === 8)!;
    expect(m).toMatchObject({ state: 'ambiguous', star_id: null, ra_deg: 2.5 });
    expect(m.warnings.map((w) => w.message).join(' ')).toMatch(/from KRS J.* held for a curator/);

    // a refused value on the top row: the popover lies inside the grid, under the header, and off the active cell
    await cell(page, 2, 'q_err').click();
    await editor.waitFor();
    await page.keyboard.press('Control+A');
    await page.keyboard.type('-1');
    const refused = page.waitForResponse((r) => r.request().method() === 'PATCH');
    await page.keyboard.press('Enter');
    expect((await refused).status()).toBe(400);
    const pop = cell(page, 2, 'q_err').getByTestId('cell-problem');
    await pop.waitFor();
    await expect.poll(async () => pop.evaluate((el) => getComputedStyle(el).visibility)).toBe('visible');
    const p = await box(pop);
    const g = await box(grid(page));
    const head = await box(grid(page).locator('[role="columnheader"]').first());
    expect(p.y).toBeGreaterThanOrEqual(head.y + head.height);
    expect(p.y + p.height).toBeLessThanOrEqual(g.y + g.height);
    expect(p.x).toBeGreaterThanOrEqual(g.x);
    expect(p.x + p.width).toBeLessThanOrEqual(g.x + g.width);
    const active = await box(cell(page, 3, 'q_err')); // Enter saved and moved down
    const overlap = p.x < active.x + active.width && active.x < p.x + p.width && p.y < active.y + active.height && active.y < p.y + p.height;
    expect(overlap).toBe(false);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'review-grid-refusal.png') });
    // typing in the next cell hides it (the list under the grid keeps it)
    await page.keyboard.type('0.0');
    await pop.waitFor({ state: 'detached' });
    expect(await page.getByTestId('unsaved-edits').textContent()).toContain('Line 2');
    await page.keyboard.press('Escape');
    await ctx.close();
  });

  it('the Overview shows each role its to-do; the uploader reads the decision note and can send a corrected file', async () => {
    const obs = await signInPage(env.browser, env.live.url, 'observer', { width: 1280, height: 900 });
    await obs.page.goto(`${env.live.url}/`);
    const todo = obs.page.getByTestId('todo');
    await todo.waitFor();
    const link = todo.locator('a[data-kind="needs_mapping"]');
    expect(await link.textContent()).toBe('batch needs your column mapping');
    expect(await todo.locator('li').filter({ has: obs.page.locator('a[data-kind="needs_mapping"]') }).textContent()).toBe('1batch needs your column mapping');
    await obs.page.screenshot({ path: path.join(SCREENSHOTS, 'overview-observer.png') });
    await link.click();
    await obs.page.waitForURL(/\/batches\/\d+$/);

    const cur = await signInPage(env.browser, env.live.url, 'curator', { width: 1280, height: 900 });
    await cur.page.goto(`${env.live.url}/`);
    await cur.page.getByTestId('todo').locator('a[data-kind="review"]').waitFor();
    const returned = await pageApi(cur.page, 'POST', `/batches/${batchId}/reject`, { note: 'Line 8: the RA was typed in degrees of the wrong field; please send the night again.' });
    expect(returned.status).toBe(200);

    await obs.page.goto(`${env.live.url}/batches/${batchId}`);
    const note = obs.page.getByTestId('decision-note');
    await note.waitFor();
    expect(await obs.page.getByTestId('decision-note-text').textContent()).toBe('Line 8: the RA was typed in degrees of the wrong field; please send the night again.');
    await note.getByRole('button', { name: 'Send a corrected file' }).waitFor();
    await note.screenshot({ path: path.join(SCREENSHOTS, 'decision-note.png') });
    const csv = fs.readFileSync(path.resolve('seeds/demo-batches/kestrel-standards-V.csv'), 'utf8').replace('61040.12000', '61040.12500');
    const linked = obs.page.waitForResponse((r) => r.url().endsWith('/replaces'));
    await obs.page.getByTestId('corrected-file').setInputFiles({ name: 'kestrel-standards-V-fixed.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
    expect((await linked).status()).toBe(200);
    await obs.page.waitForURL((u) => !u.pathname.endsWith(`/batches/${batchId}`));
    await obs.page.getByText(`batch ${batchId} (kestrel-standards-V.csv)`).waitFor();
    await obs.ctx.close();
    await cur.ctx.close();
  });

  it('the standard stars page lists each reference with its source; the catalog cone takes Galactic l, b', async () => {
    const { ctx, page } = await signInPage(env.browser, env.live.url, 'curator', { width: 1280, height: 900 });
    await page.goto(`${env.live.url}/calibration/standards`);
    const table = page.getByTestId('standards-table');
    await table.locator('tr').filter({ hasText: 'BD+59 389' }).first().waitFor();
    expect(await table.locator('tr').filter({ hasText: 'HD 204827' }).first().textContent()).toContain('from memory');
    await page.screenshot({ path: path.join(SCREENSHOTS, 'standard-stars.png'), fullPage: true });
    const star = await env.live.t.db('stars').orderBy('id').first();
    await page.goto(`${env.live.url}/catalog`);
    await page.getByLabel('Centre given in').selectOption('galactic');
    await page.getByLabel('l [deg]').fill(star.glon_deg.toFixed(5));
    await page.getByLabel('b [deg]').fill(star.glat_deg.toFixed(5));
    await page.getByLabel('Radius [deg]').fill('0.01');
    await page.getByRole('button', { name: 'Find stars' }).click();
    await page.waitForURL(/[?&]l=/);
    // the answer is the cone (a few stars, nearest first with their separation), not the whole list shown before it
    await expect.poll(() => page.locator('table tbody tr').count()).toBeLessThan(5);
    expect(await page.locator('table tbody tr').first().textContent()).toContain(star.name);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'catalog-galactic-cone.png') });
    await ctx.close();
  });
});
