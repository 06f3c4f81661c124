// From catalogue to fabrication in a real browser: a designer proposes a resonance found by a
// real pole search, a reviewer approves it from the review queue, the proposer's e-mail is in
// the site operator's outbox, the Fabrication page offers the package, and a viewer (the
// fabrication partner) downloads the GDSII, which the independent gdsii parser reads back.
import { readFileSync } from 'node:fs';
import { parseGDS, RecordType } from 'gdsii';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { LAYERS } from '../../shared/layout/device-layout.js';
import { fabricationModel } from '../server/fabrication-fixture.js';
import { launchBrowser, screenshot, signIn } from './browser.js';

const baseUrl = inject('baseUrl');
let browser: Browser;
const contexts: BrowserContext[] = [];
let resonanceId = '';

async function pageAs(email: string): Promise<Page> {
  const context = await browser.newContext({ viewport: { width: 1366, height: 1000 }, acceptDownloads: true });
  contexts.push(context);
  const page = await context.newPage();
  await signIn(page, baseUrl, email);
  await page.waitForURL(/\/g\/harrow-lake/);
  return page;
}

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  for (const c of contexts) await c.close().catch(() => {});
  await browser?.close();
});

describe('fabrication in the browser', () => {
  it('the designer proposes a resonance of a real pole search, with a reason and tolerances', async () => {
    const page = await pageAs('dev.designer@harrow-lake.example');
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
      for (let k = 0; k < 300; k++) {
        const r = await (await fetch(`/api/groups/${group.id}/runs/${run.id}`)).json();
        if (r.status === 'completed') return { poles: r.poles.map((p: { id: string; width: number }) => ({ id: p.id, width: p.width })), status: r.status };
        if (r.status === 'failed' || r.status === 'cancelled') return { poles: [], status: `${r.status}: ${r.error}` };
        await new Promise((done) => setTimeout(done, 500));
      }
      return { poles: [], status: 'timed out' };
    }, fabricationModel);
    expect(found.status).toBe('completed');
    const pole = found.poles.find((p) => p.width > 0) ?? found.poles[0];
    expect(pole).toBeDefined();
    resonanceId = pole!.id;

    await page.goto(`${baseUrl}/g/harrow-lake/catalogue/resonances/${resonanceId}`);
    const panel = page.locator('[data-test="fabrication-panel"]');
    await panel.waitFor();
    await expect.poll(() => panel.locator('[data-test="fabrication-state"]').textContent()).toContain('Not proposed');
    await panel.locator('[data-test="propose-reason"]').fill('Isolated mode with the highest Q of the window');
    await panel.locator('[data-test="tolerance-energy"]').fill('0.05');
    await panel.locator('[data-test="min-quality"]').fill('50');
    await panel.locator('[data-test="move-propose"]').click();
    await expect.poll(() => panel.locator('[data-test="fabrication-state"]').textContent()).toContain('Candidate');
    // The proposer cannot decide on their own candidate: no approve button here.
    expect(await panel.locator('[data-test="move-approve"]').count()).toBe(0);
    await panel.scrollIntoViewIfNeeded();
    await screenshot(page, 'fabrication-proposed');
  });

  it('the reviewer approves it from the review queue', async () => {
    const page = await pageAs('rae.reviewer@harrow-lake.example');
    await page.getByRole('link', { name: 'Review' }).click();
    const card = page.locator('[data-test="candidate"]').filter({ hasText: 'Isolated mode with the highest Q' });
    await card.waitFor();
    await screenshot(page, 'fabrication-review-queue');
    await card.locator('[data-test="review-reason"]').fill('Q and tolerance fit the process window');
    await card.locator('[data-test="approve"]').click();
    await card.waitFor({ state: 'detached' });
  });

  it('the approval e-mail to the proposer is in the outbox, with a link to the resonance', async () => {
    const page = await pageAs('ada.admin@harrow-lake.example');
    await page.goto(`${baseUrl}/outbox`);
    const message = page.locator('a.message-link').filter({ hasText: 'Your candidate was approved' });
    await expect
      .poll(
        async () => {
          await page.reload();
          return message.count();
        },
        { timeout: 30_000 },
      )
      .toBeGreaterThan(0);
    await message.first().click();
    await expect.poll(() => page.locator('body').textContent()).toContain(`/catalogue/resonances/${resonanceId}`);
    expect(await page.locator('body').textContent()).toContain('dev.designer@harrow-lake.example');
    await screenshot(page, 'fabrication-outbox');
  });

  it('the Fabrication page offers the package, and the viewer downloads the GDSII', async () => {
    const page = await pageAs('vic.viewer@harrow-lake.example');
    await page.getByRole('link', { name: 'Fabrication' }).click();
    const row = page.locator('[data-test="fabrication-item"]').first();
    await row.waitFor();
    expect(await row.textContent()).toContain('Approved');
    expect(await row.locator('[data-test="download-package"]').getAttribute('href')).toMatch(/package\.zip$/);
    await screenshot(page, 'fabrication-page');
    const [download] = await Promise.all([page.waitForEvent('download'), row.locator('[data-test="download-gds"]').click()]);
    expect(download.suggestedFilename()).toMatch(/^poleward-.*\.gds$/);
    const bytes = new Uint8Array(readFileSync((await download.path())!));
    const layers = new Set<number>();
    for (const r of parseGDS(bytes)) if (r.tag === RecordType.LAYER) layers.add(r.data as number);
    // Cavity traced, lead stubs, and the two gates of the model.
    expect([...layers].sort((a, b) => a - b)).toEqual([LAYERS.cavityTraced, LAYERS.leads, LAYERS.firstGate, LAYERS.firstGate + 1]);
  });
});
