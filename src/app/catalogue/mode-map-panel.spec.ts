import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { type ComponentFixture, TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { ModeMapPayload } from '../../../shared/api/mode-maps';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { fixtureId } from '../core/testing/answer-fixtures';
import { ModeMapPanel } from './mode-map-panel';

function b64(values: number[]): string {
  const bytes = new Uint8Array(Float32Array.from(values).buffer);
  return btoa(String.fromCharCode(...bytes));
}

/** A 4 × 3 square map whose current is rounding noise (1e-12), as a bound state's is. */
function stored(kind: 'bound' | 'pole'): ModeMapPayload {
  const n = 12;
  const vec: number[] = [];
  for (let s = 0; s < n; s++) vec.push(1e-12 * Math.cos(s), 1e-12 * Math.sin(s));
  return {
    engineVersion: 'test',
    state: { kind, energy: 2.185, width: kind === 'bound' ? 0 : 0.01, label: '' },
    unit: '1/ps',
    spacingNm: 5,
    lattice: 'square',
    grid: { nx: 4, ny: 3 },
    mask: btoa(String.fromCharCode(0xff, 0xf0)),
    psi: b64(new Array(2 * n).fill(0.2)),
    vectors: b64(vec),
    leads: [],
    kirchhoffResidual: null,
    ldos: null,
    husimi: null,
  };
}

/** A 4 × 2 honeycomb flake (a_CC = 0.142 nm), every site set; with `husimi`, a valley-resolved map of three points, the third empty. */
function honeycomb(husimi: boolean): ModeMapPayload {
  const n = 8;
  const vec: number[] = [];
  for (let s = 0; s < n; s++) vec.push(1, 0);
  const four = (a: number[]) => b64(a);
  return {
    ...stored('pole'),
    spacingNm: 0.142,
    lattice: 'honeycomb',
    grid: { nx: 4, ny: 2 },
    mask: btoa(String.fromCharCode(0xff)),
    psi: b64(new Array(2 * n).fill(0.3)),
    vectors: b64(vec),
    husimi: husimi
      ? {
          sigmaNm: 0.4,
          gridNm: 0.2,
          directions: [0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2],
          angularResolution: 0.3,
          meanWavenumber: 4,
          peakThreshold: 0.3,
          points: b64([0.1, 0.1, 0.3, 0.1, 0.35, 0.2]),
          distribution: four([1, 0, 0, 0, 0.2, 0.6, 0, 0, 0, 0, 0, 0]),
          vectorSum: b64([0, 0, 0, 0, 0, 0]),
          kineticEnergy: b64([900, 900, 10]),
          peaks: [
            { point: 0, angle: 0, share: 1 },
            { point: 1, angle: Math.PI / 2, share: 0.75 },
          ],
          diracEnergy: 0,
          diracCutoff: 0.01,
          carrier: b64([1, 1, 0]),
          valleyShare: b64([1, 0.25, NaN]),
          valleys: [
            { name: 'K', centre: [17, 0], distribution: four([1, 0, 0, 0, 0.2, 0, 0, 0, 0, 0, 0, 0]), vectorSum: b64([0, 0, 0, 0, 0, 0]), peaks: [{ point: 0, angle: 0, share: 1 }] },
            { name: 'K′', centre: [-17, 0], distribution: four([0, 0, 0, 0, 0, 0.6, 0, 0, 0, 0, 0, 0]), vectorSum: b64([0, 0, 0, 0, 0, 0]), peaks: [{ point: 1, angle: Math.PI / 2, share: 1 }] },
          ],
        }
      : null,
  };
}

describe('ModeMapPanel', () => {
  afterEach(() => vi.restoreAllMocks());
  let fixture: ComponentFixture<ModeMapPanel>;

  async function render(kind: 'bound' | 'pole' | 'honeycomb') {
    vi.spyOn(HTMLCanvasElement.prototype, 'getContext').mockReturnValue({
      createImageData: (w: number, h: number) => ({ data: new Uint8ClampedArray(4 * w * h) }),
      putImageData: () => undefined,
    } as never);
    vi.spyOn(HTMLCanvasElement.prototype, 'toDataURL').mockReturnValue('data:image/png;base64,');
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('viewer')],
    });
    const resonanceId = fixtureId(0x701);
    fixture = TestBed.createComponent(ModeMapPanel);
    fixture.componentRef.setInput('groupId', 'g1');
    fixture.componentRef.setInput('resonanceId', resonanceId);
    fixture.componentRef.setInput('modelId', fixtureId(0x702));
    fixture.componentRef.setInput('modelVersion', 1);
    fixture.componentRef.setInput('energy', 2.185);
    fixture.componentRef.setInput('leads', []);
    fixture.detectChanges();
    await fixture.whenStable();
    TestBed.inject(HttpTestingController).expectOne(`/api/groups/g1/resonances/${resonanceId}/current`).flush(kind === 'honeycomb' ? honeycomb(false) : stored(kind));
    fixture.detectChanges();
    await fixture.whenStable();
    return fixture.nativeElement as HTMLElement;
  }

  it('draws no current arrows for a bound state, whose current is rounding, and says why', async () => {
    const host = await render('bound');
    expect(host.querySelector('[data-test="bound-current"]')!.textContent).toContain('carries no net current');
    expect(host.querySelectorAll('[data-test="layer-current"] line, [data-test="layer-current"] path').length).toBe(0);
    expect(host.querySelector<HTMLInputElement>('[data-test="layer-toggle-current"] input')!.disabled).toBe(true);
  });

  it('draws the arrows of a resonance, however small its current', async () => {
    const host = await render('pole');
    expect(host.querySelector('[data-test="bound-current"]')).toBeNull();
    expect(host.querySelectorAll('[data-test="layer-current"] line').length).toBeGreaterThan(0);
  });

  it('computes a Husimi map on graphene and shows it by valley, with the valley share and the empty points', async () => {
    const host = await render('honeycomb');
    expect(host.querySelector('[data-test="husimi-honeycomb"]')!.textContent).toContain('ray direction');
    host.querySelector<HTMLButtonElement>('[data-test="compute-husimi"]')!.click();
    const http = TestBed.inject(HttpTestingController);
    const req = http.expectOne('/api/groups/g1/mode-maps');
    expect(req.request.method).toBe('POST');
    req.flush({
      id: fixtureId(0x703),
      status: 'completed',
      progress: null,
      params: {},
      resonanceId: fixtureId(0x701),
      error: null,
      createdAt: '2026-12-02T10:00:00.000Z',
      finishedAt: '2026-12-02T10:00:01.000Z',
      result: honeycomb(true),
    });
    fixture.detectChanges();
    await fixture.whenStable();
    const legend = host.querySelector('[data-test="husimi-valleys"]')!.textContent!;
    // Valley K's share over the two non-empty points: (1 + 0.25)/2.
    expect(legend).toContain('62.5 %');
    expect(legend).toContain('25–100 %');
    expect(legend).toContain('ray direction');
    expect(host.querySelector('[data-test="husimi-empty"]')!.textContent).toContain('1 of 3 sample points');
    // σ = 0.4 nm on a 0.37 nm × 0.28 nm flake: the map is blurred, and the panel says so.
    expect(host.querySelector('[data-test="husimi-wide"]')).not.toBeNull();
    const glyphs = () => Array.from(host.querySelectorAll('[data-test="layer-husimi"] path'));
    expect(glyphs().map((g) => g.getAttribute('fill'))).toEqual(['rgb(254,97,0)', 'rgb(139,132,191)', '#fe6100']);
    const peaks = () => host.querySelectorAll('[data-test="layer-peaks"] line').length / 2;
    expect(peaks()).toBe(2);
    host.querySelector<HTMLButtonElement>('[data-test="valley-K2"] button')!.click();
    fixture.detectChanges();
    await fixture.whenStable();
    expect(peaks()).toBe(1);
    expect(glyphs().every((g) => g.getAttribute('fill') === '#fe6100')).toBe(true);
    expect(host.querySelector('[data-test="mode-map-svg"]')!.getAttribute('aria-label')).toContain('valley K′');
  });
});
