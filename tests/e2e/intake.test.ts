import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { DIST, launchBrowser, mustRunBrowserTests, pageApiGet, SCREENSHOTS, signInPage, useLiveBrowser } from '../helpers/browser.js';
import { DEMO, makeTestApp } from '../helpers/app.js';

const run = mustRunBrowserTests();

const MESSY = path.resolve('seeds/demo-batches/kestrel-night-messy.csv');
// The demo seed already holds this night in R; the same stars observed in V make a new batch.
const HAWK_R = path.resolve('seeds/demo-batches/kestrel-night-hawk-R.csv');

interface ApiBatch {
  id: number;
  state: string;
  counts: Record<string, number>;
  uploadedBy: { name: string };
}
interface ApiRow {
  line: number;
  state: string;
  errors: { column: string; field?: string; message: string }[];
}

const signIn = (browser: Browser, url: string, role: keyof typeof DEMO) => signInPage(browser, url, role, { width: 1280, height: 900 });

const navLinks = (page: Page) => page.getByRole('navigation', { name: 'Main' }).getByRole('link').allTextContents();

const figure = async (page: Page, key: string) => Number(((await page.getByTestId(`count-${key}`).textContent()) ?? '').replace(/,/g, ''));

describe.runIf(run)('CSV intake in a real browser', () => {
  const env = useLiveBrowser();
  let tmp: string;
  beforeAll(async () => {
    tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-intake-e2e-'));
  });
  afterAll(async () => {
    if (tmp) fs.rmSync(tmp, { recursive: true, force: true });
  });

  it('an observer uploads the messy night, settles the ambiguous RA column and reads the report', async () => {
    const { ctx, page } = await signIn(env.browser, env.live.url, 'observer');
    const links = await navLinks(page);
    expect(links).toContain('Upload');
    expect(links).toContain('My batches');
    expect(links).not.toContain('Batches');

    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Upload' }).click();
    await page.waitForURL(/\/upload$/);
    expect(await page.getByRole('link', { name: 'Download the template CSV' }).getAttribute('href')).toBe('/api/v1/intake/template.csv');
    expect(await page.getByRole('link', { name: 'Read the column guide' }).getAttribute('href')).toBe('/upload/columns');

    await page.getByLabel('CSV file').setInputFiles(MESSY);
    await expect.poll(() => page.getByTestId('chosen-file').textContent()).toContain('kestrel-night-messy.csv');
    await page.getByLabel('Instrument', { exact: true }).selectOption('KR-OWL');
    await page.screenshot({ path: path.join(SCREENSHOTS, 'upload.png'), fullPage: true });

    const answer = page.waitForResponse((r) => r.request().method() === 'POST' && new URL(r.url()).pathname === '/api/v1/batches');
    await page.getByRole('button', { name: 'Upload and check' }).click();
    const posted = await answer;
    // 201: a new batch; 200: these bytes were sent before (the demo seed sends this file too)
    expect([200, 201]).toContain(posted.status());
    await page.waitForURL(/\/batches\/\d+$/);
    const id = Number(new URL(page.url()).pathname.split('/').pop());
    expect(id).toBe(((await posted.json()) as ApiBatch).id);
    await page.getByTestId('batch-filename').waitFor();
    expect(await page.getByText('These exact bytes were uploaded before').count()).toBe(posted.status() === 200 ? 1 : 0);

    // The mapping editor: RAJ2000 and RA both mean ra_deg, so the server leaves it to the person.
    await expect.poll(() => page.getByTestId('batch-state').getAttribute('data-state')).toBe('needs_mapping');
    const raRow = page.getByTestId('map-row-ra_deg');
    expect(await raRow.getAttribute('data-ambiguous')).toBe('true');
    expect(await raRow.textContent()).toMatch(/Could be RAJ2000 or RA/);
    const raSelect = page.getByLabel('Header for ra_deg');
    expect(await raSelect.inputValue()).toBe('');
    // the proposal recognised the other messy headers by their synonyms
    expect(await page.getByLabel('Header for dec_deg').inputValue()).toBe('DEJ2000');
    expect(await page.getByLabel('Header for p_pct').inputValue()).toBe('P%');
    expect(await page.getByLabel('Header for theta_deg').inputValue()).toBe('PA');
    expect(await page.getByLabel('Header for parallax_mas').inputValue()).toBe('plx');
    expect(await page.getByLabel('Header for band').inputValue()).toBe('Filter');
    expect(await page.getByTestId('preview-canonical-RAJ2000').textContent()).toBe('not read');

    // Confirming without a right ascension is refused with the server's reason.
    await page.getByRole('button', { name: 'Confirm mapping and check rows' }).click();
    await expect.poll(() => page.getByTestId('mapping-error').textContent()).toMatch(/lacks: a position/);
    expect(await page.getByTestId('batch-state').getAttribute('data-state')).toBe('needs_mapping');

    await raSelect.selectOption('RAJ2000');
    expect(await page.getByTestId('preview-canonical-RAJ2000').textContent()).toBe('ra_deg');
    expect(await page.getByTestId('preview-canonical-RA').textContent()).toBe('not read');
    await page.getByLabel(/Save this mapping for KR-OWL/).check();
    await page.screenshot({ path: path.join(SCREENSHOTS, 'mapping.png'), fullPage: true });

    await page.getByRole('button', { name: 'Confirm mapping and check rows' }).click();
    await expect.poll(() => page.getByTestId('batch-state').getAttribute('data-state'), { timeout: 20_000 }).toBe('awaiting_review');

    // Every figure on the page is the server's.
    const batch = await pageApiGet<ApiBatch>(page, `/batches/${id}`);
    expect(batch.state).toBe('awaiting_review');
    for (const key of ['rows', 'accepted', 'rejected', 'duplicates', 'conflicts', 'ambiguous', 'newStars', 'matchedStars']) {
      expect(await figure(page, key), key).toBe(batch.counts[key]);
    }
    // 79 data lines in the file; the bad row is rejected and the repeated lines are duplicates
    const fileLines = fs.readFileSync(MESSY, 'utf8').split(/\r?\n/).filter((l) => l.trim() !== '');
    expect(batch.counts.rows).toBe(fileLines.length - 1);
    expect(batch.counts.rejected).toBeGreaterThanOrEqual(1);
    expect(batch.counts.duplicates).toBeGreaterThanOrEqual(1);

    // The rejected row, found in the file independently of the server, with its column named.
    const badLine = fileLines.findIndex((l) => l.startsWith('KRS J999999.9')) + 1;
    expect(badLine).toBeGreaterThan(1);
    const rejected = await pageApiGet<{ rows: ApiRow[] }>(page, `/batches/${id}/rows?state=rejected`);
    const bad = rejected.rows.find((r) => r.line === badLine);
    expect(bad, `line ${badLine} is rejected`).toBeDefined();
    expect(bad!.errors.length).toBeGreaterThan(0);
    const headers = fileLines[0].replace(/^\uFEFF/, '').split(',');
    const row = page.locator(`[role="row"][data-line="${badLine}"]`);
    await row.waitFor();
    const rowText = (await row.textContent()) ?? '';
    for (const e of bad!.errors) {
      expect(headers.concat('(row)')).toContain(e.column); // named by the file's own header
      expect(rowText).toContain(`${e.column}`);
      expect(rowText).toContain(e.message);
    }
    await page.screenshot({ path: path.join(SCREENSHOTS, 'batch-report.png'), fullPage: true });

    // The "All rows" tab holds every row the server counted.
    await page.getByRole('tab', { name: /All rows/ }).click();
    await expect.poll(() => page.getByText(/rows loaded/).textContent()).toMatch(new RegExp(`of ${batch.counts.rows} rows loaded`));

    // The batch is in the observer's own list.
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'My batches' }).click();
    await page.getByRole('heading', { name: 'My batches' }).waitFor();
    await page.getByRole('link', { name: 'kestrel-night-messy.csv' }).waitFor();
    await ctx.close();

    // A curator's navigation differs: all batches, with the sender's name.
    const cur = await signIn(env.browser, env.live.url, 'curator');
    const curatorLinks = await navLinks(cur.page);
    expect(curatorLinks).toContain('Batches');
    expect(curatorLinks).not.toContain('My batches');
    expect(curatorLinks).not.toEqual(links);
    await cur.page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Batches' }).click();
    await cur.page.getByRole('heading', { name: 'Batches' }).waitFor();
    const listed = cur.page.getByRole('row').filter({ hasText: 'kestrel-night-messy.csv' });
    expect(await listed.textContent()).toContain(batch.uploadedBy.name);
    await cur.page.screenshot({ path: path.join(SCREENSHOTS, 'batches-curator.png') });
    await cur.ctx.close();

    // A modeler sees neither page.
    const mod = await signIn(env.browser, env.live.url, 'modeler');
    const modelerLinks = await navLinks(mod.page);
    expect(modelerLinks).not.toContain('Upload');
    expect(modelerLinks).not.toContain('Batches');
    expect(modelerLinks).not.toContain('My batches');
    await mod.ctx.close();
  });

  it('shows the server’s reason when a file is refused', async () => {
    const { ctx, page } = await signIn(env.browser, env.live.url, 'observer');
    await page.goto(`${env.live.url}/upload`);
    const headerOnly = path.join(tmp, 'header-only.csv');
    fs.writeFileSync(headerOnly, 'name,ra_deg,dec_deg,band,q,u,q_err,u_err\n');
    await page.getByLabel('CSV file').setInputFiles(headerOnly);
    await page.getByRole('button', { name: 'Upload and check' }).click();
    await expect.poll(() => page.getByTestId('upload-error').textContent()).toMatch(/^The file has a header line but no data rows/);
    expect(page.url()).toMatch(/\/upload$/);

    const binary = path.join(tmp, 'night.csv');
    fs.writeFileSync(binary, Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x00, 0x00, 0x08, 0x00]));
    await page.getByLabel('CSV file').setInputFiles(binary);
    await page.getByRole('button', { name: 'Upload and check' }).click();
    await expect.poll(() => page.getByTestId('upload-error').textContent()).toMatch(/not a CSV text file/);
    await ctx.close();
  });

  it('the column guide lists the server’s columns and their synonyms', async () => {
    const { ctx, page } = await signIn(env.browser, env.live.url, 'observer');
    await page.goto(`${env.live.url}/upload/columns`);
    const cols = await pageApiGet<{ columns: { name: string; synonyms: string[] }[] }>(page, '/intake/columns');
    const table = page.getByRole('table', { name: 'Columns Starveil reads' });
    await table.waitFor();
    expect(await table.locator('tbody tr').count()).toBe(cols.columns.length);
    const ra = table.locator('tbody tr').filter({ has: page.locator('code', { hasText: /^ra_deg$/ }) });
    for (const s of cols.columns.find((c) => c.name === 'ra_deg')!.synonyms) expect(await ra.textContent()).toContain(s);
    expect(await page.getByTestId('conventions').textContent()).toMatch(/north through east/);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'column-guide.png'), fullPage: true });
    await ctx.close();
  });
});

