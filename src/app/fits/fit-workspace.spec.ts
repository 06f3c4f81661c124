import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { FakeEventSource } from '../core/testing/fake-event-source';
import { settle } from '../core/testing/next-request';
import { brushRange } from './brush-range';
import { fitChartOptions } from './fit-chart-options';
import { FitWorkspace } from './fit-workspace';
import { FitsApi } from '../core/api/fits-api';
import { type FitDetail, getFitRoute } from '../../../shared/api/fits';
import { answerFixture, fixtureId } from '../core/testing/answer-fixtures';

/** A brushEnd event as echarts emits it for a lineX brush bound to x axis 0. */
const brushEnd = (a: number, b: number) => ({ type: 'brushEnd', areas: [{ brushType: 'lineX', range: [120, 340], coordRange: [a, b], xAxisIndex: 0 }] });

describe('brushRange', () => {
  it('reads the dragged energies, low to high whichever way the drag went', () => {
    expect(brushRange(brushEnd(3.25, 3.5))).toEqual({ from: 3.25, to: 3.5 });
    expect(brushRange(brushEnd(3.5, 3.25))).toEqual({ from: 3.25, to: 3.5 });
  });

  it('ignores a cleared brush and a click with no width', () => {
    expect(brushRange({ type: 'brushEnd', areas: [] })).toBeNull();
    expect(brushRange(brushEnd(3.3, 3.3))).toBeNull();
    expect(
      brushRange({
        areas: [
          {
            coordRange: [
              [1, 2],
              [3, 4],
            ],
          },
        ],
      }),
    ).toBeNull();
    expect(brushRange(null)).toBeNull();
  });
});

describe('fitChartOptions', () => {
  it('offers a single lineX brush on the energy axis of the data', () => {
    const c = new Proxy({}, { get: () => '#777' }) as never;
    const options = fitChartOptions({ x: [1, 2, 3], y: [0.1, 0.9, 0.1] }, null, { from: 1.5, to: 2.5 }, c) as Record<string, unknown>;
    expect(options['brush']).toMatchObject({ xAxisIndex: 0, brushType: 'lineX', brushMode: 'single' });
    expect((options['dataZoom'] as { startValue: number; endValue: number }[])[0]).toMatchObject({ startValue: 1.5, endValue: 2.5 });
  });
});

describe('FitWorkspace', () => {
  it('sets the range fields from a drag across the chart', async () => {
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('designer')],
    });
    const fixture = TestBed.createComponent(FitWorkspace);
    fixture.detectChanges();
    await settle();
    const host = fixture.nativeElement as HTMLElement;
    const field = (name: string) => host.querySelector<HTMLInputElement>(`[data-test="${name}"]`)!;
    const actions: Record<string, unknown>[] = [];
    const workspace = fixture.componentInstance as unknown as { onChartInit(c: unknown): void; onBrush(e: unknown): void };
    workspace.onChartInit({ getOption: () => ({}), dispatchAction: (a: Record<string, unknown>) => actions.push(a) });
    await settle();
    // The brush is armed without a toolbox button.
    expect(actions).toContainEqual(expect.objectContaining({ type: 'takeGlobalCursor', key: 'brush' }));

    workspace.onBrush(brushEnd(3.41, 3.29));
    fixture.detectChanges();
    await fixture.whenStable();
    expect(Number(field('range-from').value)).toBeCloseTo(3.29, 10);
    expect(Number(field('range-to').value)).toBeCloseTo(3.41, 10);
    // The drawn band is cleared, since the view zooms to the new range.
    expect(actions.at(-1)).toEqual({ type: 'brush', areas: [] });

    // A cleared brush leaves the range as it was.
    workspace.onBrush({ type: 'brushEnd', areas: [] });
    fixture.detectChanges();
    await fixture.whenStable();
    expect(Number(field('range-from').value)).toBeCloseTo(3.29, 10);
  });
});

