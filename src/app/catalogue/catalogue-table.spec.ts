import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter, Router } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { CatalogueTable } from './catalogue-table';
import type { ResonanceRow } from '../../../shared/api/resonance-row';
import { fixtureId, sampleResonance } from '../core/testing/answer-fixtures';

const wait = (ms: number) => new Promise((r) => setTimeout(r, ms));

function setUp() {
  TestBed.configureTestingModule({
    providers: [
      provideHttpClient(),
      provideHttpClientTesting(),
      provideRouter([{ path: 'catalogue', component: CatalogueTable }]),
      provideFakeCurrentGroup('viewer'),
    ],
  });
  return TestBed.inject(HttpTestingController);
}

const emptyPage = { items: [], total: 0, totalKind: 'exact', countedAt: '2026-01-01T00:00:00Z', countAgeSeconds: 0, page: 1, pageSize: 25, nextCursor: null, prevCursor: null };

/** One catalogue row as the API lists it (parsed through its schema); only the fields a test changes vary. */
function row(n: number, material: string): ResonanceRow {
  return sampleResonance({
    id: fixtureId(n),
    modelVersion: 1,
    keyDimensions: { radius: 120 },
    material,
    fieldT: 0.4,
    energy: 2.5,
    width: 0.01,
    lifetimePs: 65.8,
    quality: 250,
    partialWidths: [],
    thumbnailUrl: '/t.png',
    imageUrl: '/i.png',
  });
}

