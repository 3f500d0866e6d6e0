import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Browser, Locator, Page } from 'playwright-core';
import { mustRunBrowserTests, pageApi, SCREENSHOTS, signInPage, useLiveBrowser } from '../helpers/browser.js';
import { DEMO } from '../helpers/app.js';

const run = mustRunBrowserTests();

// The demo seed holds this R-band night, already approved by the demo curator. The same stars
// observed in V the same night make a fresh batch for a curator to review.
const HAWK_R = path.resolve('seeds/demo-batches/kestrel-night-hawk-R.csv');
const NIGHT_V = 'kestrel-night-hawk-V.csv';

interface Row {
  id: number;
  line: number;
  state: string;
  version: number;
  q: number;
  u: number;
  q_err: number;
  u_err: number;
  p: number;
  mjd: number;
  star_id: number;
}

interface StarMeasurement {
  state: string;
  band: string;
  instrument: string;
  q: number;
  u: number;
  q_err: number;
  u_err: number;
  mjd: number;
}

const signIn = (browser: Browser, url: string, role: keyof typeof DEMO) => signInPage(browser, url, role, { width: 1400, height: 950 });

async function rowAtLine(page: Page, batchId: number, line: number): Promise<Row> {
  // file order: line n is the (n − 2)th row
  const res = await pageApi<{ rows: Row[] }>(page, 'GET', `/batches/${batchId}/measurements?sort=line&order=asc&offset=${line - 2}&limit=1`);
  expect(res.status).toBe(200);
  expect(res.body.rows[0].line).toBe(line);
  return res.body.rows[0];
}

const navLinks = (page: Page) => page.getByRole('navigation', { name: 'Main' }).getByRole('link').allTextContents();
const grid = (page: Page) => page.getByTestId('review-grid');
const cell = (page: Page, line: number, col: string): Locator => grid(page).locator(`[role="row"][data-line="${line}"] [role="gridcell"][data-col="${col}"]`);

/** The grid's active cell, as (line in the file, column). */
async function activeCell(page: Page): Promise<{ line: number; col: string }> {
  const id = await grid(page).getAttribute('aria-activedescendant');
  expect(id, 'the grid names its active cell').toBeTruthy();
  return page.locator(`[id="${id}"]`).evaluate((el) => ({ line: Number((el.closest('[role="row"]') as HTMLElement).dataset.line), col: (el as HTMLElement).dataset.col! }));
}

