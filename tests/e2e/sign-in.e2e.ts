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

  it('a wrong password shows the server\'s message', async () => {
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
});
