import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { Role } from '../../../shared/api/enums';
import { getModelRoute } from '../../../shared/api/models';
import { cavityModelSchema } from '../../../shared/model/cavity-model';
import { deriveFigures } from '../../../shared/model/derived-figures';
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
    const figures = deriveFigures(cavityModelSchema.parse(document), 400);
    const detail = answerFixture(getModelRoute, {
      id,
      name: 'Flake',
      family: 'disk',
      physics: 'electrons',
      latestVersion: 1,
      material: 'custom',
      spacingNm: 0.142,
      fieldT: 0,
      siteCount: 400,
      leadCount: 0,
      keyDimensions: { radius: 2 },
      updatedAt: '2025-01-01T10:00:00Z',
      createdBy: null,
      document,
      versions: [{ version: 1, createdAt: '2025-01-01T10:00:00Z', createdBy: null, usedByRuns: 0 }],
      derived: { ...figures, magneticLength: null },
    });
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('designer')],
    });
    const fixture = TestBed.createComponent(RunLauncher);
    fixture.componentRef.setInput('modelId', id);
    fixture.detectChanges();
    await fixture.whenStable();
    const http = TestBed.inject(HttpTestingController);
    http.expectOne((r) => r.url === '/api/groups/g1/models').flush({ items: [], total: 0 });
    http.expectOne(`/api/groups/g1/models/${id}`).flush(detail);
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    const type = (path: string, value: string) => {
      const input = host.querySelector<HTMLInputElement>(`[data-field="${path}"]`)!;
      input.value = value;
      input.dispatchEvent(new Event('input'));
      fixture.detectChanges();
    };
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
});
