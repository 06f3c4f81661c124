// The microwave path in a real browser: the Quarry Hill group's two-port rectangle
// (catalogue/qh-rect-two-port.json) searched twice through the API, then its run page
// reads frequencies in GHz, widths in MHz and Q (no meV anywhere), and the compare page
// matches the two runs' poles in the frequency plane.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { projectRoot } from '../../server/config.js';
import { microwaveWindow } from '../../shared/units/microwave.js';
import { launchBrowser, screenshot, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
let browser: Browser;
let page: Page;
const device = JSON.parse(readFileSync(join(projectRoot, 'catalogue', 'qh-rect-two-port.json'), 'utf8')) as { model: { physics: { permittivity: number } } };
const eps = device.model.physics.permittivity;
// 12.5–17 GHz holds both of its poles (14.2 and 16.9 GHz); 12.5–15.5 GHz only the first.
const wide = microwaveWindow(12.5, 17, 800, eps);
const narrow = microwaveWindow(12.5, 15.5, 800, eps);
let runs: string[] = [];

beforeAll(async () => {
  browser = await launchBrowser();
  page = await browser.newPage({ viewport: { width: 1366, height: 1000 } });
});
afterAll(async () => browser?.close());

describe('a microwave group', () => {
  it('searches its two-port rectangle twice through the API', async () => {
    await signIn(page, baseUrl, 'quinn.admin@quarry-hill.example');
    await page.waitForURL(/\/g\/quarry-hill/);
    const answer = await page.evaluate(
      async ({ doc, windows }) => {
        const session = await (await fetch('/api/auth/session')).json();
        const group = session.groups.find((g: { slug: string }) => g.slug === 'quarry-hill');
        const headers = { 'Content-Type': 'application/json', 'X-CSRF-Token': session.csrfToken };
        const m = await (await fetch(`/api/groups/${group.id}/models`, { method: 'POST', headers, body: JSON.stringify({ document: doc }) })).json();
        const ids: string[] = [];
        for (const window of windows) {
          const body = JSON.stringify({ kind: 'pole-search', modelId: m.id, window });
          ids.push((await (await fetch(`/api/groups/${group.id}/runs`, { method: 'POST', headers, body })).json()).id);
        }
        for (let k = 0; k < 300; k++) {
          const states = await Promise.all(ids.map(async (id) => (await (await fetch(`/api/groups/${group.id}/runs/${id}`)).json()).status as string));
          if (states.every((s) => s === 'completed')) return { ids, status: 'completed' };
          if (states.some((s) => s === 'failed' || s === 'cancelled')) return { ids, status: states.join(', ') };
          await new Promise((done) => setTimeout(done, 500));
        }
        return { ids, status: 'timed out' };
      },
      { doc: (device as { model: unknown }).model, windows: [wide, narrow] },
    );
    expect(answer.status).toBe('completed');
    runs = answer.ids;
  });

  it('reads the run page in GHz, MHz and Q, with no meV and no conductance', async () => {
    await page.goto(`${baseUrl}/g/quarry-hill/runs/${runs[0]}`);
    const frequencies = page.locator('[data-test="frequency"]');
    await expect.poll(() => frequencies.count(), { timeout: 60_000 }).toBe(2);
    const f = (await frequencies.allTextContents()).map((t) => Number.parseFloat(t));
    // The P2 box's TM modes near 14.2 and 16.9 GHz (catalogue/qh-rect-two-port.json's description: poles in 12.5–17 GHz).
    expect(f.every((x) => x > 12.5 && x < 17)).toBe(true);
    expect(await page.locator('[data-test="frequency-width"]').first().textContent()).toMatch(/MHz$/);
    expect(Number(await page.locator('[data-test="quality-mw"]').first().textContent())).toBeGreaterThan(1);
    const text = await page.locator('main, .mat-sidenav-content, body').first().innerText();
    expect(text).toContain('12.500–17.000 GHz');
    expect(text).not.toContain('meV');
    expect(await page.locator('[data-test="show-conductance"]').count()).toBe(0);
    await screenshot(page, 'microwave-run');
  });

  it('compares the two runs in the frequency plane', async () => {
    await page.goto(`${baseUrl}/g/quarry-hill/runs/compare?a=${runs[0]}&b=${runs[1]}`);
    const matched = page.locator('[data-test="matched"]');
    await matched.waitFor();
    await expect.poll(() => page.locator('[data-test="matched-frequency"]').count(), { timeout: 60_000 }).toBe(2);
    const table = await matched.innerText();
    expect(table).toContain('Δf');
    expect(table).toMatch(/GHz/);
    expect(table).toMatch(/MHz/);
    // The narrow window holds only the first pole: the second lies outside the range both
    // runs searched, so it is marked so rather than paired or called a lone pole.
    expect(table).toMatch(/outside [AB]'s window/);
    expect(await page.locator('[data-test="compare-validity"]').count()).toBe(2);
    const body = await page.locator('body').innerText();
    expect(body).not.toContain('meV');
    await screenshot(page, 'microwave-compare');
  });
});
