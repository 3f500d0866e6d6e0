import fs from 'node:fs';
import path from 'node:path';
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { afterAll, beforeAll, expect, vi } from 'vitest';
import { DEMO } from './app.js';
import { DEMO_PASSWORD } from '../../server/auth/passwords.js';
import { makeTestApp, type TestApp } from './app.js';

/**
 * Timeouts for browser tests, sized for a loaded 2-core machine (a seeded server, a tomography
 * run and Chromium sharing two cores with other work): every file that imports this helper gets
 * them (vi.setConfig applies to the importing test file). Tests wait on conditions (expect.poll,
 * locator.waitFor), never on fixed sleeps; these limits only bound how long a stuck test hangs.
 */
export const E2E_TEST_TIMEOUT_MS = 180_000;
export const E2E_HOOK_TIMEOUT_MS = 300_000;
/** Playwright's own waits (locators, navigation): its default of 30 s is too tight under load. */
export const E2E_ACTION_TIMEOUT_MS = 60_000;
vi.setConfig({ testTimeout: E2E_TEST_TIMEOUT_MS, hookTimeout: E2E_HOOK_TIMEOUT_MS });

export const CHROMIUM = process.env.STARVEIL_CHROMIUM ?? '/usr/bin/chromium';
/** the built client; STARVEIL_TEST_DIST lets parallel work build to a folder of its own */
export const DIST = path.resolve(process.env.STARVEIL_TEST_DIST ?? 'dist');

/** Browser tests need Debian's chromium and the built client; under CI=true their absence is a failure. */
export function browserAvailable(): { ok: boolean; why?: string } {
  if (!fs.existsSync(CHROMIUM)) return { ok: false, why: `no browser at ${CHROMIUM} (apt-get install -y chromium)` };
  if (!fs.existsSync(path.join(DIST, 'index.html'))) return { ok: false, why: 'no built client in dist/ (npm run build)' };
  return { ok: true };
}

export function mustRunBrowserTests(): boolean {
  const a = browserAvailable();
  if (!a.ok && process.env.CI === 'true') throw new Error(`Browser tests cannot run under CI: ${a.why}`);
  if (!a.ok) console.warn(`skipping browser tests: ${a.why}`);
  return a.ok;
}

export async function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--disable-quic', '--no-first-run'],
  });
}

export interface LiveServer {
  t: TestApp;
  url: string;
  close: () => Promise<void>;
}

/**
 * The built client and the API on a free port, with a fresh demo database.
 * `tomography: true` lets the seed run the demo tomography too (a finished run for the sky map).
 */
export async function startLiveServer(opts: { tomography?: boolean } = {}): Promise<LiveServer> {
  const t = await makeTestApp({ distDir: DIST }, { tomography: opts.tomography ?? false });
  const server: Server = await new Promise((resolve) => {
    const s = t.app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const { port } = server.address() as AddressInfo;
  return {
    t,
    url: `http://127.0.0.1:${port}`,
    close: async () => {
      await new Promise((r) => server.close(r));
      await t.close();
    },
  };
}

export const SCREENSHOTS = path.resolve('tests/e2e/screenshots');

export interface LiveBrowser {
  readonly live: LiveServer;
  readonly browser: Browser;
}

/**
 * For the describe block it is called in: a live server (startLiveServer options) and a browser,
 * started before its tests (with the screenshots folder) and closed after them; `beforeClose`
 * runs between closing the browser and the server. Read `live` and `browser` inside the tests.
 */
export function useLiveBrowser(opts: { tomography?: boolean; startTimeoutMs?: number; beforeClose?: (live: LiveServer) => Promise<void> } = {}): LiveBrowser {
  let live: LiveServer | undefined;
  let browser: Browser | undefined;
  beforeAll(async () => {
    live = await startLiveServer({ tomography: opts.tomography });
    browser = await launchBrowser();
    fs.mkdirSync(SCREENSHOTS, { recursive: true });
  }, opts.startTimeoutMs);
  afterAll(async () => {
    await browser?.close();
    if (live) await opts.beforeClose?.(live);
    await live?.close();
  });
  return {
    get live() {
      return live!;
    },
    get browser() {
      return browser!;
    },
  };
}

/** Fills the sign-in form on the page and sends it. */
export async function fillSignIn(page: Page, email: string, password: string): Promise<void> {
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

/** Signs in as a demo role on the sign-in form the page shows, and checks the header names the role. */
export async function signInAs(page: Page, role: keyof typeof DEMO): Promise<void> {
  await fillSignIn(page, DEMO[role], DEMO_PASSWORD);
  await page.getByTestId('role-badge').waitFor();
  expect(await page.getByTestId('role-badge').textContent()).toBe(role);
}

/** A fresh browser context signed in through the sign-in page as a demo role. */
export async function signInPage(browser: Browser, url: string, role: keyof typeof DEMO, viewport = { width: 1280, height: 900 }): Promise<{ ctx: BrowserContext; page: Page }> {
  const ctx = await browser.newContext({ viewport });
  ctx.setDefaultTimeout(E2E_ACTION_TIMEOUT_MS);
  ctx.setDefaultNavigationTimeout(E2E_ACTION_TIMEOUT_MS);
  const page = await ctx.newPage();
  await page.goto(`${url}/sign-in`);
  await signInAs(page, role);
  return { ctx, page };
}

/** Calls the API with the page's own session cookie: the status and the parsed body (null when empty). */
export function pageApi<T>(page: Page, method: string, p: string, body?: unknown): Promise<{ status: number; body: T }> {
  return page.evaluate(
    async ([m, u, b]) => {
      const res = await fetch(`/api/v1${u}`, { method: m as string, credentials: 'same-origin', headers: b === undefined ? undefined : { 'Content-Type': 'application/json' }, body: b === undefined ? undefined : JSON.stringify(b) });
      const text = await res.text();
      return { status: res.status, body: text ? JSON.parse(text) : null };
    },
    [method, p, body] as const,
  ) as Promise<{ status: number; body: T }>;
}

/** GETs an API path with the page's own session cookie; throws on an error answer. */
export function pageApiGet<T>(page: Page, p: string): Promise<T> {
  return page.evaluate(async (u) => {
    const res = await fetch(`/api/v1${u}`, { credentials: 'same-origin' });
    if (!res.ok) throw new Error(`${u}: ${res.status} ${await res.text()}`);
    return res.json();
  }, p) as Promise<T>;
}
