// Graphene in the model editor, in a real browser: the demo designer picks the honeycomb
// lattice on a new model, gets the graphene dot with two zigzag leads, sees its atoms and
// bonds drawn and its figures in eV, saves it, reopens it, opens the run launcher on it, and
// draws a flake of about 20,000 atoms. Screenshots land in test-output/screenshots.
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { join } from 'node:path';
import { launchBrowser, screenshot, screenshotDir, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
let browser: Browser;
let page: Page;
let modelId = '';

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1366, height: 1000 }, deviceScaleFactor: 2 });
});
afterAll(async () => browser?.close());

const field = (path: string) => page.locator(`[data-field="${path}"]`).first();

/** The page with the drawing in view, and the drawing's card alone at full size. */
async function shootDrawing(name: string): Promise<void> {
  const card = page.locator('pw-lattice-preview').locator('xpath=ancestor::mat-card');
  await card.scrollIntoViewIfNeeded();
  await screenshot(page, name);
  await page.locator('aside.preview').screenshot({ path: join(screenshotDir, `${name}-drawing.png`) });
}

describe('a graphene dot in the editor', () => {
  it('picks the honeycomb lattice and gets a graphene dot with two zigzag leads, drawn atom by atom', async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example');
    await page.waitForURL(/\/g\/harrow-lake/);
    await page.goto(`${baseUrl}/g/harrow-lake/models/new`);
    await field('name').fill('E2E graphene dot');
    await field('lattice.kind').click();
    await page.getByRole('option', { name: /Honeycomb: graphene/ }).click();
    await page.locator('pw-lattice-preview path.bond').waitFor();
    expect(await field('lattice.hopping').inputValue()).toBe('2.7');
    expect(await field('spacing').inputValue()).toBe('0.142');
    expect(await page.locator('[data-field="material"]').count()).toBe(0);
    const edges = await page.locator('pw-lattice-preview path.lead-bond').evaluateAll((ps) => ps.map((p) => p.getAttribute('data-edge')));
    expect(edges).toEqual(['zigzag', 'zigzag']);
    // The live server check answers with the honeycomb's figures: t in eV, no closed-form thresholds.
    const figures = page.locator('[data-test="honeycomb-figures"]');
    await figures.waitFor({ timeout: 15_000 });
    expect(await figures.locator('[data-test="hopping"]').textContent()).toContain('2.700 eV');
    expect(await figures.textContent()).toContain('no closed-form channel thresholds');
    const subtitle = (await page.locator('pw-lattice-preview').locator('xpath=ancestor::mat-card').locator('mat-card-subtitle').textContent()) ?? '';
    const atoms = Number(/(\d+) atoms/.exec(subtitle)?.[1]);
    expect(await figures.textContent()).toContain(`Cavity atoms${atoms}`);

    // A gate over the dot: a Gaussian bump drawn at its place on the honeycomb.
    await page.locator('[data-test="add-term"]').click();
    await page.getByRole('menuitem', { name: 'Gaussian bump' }).click();
    await expect.poll(() => page.locator('pw-lattice-preview circle.term').count()).toBe(1);
    await shootDrawing('editor-graphene-dot');

    // A field: the choice of a field in the leads appears, with what "off" means.
    await field('field').fill('2');
    await expect.poll(() => page.locator('[data-field="fieldInLeads"]').count()).toBe(1);
    expect(await page.locator('.field-in-leads').textContent()).toContain('field-free');
    await field('field').fill('0');

    await page.locator('[data-test="save"]').click();
    await page.waitForURL(/\/models\/[0-9a-f-]{36}/, { timeout: 15_000 });
    modelId = page.url().split('/models/')[1]!.split(/[?#]/)[0]!;
  });

  it('reopens the saved model on the honeycomb, its lattice block intact', async () => {
    await page.goto(`${baseUrl}/g/harrow-lake/models/${modelId}`);
    await page.locator('pw-lattice-preview path.bond').waitFor({ timeout: 15_000 });
    expect(await field('lattice.hopping').inputValue()).toBe('2.7');
    await page.locator('[data-test="view-json"] button').click();
    const doc = JSON.parse(await field('document.json').inputValue()) as { lattice: unknown; leads: unknown[]; material?: unknown };
    expect(doc.lattice).toEqual({ kind: 'honeycomb', hopping: 2.7, removeDangling: true });
    expect(doc.leads).toHaveLength(2);
    expect(doc.material).toBeUndefined();
    await page.locator('[data-test="view-form"] button').click();
    await page.locator('[data-test="honeycomb-figures"]').waitFor({ timeout: 15_000 });
    await shootDrawing('editor-graphene-saved');
  });

  it('opens the run launcher on it with energies in meV and t in eV', async () => {
    await page.goto(`${baseUrl}/g/harrow-lake/runs/new?modelId=${modelId}`);
    const note = page.locator('[data-test="graphene-energies"]');
    await note.waitFor({ timeout: 15_000 });
    expect(await note.textContent()).toContain('2.700 eV');
    await page.getByLabel('E min (meV)').fill('-900');
    await page.getByLabel('E max (meV)').fill('300');
    await expect.poll(() => page.locator('[data-test="validity"]').first().textContent()).toContain('Model validity at E = -900 meV');
    await page.waitForTimeout(1500);
    await screenshot(page, 'launcher-graphene');
  });

  it('draws a flake of about 20,000 atoms', async () => {
    await page.goto(`${baseUrl}/g/harrow-lake/models/new`);
    await page.locator('[data-test="view-json"] button').click();
    const big = {
      name: 'E2E big flake',
      spacing: 0.142,
      lattice: { kind: 'honeycomb', hopping: 2.7 },
      grid: { nx: 400, ny: 160 },
      shape: { kind: 'disk', cx: 24.6, cy: 17, radius: 12.9 },
      field: 0,
      leads: [{ side: 'left', start: 70, width: 20, offset: 0 }],
      potential: [],
    };
    const started = Date.now();
    await field('document.json').fill(JSON.stringify(big));
    await page.locator('[data-test="view-form"] button').click();
    await page.waitForFunction(() => (document.querySelector('pw-lattice-preview path.bond')?.getAttribute('d')?.length ?? 0) > 100_000, null, {
      timeout: 30_000,
    });
    const took = Date.now() - started;
    const subtitle = (await page.locator('pw-lattice-preview').locator('xpath=ancestor::mat-card').locator('mat-card-subtitle').textContent()) ?? '';
    const atoms = Number(/(\d+) atoms/.exec(subtitle)?.[1]);
    // π·12.9² nm² over (3√3/4)·a_CC² per atom ≈ 19,960 atoms.
    expect(atoms).toBeGreaterThan(19_000);
    expect(atoms).toBeLessThan(21_000);
    console.log(`graphene flake of ${atoms} atoms: typed, parsed and drawn in ${took} ms (browser test, loaded machine; not asserted)`);
    await shootDrawing('editor-graphene-20k');
  });
});
