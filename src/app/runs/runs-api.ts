import { HttpClient, HttpParams } from '@angular/common/http';
import { DestroyRef, Injectable, inject } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { Observable, map, of, switchMap, takeWhile, timer } from 'rxjs';
import type { z } from 'zod';
import { FINISHED_RUN_STATUSES, type RunStatus } from '../../../shared/api/enums';
import {
  type Run,
  type RunDetail,
  type RunEstimate,
  type RunList,
  cancelRunRoute,
  estimateRunRoute,
  getRunRoute,
  launchRunRoute,
  listRunsRoute,
  type runListQuery,
  runProgressEventSchema,
  type runRequestSchema,
} from '../../../shared/api/runs';
import { browserEventSource, progressEvents, type EventSourceFactory } from '../core/events/progress-events';
import { parseAnswer } from '../core/http/parse-answer';

/** What a launch sends (defaults may be left out). */
export type RunRequest = z.input<typeof runRequestSchema>;

/** Filters and page of the run list, as the API names them. */
export type RunListQuery = Partial<z.input<typeof runListQuery>>;

/** What the events stream and the polling fallback both deliver. */
type RunUpdate = Pick<Run, 'status' | 'progress'>;

export const finishedStatuses: ReadonlySet<RunStatus> = new Set(FINISHED_RUN_STATUSES);

/** Polling period of the run list, and of the run page when its event stream is unavailable (the contract says 2 s). */
export const pollPeriodMs = 2000;

/** HTTP for runs: estimate, launch, list, detail, cancel and live progress (routes declared in shared/api/runs.ts). */
@Injectable({ providedIn: 'root' })
export class RunsApi {
  private readonly http = inject(HttpClient);
  /** The app's (or a spec's) root injector: live updates end with it, so no poll fires into a destroyed injector. */
  private readonly destroyRef = inject(DestroyRef);
  /** Replaced in specs; null when the browser has no EventSource, which means polling. */
  eventSourceFactory: EventSourceFactory | null = browserEventSource;

  estimate(groupId: string, request: RunRequest): Observable<RunEstimate> {
    return this.http.post(`${base(groupId)}/runs/estimate`, request).pipe(parseAnswer(estimateRunRoute, 'estimate'));
  }

  launch(groupId: string, request: RunRequest): Observable<Run> {
    return this.http.post(`${base(groupId)}/runs`, request).pipe(parseAnswer(launchRunRoute, 'run'));
  }

  list(groupId: string, query: RunListQuery = {}): Observable<RunList> {
    let params = new HttpParams();
    for (const [key, value] of Object.entries(query)) {
      if (value !== undefined && value !== '') params = params.set(key, String(value));
    }
    return this.http.get(`${base(groupId)}/runs`, { params }).pipe(parseAnswer(listRunsRoute, 'list of runs'));
  }

  run(groupId: string, runId: string): Observable<RunDetail> {
    return this.http.get(`${base(groupId)}/runs/${encodeURIComponent(runId)}`).pipe(parseAnswer(getRunRoute, 'run'));
  }

  cancel(groupId: string, runId: string): Observable<Run> {
    return this.http.post(`${base(groupId)}/runs/${encodeURIComponent(runId)}/cancel`, {}).pipe(parseAnswer(cancelRunRoute, 'run'));
  }

  /**
   * Live status of one run, for the run page only (the run list polls GET /runs
   * instead, one request for all its runs): the server's event stream while it lasts, then polling
   * GET /runs/:id every 2 s if the stream fails (proxy, old browser). Completes once
   * the run has finished, after emitting the final status.
   */
  updates(groupId: string, runId: string): Observable<RunUpdate> {
    const poll = (): Observable<RunUpdate> =>
      timer(0, pollPeriodMs).pipe(
        switchMap(() => this.run(groupId, runId)),
        map((r): RunUpdate => ({ status: r.status, progress: r.progress })),
        takeWhile((u) => !finishedStatuses.has(u.status), true),
      );
    const factory = this.eventSourceFactory;
    if (!factory) return poll().pipe(takeUntilDestroyed(this.destroyRef));
    const url = `${base(groupId)}/runs/${encodeURIComponent(runId)}/events`;
    return progressEvents(factory, url, runProgressEventSchema).pipe(
      switchMap((event) => (event === 'poll' ? poll() : of(event))),
      takeWhile((u) => !finishedStatuses.has(u.status), true),
      takeUntilDestroyed(this.destroyRef),
    );
  }
}

function base(groupId: string): string {
  return `/api/groups/${encodeURIComponent(groupId)}`;
}
