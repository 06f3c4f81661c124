import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { By } from '@angular/platform-browser';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { FakeEventSource } from '../core/testing/fake-event-source';
import { fixtureId, sampleEstimate, sampleResonance, sampleRunDetail } from '../core/testing/answer-fixtures';
import { settle } from '../core/testing/next-request';
import { RunDetail } from './run-detail';
import { RunsApi } from './runs-api';
import { Component, input } from '@angular/core';
import { PolePlaneChart } from '../core/charts/pole-plane-chart';
import { TransmissionChart } from './transmission-chart';
import type { ResonanceRow } from '../../../shared/api/resonance-row';

/** Stand-ins for the charts (echarts needs a canvas): they keep the inputs the page binds. */
@Component({ selector: 'pw-pole-plane-chart', template: '' })
class PlaneStub {
  readonly poles = input<unknown>();
  readonly thresholds = input<unknown>();
  readonly window = input<unknown>();
  readonly view = input<unknown>();
  readonly validityLimit = input<unknown>();
  readonly unit = input<unknown>();
  readonly highlightId = input<unknown>();
}
@Component({ selector: 'pw-transmission-chart', template: '' })
class TransmissionStub {
  readonly spectrum = input<unknown>();
  readonly poles = input<unknown>();
  readonly thresholds = input<unknown>();
  readonly leadNames = input<unknown>();
  readonly view = input<unknown>();
}

const pole = (over: Partial<ResonanceRow>): ResonanceRow =>
  sampleResonance({ family: 'rectangle', keyDimensions: {}, energy: 8, width: 0.01, lifetimePs: 0.0658, quality: 800, partialWidths: [], ...over });

async function completedPage(poles: ResonanceRow[], extra: Record<string, unknown> = {}) {
  TestBed.configureTestingModule({
    providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('viewer')],
  });
  TestBed.overrideComponent(RunDetail, { remove: { imports: [PolePlaneChart, TransmissionChart] }, add: { imports: [PlaneStub, TransmissionStub] } });
  const http = TestBed.inject(HttpTestingController);
  const fixture = TestBed.createComponent(RunDetail);
  fixture.componentRef.setInput('runId', 'r1');
  fixture.detectChanges();
  await settle();
  http.expectOne('/api/groups/g1/runs/r1').flush({ ...detail, status: 'completed', progress: null, finishedAt: '2025-01-01T10:01:00Z', poles, ...extra });
  fixture.detectChanges();
  return fixture;
}

const detail = sampleRunDetail();

