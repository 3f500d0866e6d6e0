import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { fillSignIn, mustRunBrowserTests, SCREENSHOTS, useLiveBrowser } from '../helpers/browser.js';
import { DEMO } from '../helpers/app.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';

const run = mustRunBrowserTests();

describe.runIf(run)('password reset and the outbox in a real browser', () => {
  const env = useLiveBrowser({ beforeClose: (live) => live.t.app.services.mail.idle() });

  it('asks for a link from the sign-in page, sets a new password once, and the admin reads the message', async () => {
    const ctx = await env.browser.newContext({ viewport: { width: 1280, height: 800 } });
    const page = await ctx.newPage();
    await page.goto(`${env.live.url}/sign-in`);
    await page.getByRole('link', { name: 'Forgot your password?' }).click();
    await page.waitForURL(/\/forgot-password$/);
    await page.getByLabel('E-mail').fill(DEMO.observer);
    await page.getByRole('button', { name: 'Send the link' }).click();
    await expect.poll(() => page.getByRole('status').textContent()).toMatch(/on its way/);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'reset-requested.png') });

    await env.live.t.app.services.mail.idle();
    const message = await env.live.t.db('outbox').where({ to_address: DEMO.observer }).orderBy('id', 'desc').first();
    const link = new URL(message.text_body.match(/(https?:\/\/\S+\/reset-password\?token=[A-Za-z0-9_-]+)/)[1]);
    const resetPath = `${link.pathname}${link.search}`;

    await page.goto(`${env.live.url}${resetPath}`);
    await page.getByLabel('New password').fill('observer-new-pass');
    await page.getByLabel('The same again').fill('observer-new-pass');
    await page.getByRole('button', { name: 'Set the new password' }).click();
    await page.getByText('Your password has been changed').waitFor();

    await page.goto(`${env.live.url}${resetPath}`);
    await page.getByLabel('New password').fill('observer-other-pass');
    await page.getByLabel('The same again').fill('observer-other-pass');
    await page.getByRole('button', { name: 'Set the new password' }).click();
    await expect.poll(() => page.getByRole('alert').textContent()).toMatch(/already been used/);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'reset-link-used.png') });

    await page.goto(`${env.live.url}/sign-in`);
    await fillSignIn(page, DEMO.admin, DEMO_PASSWORD);
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Outbox' }).click();
    await page.getByRole('list', { name: 'Messages' }).getByRole('button', { name: /Reset your Starveil password/ }).click();
    await expect.poll(() => page.getByTestId('message-text').textContent()).toContain(resetPath);
    await page.screenshot({ path: path.join(SCREENSHOTS, 'outbox.png') });
    await ctx.close();
  });
});
