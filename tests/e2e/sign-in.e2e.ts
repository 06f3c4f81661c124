import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { launchBrowser, screenshot, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
let browser: Browser;
let page: Page;

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
});
afterAll(async () => browser?.close());

describe('sign-in and dashboard in a real browser', () => {
  it('shows the sign-in page with its fonts and icons loaded', async () => {
    await page.goto(`${baseUrl}/sign-in`);
    await expect.poll(() => page.getByRole('button', { name: /sign in/i }).isVisible()).toBe(true);
    // Fonts come from the app's own bundle: both faces must be loaded, not fallbacks.
    await page.evaluate(() => document.fonts.ready);
    const fonts = await page.evaluate(() => [...document.fonts].filter((f) => f.status === 'loaded').map((f) => f.family.replace(/"/g, '')));
    expect(fonts.some((f) => /roboto/i.test(f))).toBe(true);
    await screenshot(page, 'sign-in');
  });

  it("a wrong password shows the server's message", async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example', 'not-the-password');
    await expect.poll(() => page.getByText('E-mail or password is wrong.').isVisible(), { timeout: 10_000 }).toBe(true);
  });

  it('the demo designer signs in and reaches the dashboard of the demo lab', async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example');
    await page.waitForURL(/\/g\/harrow-lake/, { timeout: 15_000 });
    await expect.poll(() => page.getByText('Harrow Lake Mesoscopics Lab').first().isVisible(), { timeout: 10_000 }).toBe(true);
    // The members panel has loaded (the admin of the demo lab is listed).
    await expect.poll(() => page.getByText('Ada Marlow').first().isVisible(), { timeout: 10_000 }).toBe(true);
    await page.evaluate(() => document.fonts.ready);
    const iconFont = await page.evaluate(() => [...document.fonts].some((f) => /material symbols/i.test(f.family) && f.status === 'loaded'));
    expect(iconFont).toBe(true);
    await screenshot(page, 'dashboard');
  });

  it('the account page lists the failed attempt and the sign-in; the menu has no outbox for a designer; sign-out ends the session', async () => {
    await page.getByRole('button', { name: /account of devi okafor/i }).click();
    await expect.poll(() => page.getByRole('menuitem', { name: 'Account activity' }).isVisible(), { timeout: 10_000 }).toBe(true);
    expect(await page.getByRole('menuitem', { name: 'Mail outbox' }).count()).toBe(0);
    await page.getByRole('menuitem', { name: 'Account activity' }).click();
    await page.waitForURL(/\/account$/, { timeout: 10_000 });
    await expect.poll(() => page.getByText('Failed sign-in: wrong password').first().isVisible(), { timeout: 10_000 }).toBe(true);
    await expect.poll(() => page.getByText('Signed in', { exact: true }).first().isVisible()).toBe(true);
    await screenshot(page, 'account-activity');

    await page.getByRole('button', { name: /account of devi okafor/i }).click();
    await page.getByRole('menuitem', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in/, { timeout: 10_000 });
    const status = await page.evaluate(async () => (await fetch('/api/auth/session')).status);
    expect(status).toBe(401);
  });
});
