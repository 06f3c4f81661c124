import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
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

describe('ModeMapPanel', () => {
  afterEach(() => vi.restoreAllMocks());

  async function render(kind: 'bound' | 'pole') {
    vi.spyOn(HTMLCanvasElement.prototype, 'getContext').mockReturnValue({
      createImageData: (w: number, h: number) => ({ data: new Uint8ClampedArray(4 * w * h) }),
      putImageData: () => undefined,
    } as never);
    vi.spyOn(HTMLCanvasElement.prototype, 'toDataURL').mockReturnValue('data:image/png;base64,');
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('viewer')],
    });
    const resonanceId = fixtureId(0x701);
    const fixture = TestBed.createComponent(ModeMapPanel);
    fixture.componentRef.setInput('groupId', 'g1');
    fixture.componentRef.setInput('resonanceId', resonanceId);
    fixture.componentRef.setInput('modelId', fixtureId(0x702));
    fixture.componentRef.setInput('modelVersion', 1);
    fixture.componentRef.setInput('energy', 2.185);
    fixture.componentRef.setInput('leads', []);
    fixture.detectChanges();
    await fixture.whenStable();
    TestBed.inject(HttpTestingController).expectOne(`/api/groups/g1/resonances/${resonanceId}/current`).flush(stored(kind));
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
});
