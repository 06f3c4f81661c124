import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideEchartsCore } from 'ngx-echarts';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { completedStudy, runningStudy } from '../core/testing/sample-study';
import { studyPollMs } from './studies-api';
import { StudyPage } from './study-page';

const url = `/api/groups/g1/studies/${runningStudy.id}`;

function setUp(role: 'designer' | 'viewer' = 'designer') {
  vi.useFakeTimers();
  TestBed.configureTestingModule({
    providers: [
      provideHttpClient(),
      provideHttpClientTesting(),
      provideRouter([]),
      provideFakeCurrentGroup(role),
      provideEchartsCore({ echarts: () => import('./echarts') }),
    ],
  });
  const http = TestBed.inject(HttpTestingController);
  const fixture = TestBed.createComponent(StudyPage);
  fixture.componentRef.setInput('studyId', runningStudy.id);
  fixture.detectChanges();
  return { http, fixture, host: fixture.nativeElement as HTMLElement };
}

describe('StudyPage', () => {
  afterEach(() => vi.useRealTimers());

  it('polls the study every 2 s while it runs, shows each step, and stops once it has ended', async () => {
    const { http, fixture, host } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne(url).flush(runningStudy);
    fixture.detectChanges();
    expect(host.querySelector('[data-test=progress]')!.textContent).toContain('1 of 3 steps done, 1 running, 1 queued');
    expect(host.querySelector('[data-step-status="1"]')!.textContent).toContain('Running');
    expect(host.querySelector('mat-progress-bar')!.getAttribute('aria-valuenow')).toBe('33');
    expect(host.querySelector('[data-test=export-csv]')).toBeNull();

    await vi.advanceTimersByTimeAsync(studyPollMs - 10);
    http.expectNone(url);
    await vi.advanceTimersByTimeAsync(10);
    http.expectOne(url).flush(completedStudy);
    fixture.detectChanges();
    expect(host.querySelector('[data-test=status]')!.textContent).toContain('Completed');
    expect(host.querySelector('pw-sweep-result')).not.toBeNull();
    expect(host.querySelector('[data-test=export-csv]')!.getAttribute('href')).toBe(`${url}/export?format=csv`);
    expect(host.querySelector('[data-test=export-json]')!.getAttribute('href')).toBe(`${url}/export?format=json`);
    expect(host.querySelector('[data-test=cancel]')).toBeNull();

    await vi.advanceTimersByTimeAsync(5 * studyPollMs);
    http.expectNone(url);
    http.verify();
  });

  it('cancels a running study through POST .../cancel', async () => {
    const { http, fixture, host } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne(url).flush(runningStudy);
    fixture.detectChanges();
    host.querySelector<HTMLButtonElement>('[data-test=cancel]')!.click();
    const cancel = http.expectOne(`${url}/cancel`);
    expect(cancel.request.method).toBe('POST');
    cancel.flush({ ...runningStudy, status: 'cancelled', steps: { ...runningStudy.steps, queued: 0, cancelled: 1 } });
    fixture.detectChanges();
    expect(host.querySelector('[data-test=status]')!.textContent).toContain('Cancelled');
    expect(host.querySelector('[data-test=progress]')!.textContent).toContain('1 cancelled');
  });

  it('offers no cancel to a viewer', async () => {
    const { http, fixture, host } = setUp('viewer');
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne(url).flush(runningStudy);
    fixture.detectChanges();
    expect(host.querySelector('[data-test=cancel]')).toBeNull();
  });
});