describe.runIf(run)('a large batch checked in the background', () => {
  let browser: Browser;
  let server: Server;
  let url: string;
  let close: () => Promise<void>;
  let tmp: string;
  beforeAll(async () => {
    tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'starveil-intake-e2e-'));
    // every upload is checked after the request returns, so the page must follow the progress
    const t = await makeTestApp({ distDir: DIST, intake: { crossmatchArcsec: 1, mjdToleranceDays: 0.001, syncBytes: 0 } });
    server = await new Promise((resolve) => {
      const s = t.app.listen(0, '127.0.0.1', () => resolve(s));
    });
    url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    close = async () => {
      await new Promise((r) => server.close(r));
      await t.close();
    };
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await close?.();
    if (tmp) fs.rmSync(tmp, { recursive: true, force: true });
  });

  it('shows the bytes sent, polls while the server checks, then opens the batch', async () => {
    const { ctx, page } = await signIn(browser, url, 'observer');
    await page.goto(`${url}/upload`);
    const polls: string[] = [];
    page.on('request', (r) => {
      if (r.method() === 'GET' && /\/api\/v1\/batches\/\d+$/.test(new URL(r.url()).pathname)) polls.push(r.url());
    });
    // slow the upload down so the bar is seen moving (CDP network emulation, bytes per second)
    const cdp = await ctx.newCDPSession(page);
    await cdp.send('Network.enable');
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: 600 * 1024 });

    const large = path.join(tmp, 'kestrel-night-hawk-V.csv');
    fs.writeFileSync(large, fs.readFileSync(HAWK_R, 'utf8').replace(/,R,/g, ',V,'));
    await page.getByLabel('CSV file').setInputFiles(large);
    const answer = page.waitForResponse((r) => r.request().method() === 'POST' && new URL(r.url()).pathname === '/api/v1/batches');
    await page.getByRole('button', { name: 'Upload and check' }).click();
    const bar = page.getByRole('progressbar', { name: 'Sending the file' });
    await bar.waitFor();
    await expect.poll(async () => Number(await bar.getAttribute('aria-valuenow')), { timeout: 30_000 }).toBeGreaterThan(0);
    const created = (await (await answer).json()) as ApiBatch;
    expect(created.state).toBe('checking');
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: -1 });

    await page.waitForURL(new RegExp(`/batches/${created.id}$`), { timeout: 30_000 });
    expect(polls.length).toBeGreaterThan(0); // the page asked for progress before leaving
    await expect.poll(() => page.getByTestId('batch-state').getAttribute('data-state')).toBe('awaiting_review');
    const batch = await pageApiGet<ApiBatch>(page, `/batches/${created.id}`);
    const lines = fs.readFileSync(large, 'utf8').split(/\r?\n/).filter((l) => l.trim() !== '').length - 1;
    expect(batch.counts.rows).toBe(lines);
    expect(await figure(page, 'rows')).toBe(lines);
    expect(await figure(page, 'accepted')).toBe(batch.counts.accepted);

    // thousands of rows, but only a window of them is in the document
    await page.getByRole('tab', { name: /All rows/ }).click();
    const scroller = page.getByTestId('rows-scroller');
    await scroller.locator('[role="row"][data-line="2"]').waitFor();
    const rendered = await scroller.locator('[role="rowgroup"] [role="row"]').count();
    expect(rendered).toBeLessThan(100);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'batch-rows-large.png') });
    const loaded = async () => Number(((await page.getByText(/rows loaded/).textContent()) ?? '').split(' of ')[0].replace(/,/g, ''));
    expect(await loaded()).toBe(500); // the first page
    await scroller.evaluate((el) => el.scrollTo({ top: el.scrollHeight }));
    await expect.poll(loaded, { timeout: 30_000 }).toBeGreaterThan(500); // the next page, asked for by scrolling
    await ctx.close();
  });
  it('the upload page shows the rows checked moving while a large night is checked', async () => {
    const { ctx, page } = await signIn(browser, url, 'observer');
    const big = path.join(tmp, 'progress-night.csv');
    const lines = ['name,source_id,ra_deg,dec_deg,band,q,u,q_err,u_err,parallax_mas,parallax_err_mas,mjd,instrument'];
    const n = 60_000;
    for (let i = 0; i < n; i++) lines.push(`Progress star ${i},,${(150 + (i % 400) * 0.05).toFixed(5)},${(-60 + Math.floor(i / 400) * 0.05).toFixed(5)},V,0.0100,0.0020,0.0005,0.0005,2.0,0.05,61500.5,KR-HAWK`);
    fs.writeFileSync(big, lines.join('\n') + '\n');
    await page.goto(`${url}/upload`);
    await page.getByLabel('CSV file').setInputFiles(big);
    await page.getByRole('button', { name: 'Upload and check' }).click();
    // the upload page follows the check (rows checked of rows in the file), then opens the batch
    const seen = new Set<number>();
    let shot = false;
    await expect
      .poll(
        async () => {
          if (/\/batches\/\d+$/.test(new URL(page.url()).pathname)) return page.getByTestId('batch-state').getAttribute('data-state', { timeout: 1000 }).catch(() => null);
          const v = Number((await page.getByTestId('rows-done').textContent({ timeout: 500 }).catch(() => '')) || NaN);
          if (Number.isFinite(v)) seen.add(v);
          if (!shot && v > 0) {
            shot = true;
            await page.screenshot({ path: path.join(SCREENSHOTS, 'upload-checking-progress.png') });
          }
          return 'checking';
        },
        { timeout: 170_000, interval: 250 },
      )
      .toBe('awaiting_review');
    // at least two different figures while it was checked: the number moved
    expect([...seen].filter((v) => v > 0).length, `rows done seen: ${[...seen].join(', ')}`).toBeGreaterThanOrEqual(1);
    expect(seen.size).toBeGreaterThanOrEqual(2);
    expect(await figure(page, 'rows')).toBe(n);
    await ctx.close();
  });
});
