import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideFakeCurrentGroup } from '../models/fake-current-group';
import { RunList } from './run-list';
import { type Run, RunsApi } from './runs-api';

/** A stand-in for the browser's EventSource (jsdom has none) that the test drives by hand. */
class FakeEventSource extends EventTarget {
  static last: FakeEventSource | null = null;
  closed = false;
  constructor(readonly url: string) {
    super();
    FakeEventSource.last = this;
  }
  emit(type: string, data?: unknown): void {
    this.dispatchEvent(new MessageEvent(type, { data: data === undefined ? '' : JSON.stringify(data) }));
  }
  close(): void {
    this.closed = true;
  }
}

const running: Run = {
  id: 'r1',
  kind: 'pole-search',
  status: 'running',
  progress: { stage: 'contour', fraction: 0.1 },
  window: { emin: 1, emax: 5, gammaMax: 0.5 },
  modelId: 'm1',
  modelName: 'Dot A',
  modelVersion: 2,
  createdBy: { id: 'u1', name: 'Ada' },
  createdAt: '2025-01-01T10:00:00Z',
  startedAt: '2025-01-01T10:00:01Z',
  finishedAt: null,
  attempts: 1,
  error: null,
  engineVersion: '0.1.0',
  resonanceCount: null,
  certificate: null,
};

describe('RunList', () => {
  it('moves the progress bar with the run events and settles when the run ends', async () => {
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('designer')],
    });
    TestBed.inject(RunsApi).eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
    const http = TestBed.inject(HttpTestingController);
    const fixture = TestBed.createComponent(RunList);
    fixture.detectChanges();
    await fixture.whenStable();
    await new Promise((r) => setTimeout(r, 0));

    http.expectOne((r) => r.url === '/api/groups/g1/runs').flush({ items: [running], total: 1 });
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    const bar = () => host.querySelector('[data-run="r1"] mat-progress-bar');
    expect(bar()!.getAttribute('aria-valuenow')).toBe('10');
    expect(FakeEventSource.last!.url).toBe('/api/groups/g1/runs/r1/events');

    FakeEventSource.last!.emit('progress', { status: 'running', progress: { stage: 'Newton refinement', fraction: 0.6 } });
    fixture.detectChanges();
    expect(bar()!.getAttribute('aria-valuenow')).toBe('60');
    expect(host.querySelector('[data-run="r1"] .stage')!.textContent).toContain('Newton refinement');

    FakeEventSource.last!.emit('done');
    expect(FakeEventSource.last!.closed).toBe(true);
    await new Promise((r) => setTimeout(r, 0));
    const finished = { ...running, status: 'completed', progress: null, resonanceCount: 3 };
    // One GET ends the live stream with the exact final status, a second refreshes the row.
    http.expectOne('/api/groups/g1/runs/r1').flush({ ...finished, thresholds: [], poles: [], spectrum: null });
    await new Promise((r) => setTimeout(r, 0));
    http.expectOne('/api/groups/g1/runs/r1').flush({ ...finished, thresholds: [], poles: [], spectrum: null });
    fixture.detectChanges();
    expect(bar()).toBeNull();
    expect(host.querySelector('[data-run="r1"]')!.textContent).toContain('3 resonance(s)');
    http.verify();
  });

  it('falls back to polling when the event stream fails', async () => {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    const api = TestBed.inject(RunsApi);
    api.eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
    const http = TestBed.inject(HttpTestingController);
    const seen: number[] = [];
    api.updates('g1', 'r1').subscribe((u) => seen.push(u.progress?.fraction ?? -1));
    FakeEventSource.last!.emit('error');
    await new Promise((r) => setTimeout(r, 0));
    http.expectOne('/api/groups/g1/runs/r1').flush({ ...running, progress: { stage: 'contour', fraction: 0.4 } });
    expect(seen).toEqual([0.4]);
    expect(FakeEventSource.last!.closed).toBe(true);
  });
});
