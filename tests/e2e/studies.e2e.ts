// A parameter study in a real browser: the demo designer runs a three-step field sweep
// of a small dot, watches its steps, sees the trajectories, opens a step and keeps it
// as a new version of the model.
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
    await screenshot(page, 'study-trajectories');
  });

  it('opens a step with its mode densities and saves it as a new version of the model', async () => {
    await page.locator('[data-step="1"]').click();
    const panel = page.locator('[data-test="step-panel"]');
    await panel.waitFor({ timeout: 15_000 });
    await expect.poll(() => panel.textContent(), { timeout: 15_000 }).toContain('field = 0.1');
    expect(await panel.locator('pw-density-image canvas').count()).toBeGreaterThan(0);
    await panel.locator('[data-test="save-step"]').click();
    await expect.poll(() => page.locator('[data-test="saved"]').textContent(), { timeout: 15_000 }).toContain('Saved as version 2');
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
  });
});
