import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { fillSignIn, mustRunBrowserTests, SCREENSHOTS, signInAs, useLiveBrowser } from '../helpers/browser.js';
import { DEMO } from '../helpers/app.js';

const run = mustRunBrowserTests();

describe.runIf(run)('sign-in in a real browser', () => {
  const env = useLiveBrowser();

  async function navFor(role: keyof typeof DEMO) {
    const ctx = await env.browser.newContext({ viewport: { width: 1280, height: 800 } });
    const page = await ctx.newPage();
    await page.goto(`${env.live.url}/`);
    await page.waitForURL(/\/sign-in$/);
    await signInAs(page, role);
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
    const ctx = await env.browser.newContext();
    const page = await ctx.newPage();
    await page.goto(`${env.live.url}/sign-in`);
    await fillSignIn(page, DEMO.curator, 'not-the-password');
    await expect.poll(() => page.getByRole('alert').textContent()).toMatch(/not right/);
    expect(page.url()).toMatch(/\/sign-in$/);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'sign-in-refused.png') });
    await ctx.close();
  });
});
