import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchBrowser, mustRunBrowserTests, SCREENSHOTS, startLiveServer, type LiveServer } from '../helpers/browser.js';
import { DEMO } from '../helpers/app.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';

const run = mustRunBrowserTests();

describe.runIf(run)('sign-in in a real browser', () => {
  let live: LiveServer;
  let browser: Browser;
  beforeAll(async () => {
    live = await startLiveServer();
    browser = await launchBrowser();
    fs.mkdirSync(SCREENSHOTS, { recursive: true });
  });
  afterAll(async () => {
    await browser?.close();
    await live?.close();
  });

  async function navFor(role: keyof typeof DEMO) {
    const ctx = await browser.newContext({ viewport: { width: 1280, height: 800 } });
    const page = await ctx.newPage();
    await page.goto(`${live.url}/`);
    await page.waitForURL(/\/sign-in$/);
    await page.getByLabel('E-mail').fill(DEMO[role]);
    await page.getByLabel('Password').fill(DEMO_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByTestId('role-badge').waitFor();
    expect(await page.getByTestId('role-badge').textContent()).toBe(role);
    await page.getByTestId('star-count').waitFor();
    const links = await page.getByRole('navigation', { name: 'Main' }).getByRole('link').allTextContents();
    await page.screenshot({ path: path.join(SCREENSHOTS, `overview-${role}.png`) });
    await ctx.close();
    return links;
  }

  it('shows a different navigation to a curator, an observer and an admin', async () => {
    const curator = await navFor('curator');
    const observer = await navFor('observer');
    const admin = await navFor('admin');
    expect(curator).toContain('Overview');
    expect(observer).toContain('Overview');
    expect(observer).not.toContain('People');
    expect(admin).toContain('People');
    expect(admin).not.toEqual(observer);
    expect(curator).not.toEqual(observer);
  });

  it('a wrong password shows a message and stays on the sign-in page', async () => {
    const ctx = await browser.newContext();
    const page = await ctx.newPage();
    await page.goto(`${live.url}/sign-in`);
    await page.getByLabel('E-mail').fill(DEMO.curator);
    await page.getByLabel('Password').fill('not-the-password');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await expect.poll(() => page.getByRole('alert').textContent()).toMatch(/not right/);
    expect(page.url()).toMatch(/\/sign-in$/);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'sign-in-refused.png') });
    await ctx.close();
  });
});
