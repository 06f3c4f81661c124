// Peak fits in a real browser: the demo designer files device R3 and searches its poles
// near 3.25 meV, uploads the lab's (invented) measured trace of R3 at 100 mK
// (catalogue/traces/hl-rect-r3-100mK.csv: the engine's spectrum broadened at 100 mK plus
// noise), fits it with the thermal lineshape, reads the agreement with the computed pole,
// and finds the fit in the catalogue.
import { readFileSync } from 'node:fs';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { launchBrowser, screenshot, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
const tracePath = new URL('../../catalogue/traces/hl-rect-r3-100mK.csv', import.meta.url).pathname;
const r3 = JSON.parse(readFileSync(new URL('../../catalogue/hl-rect-r3.json', import.meta.url), 'utf8')) as { model: Record<string, unknown> };
let browser: Browser;
let page: Page;

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1366, height: 1000 } });
});
afterAll(async () => browser?.close());

describe('fitting a measured trace against the computed poles', () => {
  it('files device R3 and computes its poles near the measured peak', async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example');
    await page.waitForURL(/\/g\/harrow-lake/);
    const status = await page.evaluate(async (model) => {
      const session = await (await fetch('/api/auth/session')).json();
      const group = session.groups.find((g: { slug: string }) => g.slug === 'harrow-lake');
      const headers = { 'Content-Type': 'application/json', 'X-CSRF-Token': session.csrfToken };
      const created = await (
        await fetch(`/api/groups/${group.id}/models`, { method: 'POST', headers, body: JSON.stringify({ document: { ...model, name: 'E2E R3' } }) })
      ).json();
      const run = await (
        await fetch(`/api/groups/${group.id}/runs`, {
          method: 'POST',
          headers,
          body: JSON.stringify({ kind: 'pole-search', modelId: created.id, window: { emin: 3.2, emax: 3.3, gammaMax: 0.1 } }),
        })
      ).json();
      for (let k = 0; k < 240; k++) {
        const now = await (await fetch(`/api/groups/${group.id}/runs/${run.id}`)).json();
        if (now.status !== 'queued' && now.status !== 'running') return now.status;
        await new Promise((r) => setTimeout(r, 1000));
      }
      return 'timeout';
    }, r3.model);
    expect(status).toBe('completed');
  });

  it('uploads the trace with its columns, units, temperature and model', async () => {
    await page.goto(`${baseUrl}/g/harrow-lake/fits`);
    await page.locator('[data-test="trace-file"]').setInputFiles(tracePath);
    await page.getByText(/241 data rows/).waitFor({ timeout: 15_000 });
    const pick = async (test: string, option: string | RegExp) => {
      await page.locator(`[data-test="${test}"]`).click();
      await page.getByRole('option', { name: option }).click();
    };
    await pick('x-column', 'energy_ueV');
    await pick('x-unit', 'energy, µeV');
    await pick('y-column', 'G_uS');
    await pick('y-unit', 'conductance, µS');
    await pick('trace-model', 'E2E R3');
    await page.locator('[data-test="device-name"]').fill('R3 cooldown 7');
    await page.locator('[data-test="trace-temperature"]').fill('100');
    await screenshot(page, 'fits-upload');
    await page.locator('[data-test="upload"]').click();
    await page.waitForURL(/\/fits\/new\?traceId=/, { timeout: 15_000 });
    await page.locator('.chart svg').first().waitFor({ timeout: 15_000 });
  });

  it('fits the peak with the thermal lineshape and sees the agreement with the pole', async () => {
    await page.locator('[data-test="lineshape"]').click();
    await page.getByRole('option', { name: 'Breit–Wigner, thermally broadened' }).click();
    await expect.poll(() => page.locator('[data-test="temperature"]').inputValue()).toBe('100');
    await page.locator('[data-test="run-fit"]').click();
    await page.waitForURL(/\/fits\/[0-9a-f-]{36}$/, { timeout: 30_000 });
    const agreement = page.locator('[data-test="width-agreement"]').first();
    await agreement.waitFor({ timeout: 20_000 });
    // Γ of the pole is 0.02455 meV; the thermal fit lands within a few percent.
    const text = (await agreement.textContent()) ?? '';
    const percent = Number(/(-?[\d.]+) %/.exec(text)?.[1]);
    expect(Math.abs(percent)).toBeLessThan(5);
    expect(await page.locator('[data-test="fit-results"]').textContent()).toMatch(/±/);
    await screenshot(page, 'fit-workspace');
    await page.locator('[data-test="pole-agreement"]').scrollIntoViewIfNeeded();
    await screenshot(page, 'fit-workspace-results');
  });

  it('finds the fit in the catalogue, marked as fitted', async () => {
    await page.locator('[data-test="catalogue-link"]').first().click();
    await page.waitForURL(/\/catalogue\/resonances\//);
    await page.locator('[data-test="fitted"]').waitFor({ timeout: 15_000 });
    await screenshot(page, 'fitted-resonance');
    await page.goto(`${baseUrl}/g/harrow-lake/catalogue?q=fitted`);
    await page.locator('[data-test="fitted-row"]').first().waitFor({ timeout: 15_000 });
    await screenshot(page, 'catalogue-fitted');
  });

  it('"fit this peak" on the computed pole opens the workspace on its run\'s spectrum around it', async () => {
    const id = await page.evaluate(async () => {
      const session = await (await fetch('/api/auth/session')).json();
      const group = session.groups.find((g: { slug: string }) => g.slug === 'harrow-lake');
      const found = await (await fetch(`/api/groups/${group.id}/catalogue?q=E2E&source=computed&emin=3.25&emax=3.26`)).json();
      return found.items[0].id as string;
    });
    await page.goto(`${baseUrl}/g/harrow-lake/catalogue/resonances/${id}`);
    await page.waitForURL(/\/catalogue\/resonances\//);
    await page.locator('[data-test="fit-peak"]').click();
    await page.waitForURL(/\/fits\/new\?runId=/);
    await page.locator('.chart svg').first().waitFor({ timeout: 15_000 });
    expect(Number(await page.locator('[data-test="range-from"]').inputValue())).toBeGreaterThan(3);
    await screenshot(page, 'fit-this-peak');
  });

  it('a drag across the data sets the range fields', async () => {
    const from = () => page.locator('[data-test="range-from"]').inputValue().then(Number);
    const to = () => page.locator('[data-test="range-to"]').inputValue().then(Number);
    const [from0, to0] = [await from(), await to()];
    const box = (await page.locator('.chart').first().boundingBox())!;
    // Inside the upper plot (grid 0: 70 px from the left, 24 from the right, from 36 px down).
    const left = box.x + 70 + 0.3 * (box.width - 94);
    const right = box.x + 70 + 0.6 * (box.width - 94);
    const y = box.y + 36 + 0.25 * box.height;
    await page.mouse.move(left, y);
    await page.mouse.down();
    await page.mouse.move((left + right) / 2, y, { steps: 5 });
    await page.mouse.move(right, y, { steps: 5 });
    await page.mouse.up();
    // The dragged band lies inside the range shown before, and is narrower.
    await expect.poll(async () => (await to()) - (await from()), { timeout: 5_000 }).toBeLessThan(0.5 * (to0 - from0));
    expect(await from()).toBeGreaterThan(from0);
    expect(await to()).toBeLessThan(to0);
  });
});
