// A parameter study in a real browser: the demo designer runs a three-step field sweep
// of a small dot, watches its steps, sees the trajectories and the transmission map,
// follows a resonance step by step and keeps a step as a new version of the model, whose
// resonances then show in the catalogue.
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { smallDot } from '../server/fixtures/small-dot.js';
import { launchBrowser, screenshot, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
let browser: Browser;
let page: Page;
let modelId = '';

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1366, height: 900 } });
});
afterAll(async () => browser?.close());

async function fill(field: string, value: string | number) {
  await page.locator(`[data-field="${field}"]`).fill(String(value));
}

describe('a field study from the launcher to a saved version', () => {
  it('the designer launches a three-step field sweep after seeing its estimate', async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example');
    await page.waitForURL(/\/g\/harrow-lake/);
    // The small dot of the server tests (252 sites), created through the API.
    modelId = await page.evaluate(async (model) => {
      const session = await (await fetch('/api/auth/session')).json();
      const group = session.groups.find((g: { slug: string }) => g.slug === 'harrow-lake');
      const headers = { 'Content-Type': 'application/json', 'X-CSRF-Token': session.csrfToken };
      const created = await (
        await fetch(`/api/groups/${group.id}/models`, { method: 'POST', headers, body: JSON.stringify({ document: { ...model, name: 'E2E study dot' } }) })
      ).json();
      return created.id as string;
    }, smallDot());
    expect(modelId).toMatch(/^[0-9a-f-]{36}$/);

    await page.goto(`${baseUrl}/g/harrow-lake/studies`);
    await page.locator('[data-test="new-study"]').click();
    await page.waitForURL(/\/studies\/new/);
    await page.locator('[data-field="modelId"]').click();
    await page.getByRole('option', { name: /E2E study dot/ }).click();
    await expect.poll(() => page.locator('[data-field="sweep.path"]').textContent(), { timeout: 15_000 }).toContain('field');
    await fill('window.emin', 24);
    await fill('window.emax', 27);
    await fill('window.gammaMax', 1);
    await fill('sweep.values', '0:0.2:3');
    await expect.poll(() => page.locator('[data-test="values-note"]').textContent()).toContain('3 step(s)');
    await expect.poll(() => page.locator('[data-test="estimate"]').isVisible(), { timeout: 20_000 }).toBe(true);
    expect(await page.locator('[data-test="estimate"]').textContent()).toMatch(/Steps\s*3/);
    await screenshot(page, 'study-launcher');
    await page.locator('[data-test="launch"]').click();
    await page.waitForURL(/\/studies\/[0-9a-f-]{36}/, { timeout: 15_000 });
  });

  it('shows the steps, then the trajectories once the study has ended', async () => {
    // The page shows every step at once, with its state, while the study runs or after it.
    await page.locator('[data-test="step-list"] li').first().waitFor({ timeout: 15_000 });
    expect(await page.locator('[data-test="step-list"] li').count()).toBe(3);
    await page
      .locator('[data-test="status"]')
      .filter({ hasText: /Completed|Failed|Cancelled/ })
      .waitFor({ timeout: 180_000 });
    expect(await page.locator('[data-test="status"]').textContent()).toContain('Completed');
    expect(await page.locator('[data-test="progress"]').textContent()).toContain('3 of 3 steps done');
    await page.locator('[data-test="plane-chart"] svg').waitFor({ timeout: 15_000 });
    // At least one trajectory is drawn (a line path in the plane chart) and every step is listed.
    expect(await page.locator('[data-test="plane-chart"] svg path').count()).toBeGreaterThan(2);
    expect(await page.locator('[data-test="steps"] button').count()).toBe(3);
    expect(await page.locator('[data-test="export-csv"]').getAttribute('href')).toContain('/export?format=csv');
    // The transmission map T(E, p) is drawn (the two-lead dot: T source → drain), with its own CSV.
    const map = page.locator('[data-test="transmission-map"]');
    await map.scrollIntoViewIfNeeded();
    expect(await map.getAttribute('aria-label')).toContain('T source → drain');
    expect(await map.getAttribute('aria-label')).toContain('3 steps');
    expect(await page.locator('[data-test="export-map"]').getAttribute('href')).toContain('table=transmission');
    // The canvas is really painted: its centre pixel is not transparent.
    const painted = await map.evaluate((c: HTMLCanvasElement) => c.getContext('2d')!.getImageData(c.width / 2, c.height / 2, 1, 1).data[3]);
    expect(painted).toBe(255);
    await screenshot(page, 'study-trajectories');
    await map.screenshot({ path: 'test-output/screenshots/study-transmission-map.png' });
  });

  it('follows a resonance step by step, then saves a step as a new version with its resonances in the catalogue', async () => {
    // Follow the first trajectory: its first step opens with the followed resonance's mode first.
    await page.locator('[data-test="follow"]').click();
    await page.getByRole('option', { name: /Trajectory 0/ }).click();
    const panel = page.locator('[data-test="step-panel"]');
    await panel.waitFor({ timeout: 15_000 });
    await expect.poll(() => panel.locator('[data-test="followed"]').textContent(), { timeout: 15_000 }).toContain('Trajectory 0 at this step');
    await expect.poll(() => panel.textContent()).toContain('field (T) = 0');
    await panel.locator('[data-test="next-step"]').click();
    await expect.poll(() => panel.textContent(), { timeout: 15_000 }).toContain('field (T) = 0.1');
    await expect.poll(() => panel.locator('[data-test="followed"]').count(), { timeout: 15_000 }).toBe(1);
    expect(await panel.locator('[data-test="followed"] pw-density-image canvas').count()).toBe(1);
    expect(await panel.locator('pw-density-image canvas').count()).toBeGreaterThan(1);
    await panel.scrollIntoViewIfNeeded();
    await screenshot(page, 'study-followed-step');
    await panel.locator('[data-test="save-step"]').click();
    await expect.poll(() => page.locator('[data-test="saved"]').textContent(), { timeout: 15_000 }).toContain('Saved as version 2');
    expect(await page.locator('[data-test="saved"]').textContent()).toMatch(/its \d+ resonance\(s\) in the catalogue/);
    await page.locator('[data-test="step-panel"]').scrollIntoViewIfNeeded();
    await screenshot(page, 'study-step-saved');
    // The new version holds the step's field.
    const field = await page.evaluate(async (id) => {
      const session = await (await fetch('/api/auth/session')).json();
      const group = session.groups.find((g: { slug: string }) => g.slug === 'harrow-lake');
      const v = await (await fetch(`/api/groups/${group.id}/models/${id}/versions/2`)).json();
      return v.document.field as number;
    }, modelId);
    expect(field).toBeCloseTo(0.1, 9);
    // Its resonances are in the catalogue under version 2, tagged "study".
    await page.locator('[data-test="saved"] a', { hasText: 'See them in the catalogue' }).click();
    await page.waitForURL(/\/catalogue/);
    await expect.poll(() => page.locator('body').textContent(), { timeout: 15_000 }).toContain('E2E study dot');
    await screenshot(page, 'study-step-in-catalogue');
  });
});