describe.runIf(run)('review in a real browser', () => {
  const env = useLiveBrowser();

  it('a curator corrects a night in the table and approves it; the observer and the outbox see the decision', async () => {
    // The observer sends the V-band night (7,200 rows, checked while the request waits).
    const obs = await signIn(env.browser, env.live.url, 'observer');
    const csv = fs.readFileSync(HAWK_R, 'utf8').replace(/,R,/g, ',V,');
    const fileRows = csv.split(/\r?\n/).filter((l) => l.trim() !== '').length - 1;
    const sent = await obs.page.request.post(`${env.live.url}/api/v1/batches`, { headers: { Origin: env.live.url }, multipart: { instrument: 'KR-HAWK', file: { name: NIGHT_V, mimeType: 'text/csv', buffer: Buffer.from(csv) } } });
    expect(sent.status()).toBe(201);
    const batchId = ((await sent.json()) as { id: number }).id;
    await expect.poll(async () => (await pageApi<{ state: string }>(obs.page, 'GET', `/batches/${batchId}`)).body.state, { timeout: 30_000 }).toBe('awaiting_review');
    expect(await navLinks(obs.page)).not.toContain('Review');
    expect(await navLinks(obs.page)).toContain('Catalog');

    // The queue, as a curator.
    const { ctx, page } = await signIn(env.browser, env.live.url, 'curator');
    expect(await navLinks(page)).toEqual(expect.arrayContaining(['Review', 'Catalog']));
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Review' }).click();
    await page.waitForURL(/\/review$/);
    const queue = page.getByRole('table', { name: 'Review queue' });
    const waiting = queue.locator(`tr[data-batch-id="${batchId}"]`);
    await waiting.waitFor();
    const waitingText = (await waiting.textContent()) ?? '';
    expect(waitingText).toContain(NIGHT_V);
    expect(waitingText).toContain('7,200');
    expect(waitingText).toContain('Ada Observer');
    expect(fileRows).toBe(7200);
    // the seeded R night is under "Approved", with the demo curator's note
    await page.getByRole('tab', { name: /Approved/ }).click();
    const rNight = queue.locator('tr').filter({ hasText: 'kestrel-night-hawk-R.csv' });
    await rNight.waitFor();
    expect(await rNight.textContent()).toContain('Clean night; approved for the demo.');
    expect(await queue.locator(`tr[data-batch-id="${batchId}"]`).count()).toBe(0);
    await page.getByRole('tab', { name: /Waiting for review/ }).click();
    await waiting.waitFor();
    await page.screenshot({ path: path.join(SCREENSHOTS, 'review-queue.png') });

    await waiting.getByRole('link', { name: NIGHT_V }).click();
    await page.waitForURL(new RegExp(`/review/batches/${batchId}$`));
    const before = await rowAtLine(page, batchId, 2);
    await cell(page, 2, 'q').waitFor();
    await expect.poll(() => page.getByTestId('total-pending').textContent()).toBe('7,200');

    // Virtualised: 7,200 rows in the grid's count, a few dozen in the document.
    expect(await grid(page).getAttribute('aria-rowcount')).toBe(String(7200 + 1));
    const rendered = await grid(page).locator('[role="rowgroup"] [role="row"]').count();
    expect(rendered).toBeGreaterThan(10);
    expect(rendered).toBeLessThan(100);

    // Server-side sort by a header click (q descending on the second click), then back to file order.
    const qHeader = grid(page).getByRole('columnheader', { name: /^q \[fraction\]/ });
    const topByQ = (await pageApi<{ rows: Row[] }>(page, 'GET', `/batches/${batchId}/measurements?sort=q&order=desc&limit=1`)).body.rows[0];
    await qHeader.getByRole('button').click();
    await qHeader.getByRole('button').click();
    expect(await qHeader.getAttribute('aria-sort')).toBe('descending');
    await expect.poll(() => grid(page).locator('[role="rowgroup"] [role="row"][data-index="0"]').getAttribute('data-line')).toBe(String(topByQ.line));
    await qHeader.getByRole('button').click();
    expect(await qHeader.getAttribute('aria-sort')).toBe('none');
    await expect.poll(() => grid(page).locator('[role="rowgroup"] [role="row"][data-index="0"]').getAttribute('data-line')).toBe('2');
    // A star search on the server: the star of line 5, alone.
    const line5 = await rowAtLine(page, batchId, 5);
    const starName = (await pageApi<{ star: { name: string } }>(page, 'GET', `/stars/${line5.star_id}`)).body.star.name;
    await page.getByLabel('Search by star name or source_id').fill(starName);
    await expect.poll(() => grid(page).getAttribute('aria-rowcount')).toBe('2');
    expect(await grid(page).locator('[role="rowgroup"] [role="row"][data-line]').getAttribute('data-line')).toBe('5');
    await page.getByRole('button', { name: 'Clear filters' }).click();
    await expect.poll(() => grid(page).getAttribute('aria-rowcount')).toBe(String(7200 + 1));
    // Columns: hide one from the menu; widen another by dragging its edge.
    await page.getByRole('button', { name: /^Columns/ }).click();
    await page.getByRole('group', { name: 'Visible columns' }).getByLabel('RA [deg]').uncheck();
    await page.keyboard.press('Escape');
    expect(await cell(page, 2, 'ra_deg').count()).toBe(0);
    const starHeader = grid(page).locator('[role="columnheader"][data-col="star"]');
    const width0 = (await starHeader.boundingBox())!.width;
    const handle = (await grid(page).getByTestId('resize-star').boundingBox())!;
    await page.mouse.move(handle.x + handle.width / 2, handle.y + handle.height / 2);
    await page.mouse.down();
    await page.mouse.move(handle.x + 80, handle.y + handle.height / 2, { steps: 5 });
    await page.mouse.up();
    expect((await starHeader.boundingBox())!.width).toBeGreaterThan(width0 + 60);
    expect((await cell(page, 2, 'star').boundingBox())!.width).toBeCloseTo((await starHeader.boundingBox())!.width, 0);

    // Keyboard: a click opens the editor on the stored value; Escape closes it, leaving the cell active.
    await cell(page, 2, 'q').click();
    const editor = page.getByTestId('cell-editor');
    await editor.waitFor();
    expect(await editor.inputValue()).toBe(String(before.q));
    await page.keyboard.press('Escape');
    await editor.waitFor({ state: 'detached' });
    expect(await activeCell(page)).toEqual({ line: 2, col: 'q' });
    await page.keyboard.press('ArrowDown');
    expect(await activeCell(page)).toEqual({ line: 3, col: 'q' });
    await page.keyboard.press('ArrowRight');
    expect(await activeCell(page)).toEqual({ line: 3, col: 'q_err' });
    await page.keyboard.press('ArrowLeft');
    await page.keyboard.press('ArrowUp');
    expect(await activeCell(page)).toEqual({ line: 2, col: 'q' });
    // Enter edits; typing then Escape cancels: nothing is sent, nothing changes
    let patches = 0;
    page.on('request', (r) => {
      if (r.method() === 'PATCH') patches++;
    });
    await page.keyboard.press('Enter');
    await editor.waitFor();
    await page.keyboard.press('Control+A');
    await page.keyboard.type('0.5');
    await page.keyboard.press('Escape');
    await editor.waitFor({ state: 'detached' });
    expect(patches).toBe(0);
    expect(await cell(page, 2, 'q').getByTestId('cell-value').textContent()).toBe(before.q.toFixed(6));

    // A bad value: refused with its reason on the cell; the server keeps its value and version.
    await page.keyboard.press('Enter');
    await page.keyboard.press('Control+A');
    await page.keyboard.type('3');
    const refused = page.waitForResponse((r) => r.request().method() === 'PATCH');
    await page.keyboard.press('Enter');
    expect((await refused).status()).toBe(400);
    const problem = cell(page, 2, 'q').getByTestId('cell-problem');
    await problem.waitFor();
    const problemText = (await problem.textContent()) ?? '';
    expect(problemText).toContain('Line 2');
    expect(problemText).toContain('q [fraction]');
    expect(problemText).toContain('“3”');
    expect(problemText).toMatch(/expected a value ≤ 1/);
    expect(await cell(page, 2, 'q').getAttribute('data-cell-state')).toBe('refused');
    expect(await cell(page, 2, 'q').getByTestId('cell-value').textContent()).toBe(before.q.toFixed(6)); // rolled back
    const afterBad = await rowAtLine(page, batchId, 2);
    expect(afterBad.q).toBe(before.q);
    expect(afterBad.version).toBe(before.version);
    // Enter saved and moved down
    expect(await activeCell(page)).toEqual({ line: 3, col: 'q' });
    await page.screenshot({ path: path.join(SCREENSHOTS, 'review-table.png') });

    // A good value: saved, versioned, re-derived.
    await cell(page, 2, 'q').click();
    await editor.waitFor();
    await page.keyboard.press('Control+A');
    await page.keyboard.type('0.0123');
    const saved = page.waitForResponse((r) => r.request().method() === 'PATCH');
    await page.keyboard.press('Tab');
    expect((await saved).status()).toBe(200);
    expect(await activeCell(page)).toEqual({ line: 2, col: 'q_err' }); // Tab saved and moved right
    await page.keyboard.press('Shift+Tab');
    expect(await activeCell(page)).toEqual({ line: 2, col: 'q' });
    const afterGood = await rowAtLine(page, batchId, 2);
    expect(afterGood.q).toBe(0.0123);
    expect(afterGood.version).toBe(before.version + 1);
    expect(afterGood.p).toBeCloseTo(Math.hypot(0.0123, before.u), 12); // p = √(q² + u²) (common practice)
    await expect.poll(() => cell(page, 2, 'q').getByTestId('cell-value').textContent()).toBe('0.012300');
    expect(await cell(page, 2, 'p').getByTestId('cell-value').textContent()).toBe(Math.hypot(0.0123, before.u).toFixed(5));
    expect(await cell(page, 2, 'q').getByTestId('cell-problem').count()).toBe(0);

    // The history panel shows the edit; a second edit elsewhere is reverted from it.
    await cell(page, 2, 'history').getByRole('button', { name: 'History of line 2' }).click();
    const panel = page.getByTestId('history-panel');
    await panel.getByTestId('history-entry').first().waitFor();
    const entry = panel.getByTestId('history-entry').filter({ hasText: 'q [fraction]' });
    expect(await entry.textContent()).toContain(`${before.q} → 0.0123`);
    expect(await entry.textContent()).toContain('Cyril Curator');
    await panel.getByRole('button', { name: 'Close the history' }).click();

    const line3 = await rowAtLine(page, batchId, 3);
    await cell(page, 3, 'u').click();
    await page.keyboard.press('Control+A');
    await page.keyboard.type('0.0042');
    const saved3 = page.waitForResponse((r) => r.request().method() === 'PATCH');
    await page.keyboard.press('Enter');
    expect((await saved3).status()).toBe(200);
    expect((await rowAtLine(page, batchId, 3)).u).toBe(0.0042);
    await cell(page, 3, 'history').getByRole('button', { name: 'History of line 3' }).click();
    const reverted = page.waitForResponse((r) => r.request().method() === 'POST' && /\/api\/v1\/audit\/\d+\/revert$/.test(new URL(r.url()).pathname));
    await panel.getByRole('button', { name: 'Revert this change' }).click();
    expect((await reverted).status()).toBe(200);
    const line3After = await rowAtLine(page, batchId, 3);
    expect(line3After.u).toBe(line3.u);
    expect(line3After.version).toBe(line3.version + 2);
    await expect.poll(() => cell(page, 3, 'u').getByTestId('cell-value').textContent()).toBe(line3.u.toFixed(6));
    await expect.poll(() => panel.getByTestId('history-entry').count()).toBe(2);
    await panel.getByRole('button', { name: 'Close the history' }).click();

    // A derived value is not editable, and the grid says why.
    await cell(page, 4, 'p_debiased').click();
    expect(await editor.count()).toBe(0);
    expect(await page.getByTestId('grid-hint').textContent()).toContain('p debiased [fraction] is derived from the other values');

    // Someone else changes line 4 meanwhile: the edit is refused with the current value, which can be loaded.
    const line4 = await rowAtLine(page, batchId, 4);
    const elsewhere = await pageApi<{ measurement: Row }>(page, 'PATCH', `/measurements/${line4.id}`, { changes: { mjd: 61002.5 }, version: line4.version, reason: 'another curator' });
    expect(elsewhere.status).toBe(200);
    await cell(page, 4, 'mjd').click();
    await page.keyboard.press('Control+A');
    await page.keyboard.type('61003.25');
    const stale = page.waitForResponse((r) => r.request().method() === 'PATCH');
    await page.keyboard.press('Enter');
    expect((await stale).status()).toBe(409);
    const staleProblem = cell(page, 4, 'mjd').getByTestId('cell-problem');
    await staleProblem.waitFor();
    expect(await staleProblem.getAttribute('data-kind')).toBe('stale');
    expect(await staleProblem.textContent()).toContain('61002.50000');
    expect(await cell(page, 4, 'mjd').getByTestId('cell-value').textContent()).toBe(line4.mjd.toFixed(5)); // still the old cached value
    await staleProblem.getByRole('button', { name: 'Load the current values' }).click();
    await expect.poll(() => cell(page, 4, 'mjd').getByTestId('cell-value').textContent()).toBe('61002.50000');
    expect((await rowAtLine(page, batchId, 4)).mjd).toBe(61002.5);

    // The last row: Ctrl+End, the pages load as the grid scrolls, still only a window in the document.
    await grid(page).focus();
    await page.keyboard.press('Control+End');
    const last = grid(page).locator(`[role="row"][data-line="${fileRows + 1}"]`);
    await last.waitFor({ timeout: 45_000 });
    // in the grid's viewport, not merely in the document
    await expect
      .poll(async () => {
        const [r, g] = [await last.boundingBox(), await grid(page).boundingBox()];
        return !!r && !!g && r.y >= g.y && r.y + r.height <= g.y + g.height + 1;
      })
      .toBe(true);
    expect((await activeCell(page)).line).toBe(fileRows + 1);
    expect(await grid(page).locator('[role="rowgroup"] [role="row"]').count()).toBeLessThan(100);
    await expect.poll(() => page.getByTestId('grid-status').textContent()).toContain('7,200 of 7,200 measurements loaded');

    // The whole batch, approved with a note.
    await page.getByRole('button', { name: 'Approve batch…' }).click();
    const dialog = page.getByRole('dialog', { name: 'Approve this batch' });
    await dialog.waitFor();
    expect(await dialog.textContent()).toContain('7,200 pending measurements will become approved');
    const note = 'Checked in the table: one q corrected, line 4 epoch taken from the log.';
    await dialog.getByLabel('Note to the uploader').fill(note);
    const decided = page.waitForResponse((r) => r.request().method() === 'POST' && new URL(r.url()).pathname === `/api/v1/batches/${batchId}/approve`);
    await dialog.getByRole('button', { name: 'Approve batch' }).click();
    expect((await decided).status()).toBe(200);
    await expect.poll(() => page.getByTestId('decision-result').textContent()).toContain('7,200 measurements approved');
    await expect.poll(() => page.getByTestId('batch-state').getAttribute('data-state')).toBe('approved');
    await expect.poll(() => page.getByTestId('total-approved').textContent()).toBe('7,200');
    const batch = await pageApi<{ state: string }>(page, 'GET', `/batches/${batchId}`);
    expect(batch.body.state).toBe('approved');
    expect((await rowAtLine(page, batchId, 2)).state).toBe('approved');
    await ctx.close();

    // The observer sees the decision on their batch page, and may read the table but not edit it.
    await obs.page.goto(`${env.live.url}/batches/${batchId}`);
    await expect.poll(() => obs.page.getByTestId('batch-state').getAttribute('data-state')).toBe('approved');
    await obs.page.getByRole('link', { name: /Open the measurements table/ }).click();
    await obs.page.waitForURL(new RegExp(`/review/batches/${batchId}$`));
    await cell(obs.page, 2, 'q').waitFor();
    expect(await grid(obs.page).getAttribute('aria-readonly')).toBe('true');
    expect(await cell(obs.page, 2, 'q').getByTestId('cell-value').textContent()).toBe('0.012300');
    await cell(obs.page, 2, 'q').click();
    expect(await obs.page.getByTestId('cell-editor').count()).toBe(0);
    expect(await obs.page.getByRole('button', { name: 'Approve batch…' }).count()).toBe(0);
    await obs.ctx.close();

    // The admin finds the notice to the observer in the outbox (written just after the decision commits).
    const adm = await signIn(env.browser, env.live.url, 'admin');
    const subject = `Batch #${batchId} approved: ${NIGHT_V}`;
    const toObserver = async () => (await pageApi<{ messages: { to: string; subject: string }[] }>(adm.page, 'GET', '/admin/outbox?limit=500')).body.messages.filter((m) => m.to === 'observer@kestrel.example' && m.subject === subject);
    await expect.poll(async () => (await toObserver()).length, { timeout: 30_000 }).toBe(1);
    await adm.page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Outbox' }).click();
    await adm.page.waitForURL(/\/admin\/outbox$/);
    const message = adm.page.getByRole('list', { name: 'Messages' }).getByRole('button').filter({ hasText: subject });
    await message.waitFor();
    expect(await message.textContent()).toContain('to observer@kestrel.example');
    await message.click();
    expect(await adm.page.getByTestId('message-text').textContent()).toContain(note);
    await adm.ctx.close();
  });

  it('the catalog finds a star by source_id and by cone; its page plots every epoch and the combined value with its χ² flag', async () => {
    const { ctx, page } = await signIn(env.browser, env.live.url, 'curator');
    // The first star of the R night, observed again on two later nights with very different q.
    const rNight = (await pageApi<{ batches: { id: number; filename: string }[] }>(page, 'GET', '/review/queue?state=approved')).body.batches.find((b) => b.filename === 'kestrel-night-hawk-R.csv')!;
    const seeded = await rowAtLine(page, rNight.id, 2);
    const star = (await pageApi<{ star: { id: number; name: string; sourceId: string; ra_deg: number; dec_deg: number } }>(page, 'GET', `/stars/${seeded.star_id}`)).body.star;
    const header = 'name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,mjd,instrument';
    const repeats = [
      { q: 0.0061, u: -0.0162, q_err: 0.0008, u_err: 0.0009, mjd: 61041.3125 },
      { q: -0.0044, u: -0.0191, q_err: 0.0011, u_err: 0.001, mjd: 61077.221 },
    ];
    const lines = repeats.map((r) => [star.name, star.sourceId, star.ra_deg, star.dec_deg, 'R', r.q, r.u, r.q_err, r.u_err, r.mjd, 'KR-HAWK'].join(','));
    const sent = await page.request.post(`${env.live.url}/api/v1/batches`, { headers: { Origin: env.live.url }, multipart: { file: { name: 'kestrel-repeats.csv', mimeType: 'text/csv', buffer: Buffer.from([header, ...lines].join('\n')) } } });
    expect(sent.status()).toBe(201);
    const repeatBatch = ((await sent.json()) as { id: number }).id;
    expect((await pageApi(page, 'POST', `/batches/${repeatBatch}/approve`, { note: 'repeat nights' })).status).toBe(200);

    // Every measurement the curator may see (this night in R, the V night of the other test if it ran, the repeats).
    const detail = (await pageApi<{ measurements: StarMeasurement[] }>(page, 'GET', `/stars/${star.id}`)).body;
    const r = detail.measurements.filter((m) => m.band === 'R' && m.instrument === 'KR-HAWK' && m.state === 'approved');
    expect(r).toHaveLength(3);
    expect(r.map((m) => m.mjd).sort()).toEqual([seeded.mjd, ...repeats.map((x) => x.mjd)].sort());
    // Independent of the server: inverse-variance weighted means and χ² with 2(n−1) = 4 degrees of
    // freedom (METHODS.md); for even ν the tail is e^(−χ²/2) Σ_{k<ν/2} (χ²/2)^k / k! (common practice).
    const mean = (k: 'q' | 'u', e: 'q_err' | 'u_err') => r.reduce((s, m) => s + m[k] / m[e] ** 2, 0) / r.reduce((s, m) => s + 1 / m[e] ** 2, 0);
    const qBar = mean('q', 'q_err');
    const uBar = mean('u', 'u_err');
    const chi2 = r.reduce((s, m) => s + ((m.q - qBar) / m.q_err) ** 2 + ((m.u - uBar) / m.u_err) ** 2, 0);
    const tail = Math.exp(-chi2 / 2) * (1 + chi2 / 2);
    expect(tail).toBeLessThan(0.001); // the repeats were chosen to disagree

    // The catalog: search by the whole source_id (text, all 19 digits).
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Catalog' }).click();
    await page.waitForURL(/\/catalog$/);
    await page.getByRole('table', { name: 'Stars' }).locator('tbody tr').first().waitFor();
    const totalStars = (await pageApi<{ total: number }>(page, 'GET', '/stars?limit=1')).body.total;
    expect(await page.getByTestId('stars-range').textContent()).toContain(`of ${totalStars.toLocaleString('en')} stars`);
    // server-side sort: by parallax, descending, matches the API's first star
    await page.getByRole('columnheader', { name: /parallax \[mas\]/ }).getByRole('button').click();
    await page.getByRole('columnheader', { name: /parallax \[mas\]/ }).getByRole('button').click();
    await page.waitForURL(/sort=parallax_mas&order=desc/);
    const topByParallax = (await pageApi<{ stars: { id: number }[] }>(page, 'GET', '/stars?sort=parallax_mas&order=desc&limit=1')).body.stars[0];
    await expect.poll(() => page.getByRole('table', { name: 'Stars' }).locator('tbody tr').first().getAttribute('data-star-id')).toBe(String(topByParallax.id));

    await page.getByLabel('Name or source_id').fill(star.sourceId);
    await page.getByRole('button', { name: 'Search', exact: true }).click();
    const found = page.getByRole('table', { name: 'Stars' }).locator(`tbody tr[data-star-id="${star.id}"]`);
    await found.waitFor();
    expect(await page.getByRole('table', { name: 'Stars' }).locator('tbody tr').count()).toBe(1);
    expect(await found.textContent()).toContain(star.sourceId);

    // A cone search: refused with the field named, then around the star.
    await page.getByLabel('RA [deg]').fill(String(star.ra_deg));
    await page.getByLabel('Dec [deg]').fill(String(star.dec_deg));
    await page.getByLabel('Radius [deg]').fill('45');
    await page.getByRole('button', { name: 'Find stars' }).click();
    await expect.poll(() => page.getByRole('form', { name: 'Cone search' }).getByRole('alert').textContent()).toMatch(/Radius “45”: expected 0 < radius ≤ 30 \(deg\)/);
    await page.getByLabel('Radius [deg]').fill('0.2');
    await page.getByRole('button', { name: 'Find stars' }).click();
    const coneRows = page.getByRole('table', { name: 'Stars' }).locator('tbody tr');
    await expect.poll(() => coneRows.first().getAttribute('data-star-id')).toBe(String(star.id)); // nearest first
    const cone = (await pageApi<{ total: number }>(page, 'GET', `/stars?ra=${star.ra_deg}&dec=${star.dec_deg}&radius=0.2&limit=1`)).body.total;
    expect(cone).toBeGreaterThan(1);
    expect(await page.getByTestId('stars-range').textContent()).toContain(`of ${cone.toLocaleString('en')} stars`);
    expect(await page.getByRole('columnheader', { name: 'separation [deg]' }).count()).toBe(1);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'catalog.png'), fullPage: true });

    // The star page.
    await coneRows.first().getByRole('link', { name: star.name }).click();
    await page.waitForURL(new RegExp(`/catalog/stars/${star.id}$`));
    await page.getByTestId('star-name').waitFor();
    expect(await page.getByTestId('star-measurement').count()).toBe(detail.measurements.length);
    const combined = page.locator('[data-testid="combined-row"][data-band="R"][data-instrument="KR-HAWK"]');
    expect(await combined.getByTestId('combined-n').textContent()).toBe('3');
    expect(await combined.getByTestId('combined-q').textContent()).toContain(qBar.toFixed(6));
    expect(await combined.getByTestId('combined-u').textContent()).toContain(uBar.toFixed(6));
    expect(await combined.getByTestId('combined-chi2').textContent()).toBe(`${chi2.toFixed(2)} / 4`);
    expect(await combined.getByTestId('chi2-verdict').getAttribute('data-verdict')).toBe('inconsistent');

    // Both plots are SVG, with the units in their axis labels, and a point per measurement.
    // (Plot draws the legend swatches as small SVGs of their own; the chart is the one with axes.)
    const chart = (testId: string) => page.getByTestId(testId).locator('svg:has(g[aria-label="x-axis label"])');
    const axisLabel = (svg: Locator, axis: 'x' | 'y') => svg.locator(`g[aria-label="${axis}-axis label"]`).textContent();
    const qu = chart('plot-qu');
    await qu.waitFor();
    expect(await axisLabel(qu, 'x')).toBe('Stokes q [fraction]');
    expect(await axisLabel(qu, 'y')).toBe('Stokes u [fraction]');
    expect(await qu.textContent()).toContain('combined R · KR-HAWK');
    // a point and two error bars per measurement; the combined values are star symbols, not circles
    expect(await qu.locator('circle').count()).toBe(detail.measurements.length);
    const combinedValues = await page.getByTestId('combined-row').count();
    expect(await qu.locator('g[aria-label="link"] path').count()).toBe(2 * detail.measurements.length + 2 * combinedValues);
    const pEpoch = chart('plot-p-epoch');
    const thetaEpoch = chart('plot-theta-epoch');
    await pEpoch.waitFor();
    expect(await axisLabel(pEpoch, 'x')).toBe('epoch, MJD [d]');
    expect(await axisLabel(pEpoch, 'y')).toBe('p [fraction]');
    expect(await axisLabel(thetaEpoch, 'x')).toBe('epoch, MJD [d]');
    expect(await axisLabel(thetaEpoch, 'y')).toBe('θ [deg, east of north]');
    expect(await pEpoch.locator('circle').count()).toBe(detail.measurements.length);
    expect(await thetaEpoch.locator('circle').count()).toBe(detail.measurements.length);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'star-page.png'), fullPage: true });
    await ctx.close();
  });
});
