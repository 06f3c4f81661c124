import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { By } from '@angular/platform-browser';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { FakeEventSource } from '../core/testing/fake-event-source';
import { sampleRun } from './sample-run';
import { settle } from '../core/testing/next-request';
import { RunDetail } from './run-detail';
import { RunsApi } from './runs-api';
import { TransmissionChart } from './transmission-chart';

const detail = { ...sampleRun, thresholds: [], poles: [], spectrum: null };

describe('RunDetail', () => {
  it('follows its run on the event stream, in plain words, and loads the run again when it ends', async () => {
    FakeEventSource.made = [];
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        provideFakeCurrentGroup('viewer'),
      ],
    });
    TestBed.inject(RunsApi).eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
    const http = TestBed.inject(HttpTestingController);
    const fixture = TestBed.createComponent(RunDetail);
    fixture.componentRef.setInput('runId', 'r1');
    fixture.detectChanges();
    await settle();
    http.expectOne('/api/groups/g1/runs/r1').flush(detail);
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    const stage = () => host.querySelector('[data-test="stage"]')?.textContent ?? '';
    expect(stage()).toContain('searching the contour · 10 %');
    expect(FakeEventSource.made.map((s) => s.url)).toEqual(['/api/groups/g1/runs/r1/events']);

    FakeEventSource.last!.emit('progress', { status: 'running', progress: { stage: 'transmission', fraction: 0.9 } });
    fixture.detectChanges();
    expect(stage()).toContain('transmission spectrum · 90 %');

    FakeEventSource.last!.emit('done');
    expect(FakeEventSource.last!.closed).toBe(true);
    await settle();
    // Ends cancelled: a completed run would draw its charts, which need echarts and a canvas.
    const finished = { ...detail, status: 'cancelled', progress: null };
    // One GET gives the exact final status, then the page loads the full result.
    http.expectOne('/api/groups/g1/runs/r1').flush(finished);
    await settle();
    http.expectOne('/api/groups/g1/runs/r1').flush(finished);
    fixture.detectChanges();
    expect(host.querySelector('[data-test="stage"]')).toBeNull();
    expect(host.textContent).toContain('Cancelled');
    // A viewer gets no cancel button.
    expect(host.querySelector('[data-test="cancel"]')).toBeNull();
    http.verify();
  });

  it('shows the launch note, and elapsed time and time left beside the progress', async () => {
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('viewer')],
    });
    TestBed.inject(RunsApi).eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
    const http = TestBed.inject(HttpTestingController);
    const fixture = TestBed.createComponent(RunDetail);
    fixture.componentRef.setInput('runId', 'r1');
    fixture.detectChanges();
    await settle();
    const startedAt = new Date(Date.now() - 40_000).toISOString();
    http.expectOne('/api/groups/g1/runs/r1').flush({
      ...detail, startedAt, note: 'ry scan, second point', estimate: { expectedSeconds: 100 }, progress: { stage: 'contour', fraction: 0.4 },
    });
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    expect(host.querySelector('[data-test="note"]')!.textContent).toContain('ry scan, second point');
    const stage = host.querySelector('[data-test="stage"]')!.textContent!;
    // 40 % after 40 s: 60 s left by the progress so far (past 30 % the estimate no longer counts).
    expect(stage).toMatch(/4\d s elapsed/);
    expect(stage).toMatch(/about (59 s|1 min 0[01] s) left/);
    http.match(() => true);
  });
});

describe('RunDetail reflection toggle', () => {
  const spectrum = {
    energies: [3, 4, 5],
    pairs: [{ from: 0, to: 1 }, { from: 1, to: 0 }],
    transmission: [[0.2, 0.5, 0.9], [0.2, 0.5, 0.9]],
    residual: [1e-14, 1e-14, 1e-14],
    reflection: [[0.8, 0.5, 0.1], [0.8, 0.5, 0.1]],
  };
  const leads = [
    { name: 'source', side: 'left', width: 8 },
    { name: 'drain', side: 'right', width: 8 },
  ];

  async function open(stored: object) {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        provideFakeCurrentGroup('viewer'),
        // The chart's view is what is checked; echarts itself never loads here.
        provideEchartsCore({ echarts: () => new Promise<never>(() => {}) }),
      ],
    });
    TestBed.inject(RunsApi).eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
    const http = TestBed.inject(HttpTestingController);
    const fixture = TestBed.createComponent(RunDetail);
    fixture.componentRef.setInput('runId', 'r1');
    fixture.detectChanges();
    await settle();
    http.expectOne('/api/groups/g1/runs/r1').flush({ ...detail, kind: 'transmission', status: 'completed', leads, spectrum: stored });
    fixture.detectChanges();
    http.match(() => true);
    const host = fixture.nativeElement as HTMLElement;
    const chart = () => fixture.debugElement.query(By.directive(TransmissionChart)).componentInstance as TransmissionChart;
    return { fixture, host, chart };
  }

  it('draws R per lead, named by its lead, only when asked and only beside T', async () => {
    const { fixture, host, chart } = await open(spectrum);
    const toggle = host.querySelector('[data-test="show-reflection"]');
    expect(toggle?.textContent).toContain('Reflection');
    expect(chart().view().reflection ?? null).toBeNull();

    (host.querySelector('[data-test="show-reflection"] input') as HTMLInputElement).click();
    fixture.detectChanges();
    expect(chart().view().reflection).toEqual([
      { lead: 'source', values: [0.8, 0.5, 0.1] },
      { lead: 'drain', values: [0.8, 0.5, 0.1] },
    ]);

    // G has a unit R has not: in the conductance view the reflection is not drawn, and the box is off.
    (host.querySelector('[data-test="show-conductance"] button') as HTMLButtonElement).click();
    fixture.detectChanges();
    expect(chart().view().reflection ?? null).toBeNull();
    expect((host.querySelector('[data-test="show-reflection"] input') as HTMLInputElement).disabled).toBe(true);
  });

  it('offers no reflection for a run stored before reflection was kept', async () => {
    const { host, chart } = await open({ ...spectrum, reflection: null });
    expect(chart()).toBeTruthy();
    expect(host.querySelector('[data-test="show-reflection"]')).toBeNull();
  });
});
