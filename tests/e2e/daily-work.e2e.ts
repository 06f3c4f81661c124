// The daily job without JSON, in a real browser: the demo designer builds an ellipse
// dot with two lead stubs in the form, launches a pole search, reads the log-width
// pole view and the conductance, downloads the poles as CSV, compares two runs, and
// opens the account page. Screenshots land in test-output/screenshots.
import { readFile } from 'node:fs/promises';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { launchBrowser, screenshot, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
let browser: Browser;
let page: Page;
let modelId = '';
let firstRunId = '';

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1366, height: 900 }, acceptDownloads: true });
});
afterAll(async () => browser?.close());

const field = (path: string) => page.locator(`[data-field="${path}"]`).first();

describe('the daily job without JSON', () => {
  it('builds an ellipse dot with two lead stubs and a gate in the form', async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example');
    await page.waitForURL(/\/g\/harrow-lake/);
    await page.goto(`${baseUrl}/g/harrow-lake/models/new`);
    await field('name').fill('E2E ellipse dot');
    await field('grid.nx').fill('40');
    await field('grid.ny').fill('24');
    await field('shape.kind').click();
    await page.getByRole('option', { name: 'Ellipse', exact: true }).click();
    for (const [key, value] of [
      ['cx', 100],
      ['cy', 60],
      ['rx', 70],
      ['ry', 45],
    ] as const)
      await field(`shape.${key}`).fill(String(value));
    for (const k of [0, 1]) {
      await field(`leads.${k}.start`).fill('8');
      await field(`leads.${k}.width`).fill('8');
    }
    // A curved cavity does not reach the grid edge: the message says so in full, under the lead.
    await expect.poll(() => page.locator('[data-lead="0"]').textContent(), { timeout: 10_000 }).toMatch(/outside the cavity/);
    await screenshot(page, 'editor-lead-outside');
    // Spacing 0: a message in words under the field, not a cut-off validator text.
    await field('spacing').fill('0');
    await expect.poll(() => page.getByText('The lattice spacing a must be greater than 0.').first().isVisible(), { timeout: 10_000 }).toBe(true);
    await screenshot(page, 'editor-spacing-zero');
    await field('spacing').fill('5');

    await page.locator('[data-test="stub-0"]').click();
    await page.locator('[data-test="stub-1"]').click();
    await expect.poll(() => page.locator('[data-member]').count()).toBe(3);
    await expect.poll(() => page.getByText(/outside the cavity/).count()).toBe(0);

    // A gate: a Gaussian bump, drawn over the lattice.
    await page.locator('[data-test="add-term"]').click();
    await page.getByRole('menuitem', { name: 'Gaussian bump' }).click();
    await field('potential.0.amplitude').fill('0.5');
    await expect.poll(() => page.locator('pw-lattice-preview circle.term').count()).toBe(1);
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
    await screenshot(page, 'editor-ellipse-stubs');

    // The JSON view shows the document just built, never an empty box.
    await page.locator('[data-test="view-json"] button').click();
    const doc = JSON.parse(await field('document.json').inputValue()) as { shape: { kind: string; of: { kind: string }[] }; potential: unknown[] };
    expect(doc.shape.kind).toBe('union');
    expect(doc.shape.of.map((s) => s.kind)).toEqual(['ellipse', 'rectangle', 'rectangle']);
    expect(doc.potential).toHaveLength(1);
    await screenshot(page, 'editor-json-view');
    await page.locator('[data-test="view-form"] button').click();

    await page.locator('[data-test="save"]').click();
    await page.waitForURL(/\/models\/[0-9a-f-]{36}/, { timeout: 15_000 });
    modelId = page.url().split('/models/')[1]!.split(/[?#]/)[0]!;
  });

  it('launches a pole search and sees the log-width pole view and the conductance', async () => {
    await page.getByRole('link', { name: /launch a run/i }).click();
    await page.waitForURL(/\/runs\/new/);
    await page.getByLabel('E min (meV)').fill('3');
    await page.getByLabel('E max (meV)').fill('6');
    await page.getByLabel('Largest width Γ (meV)').fill('1');
    await page.getByLabel(/note/i).first().fill('first look at the ellipse dot');
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
    await screenshot(page, 'launcher-warnings');
    await page.locator('[data-test="launch"]').click();
    await page.waitForURL(/\/runs\/[0-9a-f-]{36}/, { timeout: 15_000 });
    firstRunId = page.url().split('/runs/')[1]!.split(/[?#]/)[0]!;
    await page.locator('[data-test="certificate"]').waitFor({ timeout: 170_000 });
    expect(await page.locator('[data-test="note"]').textContent()).toContain('first look at the ellipse dot');
    await page.locator('[data-test="width-view"] svg').first().waitFor({ timeout: 15_000 });
    expect(await page.locator('[data-test="width-view"]').textContent()).toMatch(/log axis/);
    await page.locator('[data-test="show-conductance"] button').click();
    await page.locator('[aria-label="Conductance spectrum"]').waitFor({ timeout: 10_000 });
    await expect
      .poll(
        () =>
          page
            .getByText(/conductance G \(2e²\/h/)
            .first()
            .isVisible(),
        { timeout: 10_000 },
      )
      .toBe(true);
    await screenshot(page, 'run-result-daily');
  });

  it('downloads the poles as CSV with units in the column names', async () => {
    await page.locator('[data-test="downloads"]').click();
    const [download] = await Promise.all([page.waitForEvent('download'), page.locator('[data-test="download-poles-csv"]').click()]);
    expect(download.suggestedFilename()).toBe('e2e-ellipse-dot-v1-poles.csv');
    const text = await readFile((await download.path())!, 'utf8');
    const [header, ...rows] = text.trim().split('\r\n');
    expect(header!.startsWith('energy_meV,width_meV,lifetime_ps,quality')).toBe(true);
    const shownPoles = await page.locator('table.poles tr.mat-mdc-row').count();
    expect(rows).toHaveLength(shownPoles);
  });

  it('shows a length scale under the mode image of a pole', async () => {
    await page.locator('a[href*="/catalogue/resonances/"]').first().click();
    await page.waitForURL(/\/catalogue\/resonances\//);
    // The 40-column grid at a = 5 nm is 200 nm wide.
    await expect.poll(() => page.locator('[data-test="image-scale"]').textContent(), { timeout: 15_000 }).toMatch(/nm · image 200 nm wide/);
    await screenshot(page, 'resonance-image-scale');
  });

  it('compares two runs: overlaid poles and spectra, matched poles, the document diff', async () => {
    // A second run of the same model over a narrower window, launched through the API.
    const secondId = await page.evaluate(async (id) => {
      const session = await (await fetch('/api/auth/session')).json();
      const group = session.groups.find((g: { slug: string }) => g.slug === 'harrow-lake');
      const headers = { 'Content-Type': 'application/json', 'X-CSRF-Token': session.csrfToken };
      const run = await (
        await fetch(`/api/groups/${group.id}/runs`, {
          method: 'POST',
          headers,
          body: JSON.stringify({ modelId: id, kind: 'pole-search', window: { emin: 3, emax: 5, gammaMax: 1 } }),
        })
      ).json();
      for (let i = 0; i < 170; i++) {
        const now = await (await fetch(`/api/groups/${group.id}/runs/${run.id}`)).json();
        if (now.status === 'completed' || now.status === 'failed') return now.status === 'completed' ? run.id : `failed: ${now.error}`;
        await new Promise((r) => setTimeout(r, 1000));
      }
      return 'timeout';
    }, modelId);
    expect(secondId).toMatch(/^[0-9a-f-]{36}$/);
    await page.goto(`${baseUrl}/g/harrow-lake/runs`);
    for (const id of [firstRunId, secondId]) await page.locator(`[data-run="${id}"] [data-test="pick"] input`).check();
    await expect.poll(() => page.locator(`[data-run="${firstRunId}"] [data-test="certified"]`).count(), { timeout: 10_000 }).toBe(1);
    expect(await page.locator(`[data-run="${firstRunId}"] [data-test="duration"]`).textContent()).toMatch(/took \d/);
    await screenshot(page, 'run-list-daily');
    await page.locator('[data-test="compare"]').click();
    await page.waitForURL(/\/runs\/compare\?/);
    await page.locator('[data-test="matched"]').waitFor({ timeout: 15_000 });
    expect(await page.locator('[data-test="matched"] tbody tr').count()).toBeGreaterThan(0);
    await page.locator('[data-test="compare-poles"] svg').first().waitFor({ timeout: 15_000 });
    expect(await page.getByText('The two documents are the same.').isVisible()).toBe(true);
    await screenshot(page, 'compare-runs');
  });

  it('opens the account page with name, password, tokens and sign-out everywhere', async () => {
    await page.goto(`${baseUrl}/account`);
    await page.locator('[data-test="email"]').waitFor({ timeout: 15_000 });
    expect(await page.locator('[data-test="email"]').textContent()).toContain('dev.designer@harrow-lake.example');
    expect(await page.locator('[data-test="sign-out-everywhere"]').isVisible()).toBe(true);
    await screenshot(page, 'account');
  });
});
