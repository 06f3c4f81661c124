import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { FakeEventSource } from '../core/testing/fake-event-source';
import { fixtureId, sampleRun as runFixture, sampleRunDetail } from '../core/testing/answer-fixtures';
import { RunList } from './run-list';
import { RunsApi, pollPeriodMs } from './runs-api';
import type { Run } from '../../../shared/api/runs';

const listUrl = '/api/groups/g1/runs';
const sampleRun = runFixture();
const done: Run = runFixture({ id: fixtureId(0x102), status: 'completed', progress: null, resonanceCount: 4 });

/** The run list on fake timers, so the 2 s polling period can be stepped through. */
function setUp() {
  vi.useFakeTimers();
  FakeEventSource.made = [];
  TestBed.configureTestingModule({
    providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup('designer')],
  });
  TestBed.inject(RunsApi).eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
  const http = TestBed.inject(HttpTestingController);
  const fixture = TestBed.createComponent(RunList);
  fixture.detectChanges();
  return { http, fixture, host: fixture.nativeElement as HTMLElement };
}

describe('RunList', () => {
  afterEach(() => vi.useRealTimers());

  it('polls GET /runs every 2 s while a run is unfinished and stops when none is', async () => {
    const { http, fixture, host } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne((r) => r.url === listUrl).flush({ items: [sampleRun, done], total: 2 });
    fixture.detectChanges();
    const bar = () => host.querySelector(`[data-run="${sampleRun.id}"] mat-progress-bar`);
    expect(bar()!.getAttribute('aria-valuenow')).toBe('10');
    expect(host.querySelector(`[data-run="${sampleRun.id}"] .stage`)!.textContent).toContain('searching the contour');
    // No event stream per run: with many runs in flight they would use up the browser's connections.
    expect(FakeEventSource.made).toHaveLength(0);

    await vi.advanceTimersByTimeAsync(pollPeriodMs - 10);
    http.expectNone((r) => r.url === listUrl);
    await vi.advanceTimersByTimeAsync(10);
    http.expectOne((r) => r.url === listUrl).flush({ items: [{ ...sampleRun, progress: { stage: 'refine', fraction: 0.6 } }, done], total: 2 });
    fixture.detectChanges();
    expect(bar()!.getAttribute('aria-valuenow')).toBe('60');
    expect(host.querySelector(`[data-run="${sampleRun.id}"] .stage`)!.textContent).toContain('refining poles');

    await vi.advanceTimersByTimeAsync(pollPeriodMs);
    http.expectOne((r) => r.url === listUrl).flush({ items: [{ ...sampleRun, status: 'completed', progress: null, resonanceCount: 3 }, done], total: 2 });
    fixture.detectChanges();
    expect(bar()).toBeNull();
    expect(host.querySelector(`[data-run="${sampleRun.id}"]`)!.textContent).toContain('3 resonance(s)');

    // Every listed run has finished: no more requests.
    await vi.advanceTimersByTimeAsync(5 * pollPeriodMs);
    http.expectNone((r) => r.url === listUrl);
    expect(FakeEventSource.made).toHaveLength(0);
    http.verify();
  });

  it('shows the notice of a run that looks stuck', async () => {
    const { http, fixture, host } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    const stuck = { ...sampleRun, status: 'queued' as const, notice: 'No worker has taken this run for 5 min.' };
    http.expectOne((r) => r.url === listUrl).flush({ items: [stuck, done], total: 2 });
    fixture.detectChanges();
    expect(host.querySelector(`[data-run="${sampleRun.id}"] [data-test="notice"]`)!.textContent).toContain('No worker has taken this run for 5 min.');
    expect(host.querySelector(`[data-run="${done.id}"] [data-test="notice"]`)).toBeNull();
  });

  it('does not poll a page of finished runs at all', async () => {
    const { http } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne((r) => r.url === listUrl).flush({ items: [done], total: 1 });
    await vi.advanceTimersByTimeAsync(3 * pollPeriodMs);
    http.verify();
  });

  it('keeps polling through a failed poll while runs were still working', async () => {
    const { http, fixture, host } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne((r) => r.url === listUrl).flush({ items: [sampleRun], total: 1 });
    await vi.advanceTimersByTimeAsync(pollPeriodMs);
    http.expectOne((r) => r.url === listUrl).flush({ message: 'gateway timeout' }, { status: 504, statusText: 'Gateway Timeout' });
    fixture.detectChanges();
    expect(host.querySelector('.issue')).not.toBeNull();
    await vi.advanceTimersByTimeAsync(pollPeriodMs);
    http.expectOne((r) => r.url === listUrl).flush({ items: [{ ...sampleRun, progress: { stage: 'refine', fraction: 0.5 } }], total: 1 });
    fixture.detectChanges();
    expect(host.querySelector('.issue')).toBeNull();
    expect(host.querySelector(`[data-run="${sampleRun.id}"] mat-progress-bar`)!.getAttribute('aria-valuenow')).toBe('50');
  });

  it('stops polling when the page is left', async () => {
    const { http, fixture } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne((r) => r.url === listUrl).flush({ items: [sampleRun], total: 1 });
    fixture.destroy();
    await vi.advanceTimersByTimeAsync(3 * pollPeriodMs);
    http.verify();
  });
});

describe('RunsApi.updates', () => {
  it('falls back to polling when the event stream fails', async () => {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    const api = TestBed.inject(RunsApi);
    api.eventSourceFactory = (url) => new FakeEventSource(url) as unknown as EventSource;
    const http = TestBed.inject(HttpTestingController);
    const seen: number[] = [];
    const sub = api.updates('g1', 'r1').subscribe((u) => seen.push(u.progress?.fraction ?? -1));
    FakeEventSource.last!.emit('error');
    await new Promise((r) => setTimeout(r, 0));
    http.expectOne('/api/groups/g1/runs/r1').flush(sampleRunDetail({ progress: { stage: 'contour', fraction: 0.4 } }));
    expect(seen).toEqual([0.4]);
    expect(FakeEventSource.last!.closed).toBe(true);
    // The 2 s poll would otherwise outlive this spec and fire into a destroyed injector (NG0205).
    sub.unsubscribe();
  });

  it('ends its polling when the root injector is destroyed', async () => {
    vi.useFakeTimers();
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    const api = TestBed.inject(RunsApi);
    api.eventSourceFactory = null;
    const http = TestBed.inject(HttpTestingController);
    let completed = false;
    api.updates('g1', 'r1').subscribe({ complete: () => (completed = true) });
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne('/api/groups/g1/runs/r1').flush(sampleRunDetail());
    TestBed.resetTestingModule();
    expect(completed).toBe(true);
    // No poll fires into the destroyed injector (it would throw NG0205 as an unhandled error).
    await vi.advanceTimersByTimeAsync(3 * pollPeriodMs);
    vi.useRealTimers();
  });
});