describe('FitWorkspace on a coarse computed spectrum', () => {
  const runId = fixtureId(0x601);
  const modelId = fixtureId(0x602);
  async function open(params: Record<string, string>) {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        provideFakeCurrentGroup('designer'),
        provideEchartsCore({ echarts: () => import('../core/charts/echarts') }),
      ],
    });
    const fixture = TestBed.createComponent(FitWorkspace);
    for (const [k, v] of Object.entries({ runId, ...params })) fixture.componentRef.setInput(k, v);
    fixture.detectChanges();
    await settle();
    const http = TestBed.inject(HttpTestingController);
    // A preview spectrum 0.005 meV apart: the 0.0025 meV range around a narrow peak falls between two samples.
    const energies = Array.from({ length: 401 }, (_, k) => 8 + k * 0.005);
    http
      .expectOne(`/api/groups/g1/runs/${runId}/spectrum`)
      .flush({ energies, pairs: [{ from: 0, to: 1 }], transmission: [energies.map(() => 0.5)], residual: energies.map(() => 0), reflection: null });
    fixture.detectChanges();
    await fixture.whenStable();
    return fixture.nativeElement as HTMLElement;
  }

  it('says the range is too coarse to fit and links a transmission sweep over it', async () => {
    const host = await open({ from: '8.3463013897', to: '8.3488434205', modelId, version: '2' });
    const note = host.querySelector('[data-test="coarse-spectrum"]')!;
    expect(note.textContent).toContain('Only 0 sample(s)');
    const link = host.querySelector<HTMLAnchorElement>('[data-test="finer-sweep"]')!.getAttribute('href')!;
    expect(link).toContain(`/g/lab/runs/new?modelId=${modelId}&version=2&runKind=transmission`);
    expect(link).toContain('windowMin=8.34630139');
    expect(link).toContain('windowPoints=200');
    // The range fields read nine figures, not the sixteen of the link's E ± 6Γ.
    expect(host.querySelector<HTMLInputElement>('[data-test="range-from"]')!.value).toBe('8.34630139');
  });

  it('says nothing when the range holds enough samples', async () => {
    const host = await open({ from: '8.2', to: '8.4', modelId });
    expect(host.querySelector('[data-test="coarse-spectrum"]')).toBeNull();
  });
});

describe('FitWorkspace on a queued fit', () => {
  const fitId = fixtureId(0xf1);
  const traceId = fixtureId(0x71);
  const queuedFit: FitDetail = answerFixture(getFitRoute, {
    id: fitId,
    runId: null,
    traceId,
    modelId: null,
    modelName: null,
    modelVersionId: null,
    request: { source: { kind: 'trace', traceId }, lineshape: 'thermal-fano', background: 'linear', peaks: 3, temperatureMK: 100 },
    status: 'queued',
    progressFraction: 0,
    attempt: 0,
    error: null,
    comparison: null,
    deviceName: 'R3',
    createdBy: null,
    createdAt: '2026-01-01T00:00:00.000Z',
    finishedAt: null,
    result: null,
    catalogueIds: [],
  });

  it('follows the fit on its event stream, then loads it once when it is done', async () => {
    FakeEventSource.made = [];
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('viewer')],
    });
    TestBed.inject(FitsApi).eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
    const http = TestBed.inject(HttpTestingController);
    const fixture = TestBed.createComponent(FitWorkspace);
    fixture.componentRef.setInput('fitId', fitId);
    fixture.detectChanges();
    await settle();
    http.expectOne(`/api/groups/g1/fits/${fitId}`).flush(queuedFit);
    // The trace behind the fit is left unanswered: its chart needs echarts and a canvas.
    http.expectOne(`/api/groups/g1/traces/${traceId}`);
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    const progress = () => host.querySelector('[data-test="fit-progress"]')?.textContent ?? '';
    expect(progress()).toContain('0 %');
    expect(FakeEventSource.made.map((s) => s.url)).toEqual([`/api/groups/g1/fits/${fitId}/events`]);

    FakeEventSource.last!.emit('progress', { id: fitId, status: 'running', progressFraction: 0.4, attempt: 1, error: null });
    fixture.detectChanges();
    expect(progress()).toContain('40 %');
    // No polling while the stream lasts.
    await settle();
    http.expectNone(`/api/groups/g1/fits/${fitId}`);

    FakeEventSource.last!.emit('progress', { id: fitId, status: 'failed', progressFraction: 0.4, attempt: 1, error: 'the worker ran out of memory' });
    FakeEventSource.last!.emit('done', { status: 'failed' });
    expect(FakeEventSource.last!.closed).toBe(true);
    await settle();
    http.expectOne(`/api/groups/g1/fits/${fitId}`).flush({ ...queuedFit, status: 'failed', error: 'the worker ran out of memory' });
    fixture.detectChanges();
    expect(host.querySelector('[data-test="fit-progress"]')).toBeNull();
    expect(host.textContent).toContain('The fit failed: the worker ran out of memory');
    await settle();
    http.expectNone(`/api/groups/g1/fits/${fitId}`);
  });
});
