// The daily job in a real browser: the demo designer draws a stadium dot, launches a
// pole search, watches it run, and opens a resonance with its mode image in the
// catalogue; the demo viewer can browse the same things but gets no controls.
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { launchBrowser, screenshot, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
let browser: Browser;
let page: Page;
let modelUrl = '';
let resonanceUrl = '';

// A GaAs stadium (a = 5 nm: straight part 100 nm, radius 50 nm) with 30 nm lead stubs,
// small enough for a quick search; the stubs let 8-site leads meet the cavity.
const stadium = {
  kind: 'union',
  of: [
    { kind: 'stadium', cx: 125, cy: 50, length: 100, radius: 50 },
    { kind: 'rectangle', x0: 0, y0: 30, width: 40, height: 40 },
    { kind: 'rectangle', x0: 210, y0: 30, width: 45, height: 40 },
  ],
};

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1366, height: 900 } });
});
afterAll(async () => browser?.close());

async function fill(label: string | RegExp, value: string | number) {
  const input = page.getByLabel(label, { exact: typeof label === 'string' }).first();
  await input.fill(String(value));
}

describe('a pole search from the editor to the catalogue', () => {
  it('the designer defines a stadium model and sees its drawing', async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example');
    await page.waitForURL(/\/g\/harrow-lake/);
    await page.goto(`${baseUrl}/g/harrow-lake/models/new`);
    await fill('Name', 'E2E stadium dot');
    await fill('Spacing a (nm)', 5);
    await fill('Columns Nx', 51);
    await fill('Rows Ny', 21);
    // The stadium with its stubs goes in through the JSON view, which shows the whole document.
    await page.locator('[data-test="view-json"] button').click();
    const box = page.locator('[data-field="document.json"]');
    const doc = JSON.parse(await box.inputValue()) as Record<string, unknown>;
    await box.fill(JSON.stringify({ ...doc, shape: stadium }, null, 2));
    await page.locator('[data-test="view-form"] button').click();
    const starts = page.getByLabel('First mouth site');
    const widths = page.getByLabel('Width (sites)');
    for (const k of [0, 1]) {
      await starts.nth(k).fill('7');
      await widths.nth(k).fill('7');
    }
    // The live drawing and the derived figures (t of GaAs at a = 5 nm is about 22.7 meV).
    await expect
      .poll(
        () =>
          page
            .getByText(/cavity sites/i)
            .first()
            .isVisible(),
        { timeout: 15_000 },
      )
      .toBe(true);
    await expect
      .poll(
        () =>
          page
            .getByText(/22\.7\d? meV/)
            .first()
            .isVisible(),
        { timeout: 15_000 },
      )
      .toBe(true);
    expect(await page.locator('svg').filter({ hasText: /nm/ }).count()).toBeGreaterThan(0);
    await screenshot(page, 'model-editor-stadium');
    await page.locator('[data-test="save"]').click();
    await page.waitForURL(/\/models\/[0-9a-f-]{36}/, { timeout: 15_000 });
    modelUrl = page.url();
  });

  it('launches a pole search after seeing its estimate, watches it run and reads the certificate', async () => {
    await page.getByRole('link', { name: /launch a run/i }).click();
    await page.waitForURL(/\/runs\/new/);
    await fill('E min (meV)', 3);
    await fill('E max (meV)', 6);
    await fill('Largest width Γ (meV)', 1);
    await expect
      .poll(
        () =>
          page
            .getByText(/pieces?/i)
            .first()
            .isVisible(),
        { timeout: 20_000 },
      )
      .toBe(true);
    await screenshot(page, 'run-launcher');
    await page.locator('[data-test="launch"]').click();
    await page.waitForURL(/\/runs\/[0-9a-f-]{36}/, { timeout: 15_000 });
    // Progress shows while it runs (the bar or the stage), then the certificate.
    const sawProgress = await page
      .locator('mat-progress-bar')
      .first()
      .waitFor({ timeout: 20_000 })
      .then(
        () => true,
        () => false,
      );
    const certificate = page.locator('[data-test="certificate"]');
    await certificate.waitFor({ timeout: 150_000 });
    expect(sawProgress || (await certificate.isVisible())).toBe(true);
    expect(await certificate.textContent()).toMatch(/certified/i);
    await screenshot(page, 'run-result');
  });

  it('opens one of the poles with its mode image', async () => {
    const firstPole = page.locator('a[href*="/catalogue/resonances/"]').first();
    await firstPole.waitFor({ timeout: 10_000 });
    await firstPole.click();
    await page.waitForURL(/\/catalogue\/resonances\//);
    resonanceUrl = page.url();
    const img = page.locator('img[alt^="Mode image"]');
    await img.waitFor({ timeout: 15_000 });
    await expect.poll(() => img.evaluate((el: HTMLImageElement) => el.complete && el.naturalWidth > 0), { timeout: 15_000 }).toBe(true);
    await expect
      .poll(() =>
        page
          .getByText(/no substitute for measurement/i)
          .first()
          .isVisible(),
      )
      .toBe(true);
    await screenshot(page, 'resonance-detail');
  });

  it('the catalogue lists it, with thumbnails', async () => {
    await page.goto(`${baseUrl}/g/harrow-lake/catalogue?q=E2E`);
    await expect.poll(() => page.getByText('E2E stadium dot').first().isVisible(), { timeout: 15_000 }).toBe(true);
    await screenshot(page, 'catalogue');
  });

  it('the viewer browses and opens, but sees no launch or edit controls, and the API refuses them', async () => {
    const viewer = await browser.newPage({ viewport: { width: 1366, height: 900 } });
    const p = page;
    page = viewer;
    try {
      await signIn(page, baseUrl, 'vic.viewer@harrow-lake.example');
      await page.waitForURL(/\/g\/harrow-lake/);
      await page.goto(modelUrl);
      await expect.poll(() => page.getByText('E2E stadium dot').first().isVisible(), { timeout: 15_000 }).toBe(true);
      expect(await page.locator('[data-test="save"]').count()).toBe(0);
      expect(await page.getByRole('link', { name: /launch a run/i }).count()).toBe(0);
      await page.goto(`${baseUrl}/g/harrow-lake/runs`);
      await expect
        .poll(
          () =>
            page
              .getByText(/E2E stadium dot/)
              .first()
              .isVisible(),
          { timeout: 15_000 },
        )
        .toBe(true);
      expect(await page.getByRole('button', { name: /launch/i }).count()).toBe(0);
      expect(await page.getByRole('link', { name: /launch/i }).count()).toBe(0);
      await page.goto(resonanceUrl);
      await page.locator('img[alt^="Mode image"]').waitFor({ timeout: 15_000 });
      expect(await page.locator('[data-test="save-tags"]').count()).toBe(0);
      await screenshot(page, 'viewer-resonance');
      // The API itself refuses a viewer's launch, whatever the screen shows.
      const status = await page.evaluate(async (url) => {
        const session = await (await fetch('/api/auth/session')).json();
        const group = session.groups.find((g: { slug: string }) => g.slug === 'harrow-lake');
        const res = await fetch(`/api/groups/${group.id}/runs`, {
          method: 'POST',
          headers: { 'Content-Type': 'application/json', 'X-CSRF-Token': session.csrfToken },
          body: JSON.stringify({ kind: 'pole-search', modelId: url.split('/').pop(), window: { emin: 3, emax: 6, gammaMax: 1 } }),
        });
        return res.status;
      }, modelUrl);
      expect(status).toBe(403);
    } finally {
      await viewer.close();
      page = p;
    }
  });
});
