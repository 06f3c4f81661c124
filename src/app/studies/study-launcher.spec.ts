import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { runningStudy } from '../core/testing/sample-study';
import { answerFixture, sampleModelVersion } from '../core/testing/answer-fixtures';
import { getModelRoute } from '../../../shared/api/models';
import { StudyLauncher } from './study-launcher';

const modelId = '5f0c1f3e-2d4a-4b6c-8e9f-0a1b2c3d4e5f';
const model = answerFixture(getModelRoute, {
  id: modelId,
  name: 'Dot A',
  family: 'disk',
  latestVersion: 2,
  material: 'gaas',
  physics: 'electrons',
  spacingNm: 5,
  fieldT: 0.25,
  siteCount: 400,
  leadCount: 0,
  keyDimensions: { radius: 50 },
  updatedAt: '2026-12-02T00:00:00Z',
  createdBy: null,
  versions: [
    { version: 1, createdAt: '2026-12-01T00:00:00Z', createdBy: null, usedByRuns: 0 },
    { version: 2, createdAt: '2026-12-02T00:00:00Z', createdBy: null, usedByRuns: 0 },
  ],
  document: {
    name: 'Dot A',
    spacing: 5,
    material: 'gaas',
    field: 0.25,
    grid: { nx: 24, ny: 24 },
    shape: { kind: 'disk', cx: 60, cy: 60, radius: 50 },
    leads: [],
    potential: [{ kind: 'block', x0: 20, y0: 20, width: 40, height: 40, value: 1.5 }],
  },
  derived: sampleModelVersion().derived,
});

async function setUp(kind: 'sweep' | 'ensemble') {
  vi.useFakeTimers();
  TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('designer')] });
  const http = TestBed.inject(HttpTestingController);
  const fixture = TestBed.createComponent(StudyLauncher);
  fixture.componentRef.setInput('kind', kind);
  fixture.componentRef.setInput('modelId', modelId);
  fixture.detectChanges();
  await vi.advanceTimersByTimeAsync(0);
  http.expectOne((r) => r.url === '/api/groups/g1/models').flush({ items: [model], total: 1 });
  http.expectOne(`/api/groups/g1/models/${modelId}`).flush(model);
  fixture.detectChanges();
  return { http, fixture, host: fixture.nativeElement as HTMLElement };
}

function type(host: HTMLElement, field: string, value: string): void {
  const input = host.querySelector<HTMLInputElement>(`[data-field="${field}"]`)!;
  input.value = value;
  input.dispatchEvent(new Event('input'));
}

describe('StudyLauncher', () => {
  afterEach(() => vi.useRealTimers());

  it('offers the numbers of the model as parameters, shows the estimate and launches the sweep', async () => {
    const { http, fixture, host } = await setUp('sweep');
    const component = fixture.componentInstance as unknown as { paths: () => { path: string }[] };
    expect(component.paths().map((p) => p.path)).toEqual(expect.arrayContaining(['field', 'potential.0.value']));
    expect(host.textContent).toContain('field = 0.25');

    type(host, 'sweep.values', '0:2:3');
    fixture.detectChanges();
    expect(host.querySelector('[data-test=values-note]')!.textContent).toContain('3 step(s): 0, 1, 2');
    await vi.advanceTimersByTimeAsync(400);
    const estimate = http.expectOne('/api/groups/g1/studies/estimate');
    expect(estimate.request.body).toMatchObject({ kind: 'sweep', modelId, version: 2, parameters: [{ path: 'field', values: { from: 0, to: 2, count: 3 } }] });
    estimate.flush({ steps: 3, secondsPerStep: 4, secondsOneWorker: 12, sites: 400 });
    fixture.detectChanges();
    expect(host.querySelector('[data-test=estimate]')!.textContent).toContain('3');
    expect(host.querySelector('[data-test=estimate]')!.textContent).toContain('400');

    const navigate = vi.spyOn(TestBed.inject(Router), 'navigate').mockResolvedValue(true);
    host.querySelector<HTMLButtonElement>('[data-test=launch]')!.click();
    const create = http.expectOne('/api/groups/g1/studies');
    expect(create.request.method).toBe('POST');
    expect(create.request.body).toMatchObject({ kind: 'sweep', window: { emin: 1, emax: 10, gammaMax: 1 } });
    create.flush(runningStudy);
    expect(navigate).toHaveBeenCalledWith(['/g', 'lab', 'studies', runningStudy.id]);
  });

  it('does not send an ensemble without the resonance to follow, and says so', async () => {
    const { http, fixture, host } = await setUp('ensemble');
    host.querySelector<HTMLButtonElement>('[data-test=launch]')!.click();
    fixture.detectChanges();
    expect(host.querySelector('[data-test=form-error]')!.textContent).toContain('energy of the resonance to follow');
    http.expectNone('/api/groups/g1/studies');

    type(host, 'ensemble.follow', '3.1');
    fixture.detectChanges();
    host.querySelector<HTMLButtonElement>('[data-test=launch]')!.click();
    const create = http.expectOne('/api/groups/g1/studies');
    expect(create.request.body).toMatchObject({
      kind: 'ensemble',
      realisations: 20,
      seed: 1,
      roughness: { rmsNm: 2, correlationNm: 20 },
      follow: { energy: 3.1 },
    });
  });

  it('shows the server’s reason when the launch is refused', async () => {
    const { http, fixture, host } = await setUp('sweep');
    host.querySelector<HTMLButtonElement>('[data-test=launch]')!.click();
    http.expectOne('/api/groups/g1/studies').flush(
      {
        status: 400,
        code: 'invalid_request',
        message: 'The request has errors.',
        issues: [{ path: 'parameters.0.path', message: 'field does not lead to a number' }],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    fixture.detectChanges();
    expect(host.querySelector('[data-test=form-error]')!.textContent).toContain('field does not lead to a number');
  });
});
