import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { z } from 'zod';
import type { Role } from '../../../shared/api/enums';
import { getModelRoute } from '../../../shared/api/models';
import { cavityModelSchema } from '../../../shared/model/cavity-model';
import { deriveFigures } from '../../../shared/model/derived-figures';
import { microwaveWindow, wavenumberSquared } from '../../../shared/units/microwave';
import { answerFixture, fixtureId } from '../core/testing/answer-fixtures';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { RunLauncher } from './run-launcher';

async function render(role: Role) {
  TestBed.configureTestingModule({
    providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup(role)],
  });
  const fixture = TestBed.createComponent(RunLauncher);
  fixture.detectChanges();
  await fixture.whenStable();
  const http = TestBed.inject(HttpTestingController);
  http.expectOne((r) => r.url === '/api/groups/g1/models').flush({ items: [], total: 0 });
  fixture.detectChanges();
  return fixture.nativeElement as HTMLElement;
}

type ModelAnswer = z.input<(typeof getModelRoute)['answer']['schema']>;

/** A model detail answer for one version of `document`, with its figures derived for `sites` sites. */
function modelDetail(
  id: string,
  document: ModelAnswer['document'] & object,
  sites: number,
  summary: Pick<ModelAnswer, 'name' | 'family' | 'physics' | 'material' | 'spacingNm' | 'leadCount' | 'keyDimensions'>,
) {
  const figures = deriveFigures(cavityModelSchema.parse(document), sites);
  return answerFixture(getModelRoute, {
    id,
    ...summary,
    latestVersion: 1,
    fieldT: 0,
    siteCount: sites,
    updatedAt: '2025-01-01T10:00:00Z',
    createdBy: null,
    document,
    versions: [{ version: 1, createdAt: '2025-01-01T10:00:00Z', createdBy: null, usedByRuns: 0 }],
    derived: { ...figures, magneticLength: null },
  });
}

/** The launcher opened on one model (its detail answered), with a helper that types into a field. */
async function renderWithModel(id: string, detail: unknown) {
  TestBed.configureTestingModule({
    providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('designer')],
  });
  const fixture = TestBed.createComponent(RunLauncher);
  fixture.componentRef.setInput('modelId', id);
  fixture.detectChanges();
  await fixture.whenStable();
  const http = TestBed.inject(HttpTestingController);
  http.expectOne((r) => r.url === '/api/groups/g1/models').flush({ items: [], total: 0 });
  http.expectOne(`/api/groups/g1/models/${id}`).flush(detail as object);
  fixture.detectChanges();
  const host = fixture.nativeElement as HTMLElement;
  const type = (path: string, value: string) => {
    const input = host.querySelector<HTMLInputElement>(`[data-field="${path}"]`)!;
    input.value = value;
    input.dispatchEvent(new Event('input'));
    fixture.detectChanges();
  };
  return { http, host, type };
}

describe('RunLauncher', () => {
  it('shows viewers and reviewers no launch button', async () => {
    for (const role of ['viewer', 'reviewer'] as const) {
      TestBed.resetTestingModule();
      const host = await render(role);
      expect(host.querySelector('[data-test="launch"]')).toBeNull();
    }
  });

  it('shows designers the launch button', async () => {
    const host = await render('designer');
    expect(host.querySelector('[data-test="launch"]')).not.toBeNull();
  });

  it('reads a graphene model in meV with t in eV, and checks the Dirac picture at the window end farthest from E_D', async () => {
    const id = fixtureId(0x501);
    const document = {
      name: 'Flake',
      spacing: 0.142,
      lattice: { kind: 'honeycomb' as const, hopping: 2.7 },
      grid: { nx: 40, ny: 24 },
      shape: { kind: 'disk' as const, cx: 2.5, cy: 2.6, radius: 2 },
      field: 0,
      leads: [],
      potential: [],
    };
    const detail = modelDetail(id, document, 400, {
      name: 'Flake',
      family: 'disk',
      physics: 'electrons',
      material: 'custom',
      spacingNm: 0.142,
      leadCount: 0,
      keyDimensions: { radius: 2 },
    });
    const { http, host, type } = await renderWithModel(id, detail);
    expect(host.querySelector('[data-test="graphene-energies"]')!.textContent).toContain('t = 2.700 eV (2700 meV)');
    // |E − E_D| = 900 meV at E min, above t/4 = 675 meV: the warning names that end, not E max.
    type('window.emin', '-900');
    type('window.emax', '300');
    const warning = host.querySelector('[data-test="validity"]')!.textContent!;
    expect(warning).toContain('Model validity at E = -900 meV');
    expect(warning).toContain('Dirac cone is warped');
    // 100–300 meV: within the Dirac picture, read at 300 meV, the far end.
    type('window.emin', '100');
    expect(host.querySelector('[data-test="validity"]')).toBeNull();
    expect(host.querySelector('[data-test="dirac-validity"]')!.textContent).toContain('At E = 300 meV');
    http.match(() => true);
  });

  it('takes a microwave window in GHz and MHz and sends it as k², the eigenvalue of the engine', async () => {
    const id = fixtureId(0x502);
    const document = {
      name: 'Two-port box',
      physics: { kind: 'microwave' as const, permittivity: 2.2, height: 5 },
      spacing: 1,
      grid: { nx: 36, ny: 24 },
      shape: { kind: 'rectangle' as const, x0: 0, y0: 0, width: 36, height: 24 },
      leads: [
        { side: 'left' as const, start: 2, width: 12, offset: 0, name: 'port 1' },
        { side: 'right' as const, start: 10, width: 12, offset: 0, name: 'port 2' },
      ],
      field: 0,
      potential: [],
    };
    const detail = modelDetail(id, document, 864, {
      name: 'Two-port box',
      family: 'rectangle',
      physics: 'microwave',
      material: 'eps_r=2.2',
      spacingNm: 1,
      leadCount: 2,
      keyDimensions: { width: 36e6, height: 24e6 },
    });
    const { http, host, type } = await renderWithModel(id, detail);
    const labels = Array.from(host.querySelectorAll('mat-label'), (l) => l.textContent!.trim());
    expect(labels).toContain('f min (GHz)');
    expect(labels).toContain('Largest width Γ_f (MHz)');
    expect(labels.join(' ')).not.toContain('meV');
    expect(host.querySelector('pw-energy-axis')!.textContent).toContain('f (GHz)');
    // The default window (40–55 % of the 2D limit) is well resolved: the note speaks of f max, not of meV or t.
    const note = host.querySelector('[data-test="microwave-validity"]')!.textContent!;
    expect(note).toContain('At f max');
    expect(note).not.toContain('hopping t');
    type('window.emin', '8');
    type('window.emax', '11');
    type('window.gammaMax', '300');
    await new Promise((r) => setTimeout(r, 450));
    const sent = http.match((r) => r.url === '/api/groups/g1/runs/estimate').at(-1)!;
    // k = 2π f √ε_r / c for each edge; Γ_f ≤ 300 MHz at f max sets the k² width bound (shared/units/microwave.ts).
    expect(sent.request.body.window).toEqual(microwaveWindow(8, 11, 300, 2.2));
    expect(sent.request.body.window.emax).toBeCloseTo(wavenumberSquared(11, 2.2), 12);
    http.match(() => true);
  });
});
