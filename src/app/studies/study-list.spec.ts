import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { provideFakeCurrentGroup } from '../core/testing/fake-current-group';
import { completedStudy, runningStudy } from '../core/testing/sample-study';
import { studyPollMs } from './studies-api';
import { StudyList } from './study-list';

const listUrl = '/api/groups/g1/studies';
const summary = ({ definition: _d, stepList: _s, outcome: _o, ...rest }: typeof runningStudy) => rest;
const done = { ...summary(completedStudy), id: '8b0c1f3e-2d4a-4b6c-8e9f-0a1b2c3d4e5f', name: 'Older sweep' };

function setUp(role: 'designer' | 'viewer' = 'designer') {
  vi.useFakeTimers();
  TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter([]), provideFakeCurrentGroup(role)] });
  const http = TestBed.inject(HttpTestingController);
  const fixture = TestBed.createComponent(StudyList);
  fixture.detectChanges();
  return { http, fixture, host: fixture.nativeElement as HTMLElement };
}

describe('StudyList', () => {
  afterEach(() => vi.useRealTimers());

  it('lists studies with state and progress, polling every 2 s until none is unfinished', async () => {
    const { http, fixture, host } = setUp();
    await vi.advanceTimersByTimeAsync(0);
    http.expectOne((r) => r.url === listUrl).flush({ items: [summary(runningStudy), done], total: 2 });
    fixture.detectChanges();
    const row = () => host.querySelector(`[data-study="${runningStudy.id}"]`)!;
    expect(row().textContent).toContain('Running');
    expect(row().textContent).toContain('1 of 3 steps done');
    expect(row().querySelector('mat-progress-bar')!.getAttribute('aria-valuenow')).toBe('33');
    expect(host.querySelector(`[data-study="${done.id}"] mat-progress-bar`)).toBeNull();

    await vi.advanceTimersByTimeAsync(studyPollMs);
    http.expectOne((r) => r.url === listUrl).flush({ items: [summary(completedStudy), done], total: 2 });
    fixture.detectChanges();
    expect(row().textContent).toContain('Completed');
    expect(row().querySelector('mat-progress-bar')).toBeNull();

    await vi.advanceTimersByTimeAsync(5 * studyPollMs);
    http.expectNone((r) => r.url === listUrl);
    http.verify();
  });

  it('offers New study and New ensemble to designers only', async () => {
    const designer = setUp();
    await vi.advanceTimersByTimeAsync(0);
    designer.http.expectOne((r) => r.url === listUrl).flush({ items: [], total: 0 });
    designer.fixture.detectChanges();
    expect(designer.host.querySelector('[data-test=new-study]')!.getAttribute('href')).toBe('/g/lab/studies/new?kind=sweep');
    expect(designer.host.querySelector('[data-test=new-ensemble]')!.getAttribute('href')).toBe('/g/lab/studies/new?kind=ensemble');
    expect(designer.host.querySelector('[data-test=empty]')).not.toBeNull();
    TestBed.resetTestingModule();

    const viewer = setUp('viewer');
    await vi.advanceTimersByTimeAsync(0);
    viewer.http.expectOne((r) => r.url === listUrl).flush({ items: [], total: 0 });
    viewer.fixture.detectChanges();
    expect(viewer.host.querySelector('[data-test=new-study]')).toBeNull();
  });
});
