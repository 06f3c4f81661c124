// Current and Husimi maps in a real browser: a small dot is searched through the API,
// then its resonance page shows the density with the current arrows, a Husimi map is
// computed by the worker with its glyphs and dominant directions, zoom changes the
// arrow spacing, and the SVG and PNG exports are valid files.
import { readFileSync } from 'node:fs';
import { PNG } from 'pngjs';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { launchBrowser, screenshot, screenshotDir, signIn } from './browser.js';
import { join } from 'node:path';

const baseUrl = inject('baseUrl');
let browser: Browser;
let page: Page;
let resonanceUrl = '';

const model = {
  name: 'E2E map dot',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 30, ny: 20 },
  shape: { kind: 'subtract', from: { kind: 'rectangle', x0: 0, y0: 0, width: 150, height: 100 }, remove: [{ kind: 'disk', cx: 95, cy: 60, radius: 18 }] },
  field: 0.3,
  leads: [
    { side: 'left', start: 3, width: 6, name: 'source' },
    { side: 'right', start: 10, width: 6, name: 'drain' },
  ],
};

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1366, height: 1000 }, acceptDownloads: true });
});
afterAll(async () => browser?.close());

describe('current and Husimi maps on the resonance page', () => {
  it('a pole search stores the current of its poles', async () => {
    await signIn(page, baseUrl, 'dev.designer@harrow-lake.example');
    await page.waitForURL(/\/g\/harrow-lake/);
    const found = await page.evaluate(async (doc) => {
      const session = await (await fetch('/api/auth/session')).json();
      const group = session.groups.find((g: { slug: string }) => g.slug === 'harrow-lake');
      const headers = { 'Content-Type': 'application/json', 'X-CSRF-Token': session.csrfToken };
      const m = await (await fetch(`/api/groups/${group.id}/models`, { method: 'POST', headers, body: JSON.stringify({ document: doc }) })).json();
      const run = await (
        await fetch(`/api/groups/${group.id}/runs`, {
          method: 'POST',
          headers,
          body: JSON.stringify({ kind: 'pole-search', modelId: m.id, window: { emin: 3, emax: 7, gammaMax: 1.5 } }),
        })
      ).json();
      for (let k = 0; k < 240; k++) {
        const r = await (await fetch(`/api/groups/${group.id}/runs/${run.id}`)).json();
        if (r.status === 'completed') return { poles: r.poles.map((p: { id: string; width: number }) => ({ id: p.id, width: p.width })), status: r.status };
        if (r.status === 'failed' || r.status === 'cancelled') return { poles: [], status: `${r.status}: ${r.error}` };
        await new Promise((done) => setTimeout(done, 500));
      }
      return { poles: [], status: 'timed out' };
    }, model);
    expect(found.status).toBe('completed');
    expect(found.poles.length).toBeGreaterThan(0);
    const pole = found.poles.find((p) => p.width > 0) ?? found.poles[0]!;
    resonanceUrl = `${baseUrl}/g/harrow-lake/catalogue/resonances/${pole.id}`;
  });

  it('shows the density with the current arrows, and a Husimi map computed on demand', async () => {
    await page.goto(resonanceUrl);
    const svg = page.locator('[data-test="mode-map-svg"]');
    await svg.waitFor({ timeout: 20_000 });
    await page.locator('[data-test="layer-density"]').waitFor({ timeout: 10_000 });
    expect(await page.locator('[data-test="layer-current"] line').count()).toBeGreaterThan(4);
    expect(await page.locator('[data-test="lead-currents"] li').count()).toBe(2);
    await page.locator('[data-test="mode-maps"]').scrollIntoViewIfNeeded();
    await screenshot(page, 'mode-map-current');
    // On a narrow screen one arrow stands for a block of sites; zooming in makes the blocks smaller.
    await page.setViewportSize({ width: 720, height: 1000 });
    const stride = () => page.locator('[data-test="layer-current"]').getAttribute('data-stride').then(Number);
    await expect.poll(stride).toBeGreaterThan(1);
    const wide = await stride();
    for (let k = 0; k < 3; k++) await page.locator('[data-test="zoom-in"]').click();
    await expect.poll(stride).toBeLessThan(wide);
    await screenshot(page, 'mode-map-zoomed');
    await page.setViewportSize({ width: 1366, height: 1000 });
    await page.locator('[data-test="husimi-grid"]').fill('12');
    await page.locator('[data-test="compute-husimi"]').click();
    await page.locator('[data-test="layer-husimi"] path').first().waitFor({ timeout: 60_000 });
    expect(await page.locator('[data-test="layer-peaks"] line').count()).toBeGreaterThan(0);
    expect(await page.locator('[data-test="husimi-note"]').textContent()).toMatch(/angular resolution ≈/);
    await page.getByRole('button', { name: 'Show the whole cavity' }).click();
    await page.locator('[data-test="mode-maps"]').scrollIntoViewIfNeeded();
    await screenshot(page, 'mode-map-husimi');
    // Layers toggle off and on.
    await page.locator('[data-test="layer-toggle-current"] input').click();
    await expect.poll(() => page.locator('[data-test="layer-current"]').count()).toBe(0);
    await page.locator('[data-test="layer-toggle-current"] input').click();
    await expect.poll(() => page.locator('[data-test="layer-current"]').count()).toBe(1);
  });

  it('computes a scattering state at the pole energy from the source', async () => {
    await page.locator('[data-test="compute-scattering"]').click();
    await expect.poll(() => page.locator('[data-test="source-scattering"] button').isEnabled(), { timeout: 60_000 }).toBe(true);
    await expect.poll(() => page.locator('[data-test="lead-currents"]').textContent(), { timeout: 30_000 }).toMatch(/incoming flux/);
    await page.locator('[data-test="mode-maps"]').scrollIntoViewIfNeeded();
    await screenshot(page, 'mode-map-scattering');
  });

  it('exports the view as a valid SVG and PNG', async () => {
    const [svgDownload] = await Promise.all([page.waitForEvent('download'), page.locator('[data-test="export-svg"]').click()]);
    const svgPath = join(screenshotDir, 'mode-map-export.svg');
    await svgDownload.saveAs(svgPath);
    const text = readFileSync(svgPath, 'utf8');
    expect(text.startsWith('<?xml')).toBe(true);
    // A valid, standalone SVG: the browser's own XML parser accepts it and finds the layers.
    const parsed = await page.evaluate((t) => {
      const doc = new DOMParser().parseFromString(t, 'image/svg+xml');
      return {
        error: doc.getElementsByTagName('parsererror').length,
        root: doc.documentElement.nodeName,
        lines: doc.querySelectorAll('line').length,
        image: doc.querySelectorAll('image').length,
      };
    }, text);
    expect(parsed).toMatchObject({ error: 0, root: 'svg', image: 1 });
    expect(parsed.lines).toBeGreaterThan(4);
    const [pngDownload] = await Promise.all([page.waitForEvent('download'), page.locator('[data-test="export-png"]').click()]);
    const pngPath = join(screenshotDir, 'mode-map-export.png');
    await pngDownload.saveAs(pngPath);
    const png = PNG.sync.read(readFileSync(pngPath));
    expect(png.width).toBeGreaterThan(600);
    expect(png.height).toBeGreaterThan(200);
    // Not blank: the colour map and the arrows leave many distinct colours.
    const colours = new Set<number>();
    for (let p = 0; p < png.data.length; p += 4 * 97) colours.add((png.data[p]! << 16) | (png.data[p + 1]! << 8) | png.data[p + 2]!);
    expect(colours.size).toBeGreaterThan(20);
  });
});
