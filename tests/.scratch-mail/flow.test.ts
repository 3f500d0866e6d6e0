import { it, expect } from 'vitest';
import type { AddressInfo } from 'node:net';
import { makeTestApp, DEMO } from '../helpers/app.js';
import { launchBrowser } from '../helpers/browser.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';

it('reset flow in the browser', async () => {
  const t = await makeTestApp({ distDir: '/tmp/sv-dist' });
  const server = await new Promise<any>((r) => { const s = t.app.listen(0, '127.0.0.1', () => r(s)); });
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const browser = await launchBrowser();
  try {
    const page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
    await page.goto(`${url}/sign-in`);
    await page.getByRole('link', { name: 'Forgot your password?' }).click();
    await page.waitForURL(/forgot-password/);
    await page.getByLabel('E-mail').fill(DEMO.observer);
    await page.screenshot({ path: '/tmp/sv-shots/1-request.png' });
    await page.getByRole('button', { name: 'Send the link' }).click();
    await page.getByRole('status').waitFor();
    await page.screenshot({ path: '/tmp/sv-shots/2-requested.png' });
    await t.app.services.mail.idle();
    const row = await t.db('outbox').where({ to_address: DEMO.observer }).first();
    const link = row.text_body.match(/(http\S+reset-password\?token=\S+)/)[1];
    const path = new URL(link).pathname + new URL(link).search;
    await page.goto(`${url}${path}`);
    await page.getByLabel('New password').fill('observer-new-pass');
    await page.getByLabel('The same again').fill('observer-new-pass');
    await page.getByRole('button', { name: 'Set the new password' }).click();
    await page.getByText('Your password has been changed').waitFor();
    await page.screenshot({ path: '/tmp/sv-shots/3-done.png' });
    // again: refused
    await page.goto(`${url}${path}`);
    await page.getByLabel('New password').fill('observer-other-pass');
    await page.getByLabel('The same again').fill('observer-other-pass');
    await page.getByRole('button', { name: 'Set the new password' }).click();
    await page.getByRole('alert').waitFor();
    await page.screenshot({ path: '/tmp/sv-shots/4-used.png' });
    // admin outbox
    await page.goto(`${url}/sign-in`);
    await page.getByLabel('E-mail').fill(DEMO.admin);
    await page.getByLabel('Password').fill(DEMO_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('link', { name: 'Outbox' }).click();
    await page.getByRole('list', { name: 'Messages' }).waitFor();
    await page.getByRole('button', { name: /Reset your Starveil password/ }).click();
    await page.getByTestId('message-text').waitFor();
    expect(await page.getByTestId('message-text').textContent()).toContain('reset-password?token=');
    await page.screenshot({ path: '/tmp/sv-shots/5-outbox.png', fullPage: true });
  } finally {
    await browser.close();
    await new Promise((r) => server.close(r));
    await t.close();
  }
}, 60_000);