describe('RunDetail', () => {
  it('follows its run on the event stream, in plain words, and loads the run again when it ends', async () => {
    FakeEventSource.made = [];
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('viewer')],
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

    FakeEventSource.last!.emit('progress', {
      id: detail.id,
      status: 'running',
      progress: { stage: 'transmission', fraction: 0.9 },
      attempts: 1,
      error: null,
      resonanceCount: null,
    });
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
      ...detail,
      startedAt,
      note: 'ry scan, second point',
      estimate: sampleEstimate({ expectedSeconds: 100 }),
      progress: { stage: 'contour', fraction: 0.4 },
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

  it('marks the poles above the lattice-validity limit and says how many, in the table and on the charts', async () => {
    const v = { limit: 8.69, wavelengthSpacings: 9.1 };
    const fixture = await completedPage([
      pole({ id: fixtureId(0xa), energy: 7.8, validity: { ...v, aboveLimit: false } }),
      pole({ id: fixtureId(0xb), energy: 9.2, validity: { ...v, aboveLimit: true } }),
      pole({ id: fixtureId(0xc), energy: 9.9, validity: { ...v, aboveLimit: true } }),
    ]);
    const host = fixture.nativeElement as HTMLElement;
    expect(host.querySelector('[data-test="validity-line"]')!.textContent).toContain(
      '2 of 3 poles lie above the energy where the lattice is trusted (8.690 meV)',
    );
    const cells = Array.from(host.querySelectorAll('[data-test="validity-cell"]'));
    expect(cells.map((c) => !!c.querySelector('[data-test="above-limit"]'))).toEqual([false, true, true]);
    expect(cells[1].querySelector('[data-test="above-limit"]')!.getAttribute('aria-label')).toContain('fewer than 10 lattice spacings');
    // The electron table keeps its meV columns and shows no frequencies.
    expect(host.querySelector('[data-test="frequency"]')).toBeNull();
    const plane = fixture.debugElement.query((d) => d.componentInstance instanceof PlaneStub).componentInstance as PlaneStub;
    expect(plane.validityLimit()).toBe(8.69);
    expect((plane.poles() as { aboveLimit: boolean }[]).map((p) => p.aboveLimit)).toEqual([false, true, true]);
  });

  it("shows a microwave run's poles as frequency, width, lifetime and Q from their stored figures", async () => {
    const fixture = await completedPage(
      [
        pole({
          id: fixtureId(0xd),
          physics: 'microwave',
          energy: 1.234,
          width: 2e-4,
          validity: { limit: 3.3, wavelengthSpacings: 22, aboveLimit: false },
          microwave: { frequencyGhz: 5.30123456, widthMhz: 0.87654, lifetimeNs: 0.18157, quality: 6047.9, validityLimitGhz: 8.75 },
        }),
      ],
      {
        microwave: { permittivity: 100, heightMm: 5, twoDimensionalLimitGhz: 3 },
        window: { emin: 1, emax: 2, gammaMax: 0.01 },
        spectrum: {
          energies: [1, 2],
          transmission: [[0.5, 0.6]],
          pairs: [{ from: 0, to: 1 }],
          residual: [0, 0],
          reflection: null,
        },
      },
    );
    const host = fixture.nativeElement as HTMLElement;
    const text = (t: string) => host.querySelector(`[data-test="${t}"]`)!.textContent!.trim();
    expect(text('frequency')).toBe('5.301235 GHz');
    expect(text('frequency-width')).toBe('0.8765 MHz');
    expect(text('lifetime-ns')).toBe('0.1816 ns');
    expect(text('quality-mw')).toBe('6048');
    expect(text('validity-line')).toContain('0 of 1 pole lie above the frequency where the lattice is trusted (8.750 GHz)');
    const headers = Array.from(host.querySelectorAll('th')).map((h) => h.textContent!.trim());
    expect(headers).toContain('Frequency f (GHz)');
    expect(headers.some((h) => h.includes('meV') || h === 'Energy E')).toBe(false);
    const plane = fixture.debugElement.query((d) => d.componentInstance instanceof PlaneStub).componentInstance as PlaneStub;
    // The charts and the window read in GHz: f = c·√k²/(2π√ε_r) (c = 299.792458 mm/ns, SI).
    expect(plane.unit()).toBe('GHz');
    const f = (k2: number) => (299.792458 * Math.sqrt(k2)) / (2 * Math.PI * 10);
    expect((plane.poles() as { energy: number }[])[0]!.energy).toBeCloseTo(f(1.234), 6);
    expect(host.querySelector('.meta')!.textContent).toContain(`${f(1).toFixed(3)}–${f(2).toFixed(3)} GHz`);
    expect(host.querySelector('.meta')!.textContent).not.toContain('meV');
    // No conductance for a microwave resonator.
    expect(host.querySelector('[data-test="show-conductance"]')).toBeNull();
  });
});

describe('RunDetail reflection toggle', () => {
  const spectrum = {
    energies: [3, 4, 5],
    pairs: [
      { from: 0, to: 1 },
      { from: 1, to: 0 },
    ],
    transmission: [
      [0.2, 0.5, 0.9],
      [0.2, 0.5, 0.9],
    ],
    residual: [1e-14, 1e-14, 1e-14],
    reflection: [
      [0.8, 0.5, 0.1],
      [0.8, 0.5, 0.1],
    ],
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