describe('CatalogueTable', () => {
  it('sends the filter in the URL to the API as query parameters', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue?family=disk&emin=5&emax=12.5&gmax=0.02&dim.radius.min=100&tag=candidate&tag=q-high&sort=width&dir=desc');
    await wait(0);
    const req = http.expectOne((r) => r.url === '/api/groups/g1/catalogue');
    const p = req.request.params;
    expect(p.get('family')).toBe('disk');
    expect(p.get('emin')).toBe('5');
    expect(p.get('emax')).toBe('12.5');
    expect(p.get('gmax')).toBe('0.02');
    expect(p.get('dim.radius.min')).toBe('100');
    expect(p.getAll('tag')).toEqual(['candidate', 'q-high']);
    expect(p.get('sort')).toBe('width');
    expect(p.get('dir')).toBe('desc');
    expect(p.get('page')).toBe('1');
    expect(p.get('pageSize')).toBe('25');
    req.flush(emptyPage);

    // The export links carry the same filter, without paging.
    harness.detectChanges();
    const csv = (harness.routeNativeElement as HTMLElement).querySelector<HTMLAnchorElement>('[data-test="export-csv"]')!;
    expect(csv.getAttribute('href')).toContain('/api/groups/g1/catalogue/export.csv?');
    expect(csv.getAttribute('href')).toContain('emin=5');
    expect(csv.getAttribute('href')).not.toContain('page=');
  });

  it('puts what the user types into the URL, debounced, and queries with it', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue');
    await wait(0);
    http.expectOne((r) => r.url === '/api/groups/g1/catalogue').flush(emptyPage);

    const host = harness.routeNativeElement as HTMLElement;
    const emin = host.querySelector<HTMLInputElement>('[data-filter="emin"]')!;
    const q = host.querySelector<HTMLInputElement>('[data-filter="q"]')!;
    emin.value = '3.5';
    emin.dispatchEvent(new Event('input'));
    q.value = 'stadium';
    q.dispatchEvent(new Event('input'));
    await wait(500);
    await harness.fixture.whenStable();

    expect(TestBed.inject(Router).url).toBe('/catalogue?q=stadium&emin=3.5');
    const req = http.expectOne((r) => r.url === '/api/groups/g1/catalogue');
    expect(req.request.params.get('emin')).toBe('3.5');
    expect(req.request.params.get('q')).toBe('stadium');
    req.flush(emptyPage);
    await wait(400);
    http.verify();
  });

  it('names a filter field that is not a number instead of sending it', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue');
    await wait(0);
    http.expectOne((r) => r.url === '/api/groups/g1/catalogue').flush(emptyPage);
    const host = harness.routeNativeElement as HTMLElement;
    const emin = host.querySelector<HTMLInputElement>('[data-filter="emin"]')!;
    emin.value = '3,5';
    emin.dispatchEvent(new Event('input'));
    await wait(500);
    harness.detectChanges();
    expect(host.textContent).toContain('E from is not a number.');
    http.expectNone((r) => r.url === '/api/groups/g1/catalogue');
  });

  it('names the material by its preset label in the geometry column', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue');
    await wait(0);
    http.expectOne((r) => r.url === '/api/groups/g1/catalogue').flush({ ...emptyPage, items: [row(0xa, 'gaas'), row(0xb, 'custom')], total: 2 });
    harness.detectChanges();
    const subs = Array.from((harness.routeNativeElement as HTMLElement).querySelectorAll('[data-test="geometry-sub"]')).map((e) => e.textContent ?? '');
    expect(subs).toHaveLength(2);
    expect(subs[0]).toContain('GaAs (2DEG)');
    expect(subs[0]).not.toMatch(/\bgaas\b/);
    expect(subs[1]).toContain('custom m*');
  });

  it('says "no picture" instead of a broken image when a row has no stored mode picture', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue');
    await wait(0);
    http.expectOne((r) => r.url === '/api/groups/g1/catalogue').flush({ ...emptyPage, items: [row(1, 'gaas'), row(2, 'gaas')], total: 2 });
    harness.detectChanges();
    const host = harness.routeNativeElement as HTMLElement;
    const images = host.querySelectorAll('img');
    expect(images).toHaveLength(2);
    images[1]!.dispatchEvent(new Event('error'));
    harness.detectChanges();
    expect(host.querySelectorAll('img')).toHaveLength(1);
    expect(host.querySelectorAll('[data-test="no-picture"]')).toHaveLength(1);
  });

  it('shows a microwave row in GHz, MHz, mm and ε_r, with the field not applicable; an electron area in nm²', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue');
    await wait(0);
    const mw: ResonanceRow = {
      ...row(0x3d, 'eps_r=2.25'),
      family: 'rectangle',
      physics: 'microwave',
      energy: 0.0888,
      width: 0.0013,
      // 1 mm = 10⁶ nm (stored in nm so one filter means one length).
      keyDimensions: { width: 36e6, height: 24e6, area: 864e12 },
      microwave: { frequencyGhz: 14.217, widthMhz: 103.4, lifetimeNs: 1.539, quality: 137, validityLimitGhz: 29.49 },
    };
    const el: ResonanceRow = { ...row(0x3e, 'gaas'), keyDimensions: { radius: 120, area: 45000 } };
    http.expectOne((r) => r.url === '/api/groups/g1/catalogue').flush({ ...emptyPage, items: [mw, el], total: 2 });
    harness.detectChanges();
    const host = harness.routeNativeElement as HTMLElement;
    const subs = Array.from(host.querySelectorAll('[data-test="geometry-sub"]')).map((e) => (e.textContent ?? '').replace(/\s+/g, ' ').trim());
    expect(subs[0]).toBe('width 36.00 · height 24.00 mm · area 864.0 mm² · ε_r = 2.25 · field not applicable');
    expect(subs[1]).toContain('radius 120 nm · area 45000 nm²');
    const widths = Array.from(host.querySelectorAll('[data-test="width-cell"]')).map((e) => e.textContent!.trim());
    expect(widths[0]).toBe('103 MHz');
    expect(host.querySelector('[data-test="raw-k2"]')!.textContent).toContain('k² 0.08880 mm⁻²');
    expect(host.textContent).toContain('14.2170 GHz');
  });

  it('pages by the API\'s cursors: next and previous put the cursor in the URL and the request, first drops it', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue?family=disk&sort=width');
    await wait(0);
    http.expectOne((r) => r.url === '/api/groups/g1/catalogue').flush({ ...emptyPage, items: [row(0xa, 'gaas')], total: 60, nextCursor: 'NEXT1' });
    harness.detectChanges();
    const host = harness.routeNativeElement as HTMLElement;
    const button = (name: string) => host.querySelector<HTMLButtonElement>(`[data-test="${name}"]`)!;
    expect(button('previous-page').disabled).toBe(true);
    expect(button('first-page').disabled).toBe(true);
    expect(button('next-page').disabled).toBe(false);

    button('next-page').click();
    await harness.fixture.whenStable();
    await wait(0);
    expect(TestBed.inject(Router).url).toBe('/catalogue?family=disk&sort=width&dir=asc&cursor=NEXT1');
    const next = http.expectOne((r) => r.url === '/api/groups/g1/catalogue');
    expect(next.request.params.get('cursor')).toBe('NEXT1');
    expect(next.request.params.get('family')).toBe('disk');
    expect(next.request.params.has('page')).toBe(false);
    next.flush({ ...emptyPage, items: [row(0xb, 'gaas')], total: 60, page: 2, nextCursor: 'NEXT2', prevCursor: 'PREV1' });
    harness.detectChanges();
    expect(host.querySelector('[data-test="page-label"]')!.textContent).toContain('Page 2 · rows 26–26');

    button('previous-page').click();
    await harness.fixture.whenStable();
    await wait(0);
    http.expectOne((r) => r.params.get('cursor') === 'PREV1').flush({ ...emptyPage, items: [row(0xa, 'gaas')], total: 60, nextCursor: 'NEXT1', prevCursor: 'PREV0' });
    harness.detectChanges();

    button('first-page').click();
    await harness.fixture.whenStable();
    await wait(0);
    expect(TestBed.inject(Router).url).toBe('/catalogue?family=disk&sort=width&dir=asc');
    const first = http.expectOne((r) => r.url === '/api/groups/g1/catalogue');
    expect(first.request.params.has('cursor')).toBe(false);
    expect(first.request.params.get('page')).toBe('1');
    first.flush(emptyPage);
  });

  it('says how the total was obtained and counts exactly on request', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue?emin=1');
    await wait(0);
    http
      .expectOne((r) => r.url === '/api/groups/g1/catalogue')
      .flush({ ...emptyPage, items: [row(0xa, 'gaas')], total: 41213, totalKind: 'estimated', countedAt: null, countAgeSeconds: null, nextCursor: 'N' });
    harness.detectChanges();
    const host = harness.routeNativeElement as HTMLElement;
    expect(host.querySelector('[data-test="count"]')!.textContent).toContain('about 41,200 resonances (estimated)');

    host.querySelector<HTMLButtonElement>('[data-test="count-exact"]')!.click();
    const exact = http.expectOne((r) => r.params.get('count') === 'exact');
    expect(exact.request.params.get('emin')).toBe('1');
    exact.flush({ ...emptyPage, items: [row(0xa, 'gaas')], total: 41213, totalKind: 'exact', countAgeSeconds: 0, nextCursor: 'N' });
    harness.detectChanges();
    expect(host.querySelector('[data-test="count"]')!.textContent!.trim()).toBe('41,213 resonances');
    expect(host.querySelector('[data-test="count-exact"]')).toBeNull();
    // Only the count was asked for: the page is not fetched again.
    http.verify();
  });

  it('shows a cached count with its age', async () => {
    const http = setUp();
    const harness = await RouterTestingHarness.create();
    await harness.navigateByUrl('/catalogue');
    await wait(0);
    http.expectOne((r) => r.url === '/api/groups/g1/catalogue').flush({ ...emptyPage, total: 100000, totalKind: 'cached', countAgeSeconds: 20 });
    harness.detectChanges();
    const host = harness.routeNativeElement as HTMLElement;
    expect(host.querySelector('[data-test="count"]')!.textContent).toContain('100,000 resonances (counted 20 s ago)');
    expect(host.querySelector('[data-test="count-exact"]')).not.toBeNull();
  });
});
