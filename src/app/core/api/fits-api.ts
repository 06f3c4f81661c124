import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, of, switchMap, takeWhile, timer } from 'rxjs';
import type { z } from 'zod';
import {
  type FitDetail,
  type FitListItem,
  type FitProgress,
  type TraceDetail,
  type TracePreview,
  type TraceSummary,
  createFitRoute,
  type fitBody,
  fitProgressSchema,
  getFitRoute,
  getTraceRoute,
  listFitsRoute,
  listTracesRoute,
  previewTraceRoute,
  uploadTraceRoute,
} from '../../../../shared/api/fits';
import { type Spectrum, getRunSpectrumRoute } from '../../../../shared/api/runs';
import { browserEventSource, progressEvents, type EventSourceFactory } from '../events/progress-events';
import { parseAnswer } from '../http/parse-answer';

/** What POST /fits takes (defaults may be left out). */
export type FitRequest = z.input<typeof fitBody>;

const finished = (status: FitDetail['status']) => status === 'completed' || status === 'failed';
const pollPeriodMs = 1000;

const base = (groupId: string) => `/api/groups/${encodeURIComponent(groupId)}`;

/** HTTP for measured traces and peak fits. */
@Injectable({ providedIn: 'root' })
export class FitsApi {
  private readonly http = inject(HttpClient);
  /** Replaced in specs; null when the browser has no EventSource, which means polling. */
  eventSourceFactory: EventSourceFactory | null = browserEventSource;

  traces(groupId: string): Observable<TraceSummary[]> {
    return this.http.get(`${base(groupId)}/traces`).pipe(parseAnswer(listTracesRoute, 'list of traces'));
  }

  trace(groupId: string, id: string): Observable<TraceDetail> {
    return this.http.get(`${base(groupId)}/traces/${encodeURIComponent(id)}`).pipe(parseAnswer(getTraceRoute, 'trace'));
  }

  preview(groupId: string, file: File): Observable<TracePreview> {
    const form = new FormData();
    form.append('file', file);
    return this.http.post(`${base(groupId)}/traces/preview`, form).pipe(parseAnswer(previewTraceRoute, 'trace preview'));
  }

  upload(groupId: string, file: File, fields: Record<string, string>): Observable<TraceDetail> {
    const form = new FormData();
    for (const [k, v] of Object.entries(fields)) form.append(k, v);
    form.append('file', file);
    return this.http.post(`${base(groupId)}/traces`, form).pipe(parseAnswer(uploadTraceRoute, 'trace'));
  }

  /** The transmission a run computed, to fit its peaks. */
  runSpectrum(groupId: string, runId: string): Observable<Spectrum> {
    return this.http.get(`${base(groupId)}/runs/${encodeURIComponent(runId)}/spectrum`).pipe(parseAnswer(getRunSpectrumRoute, 'spectrum'));
  }

  fits(groupId: string): Observable<FitListItem[]> {
    return this.http.get(`${base(groupId)}/fits`).pipe(parseAnswer(listFitsRoute, 'list of fits'));
  }

  fit(groupId: string, id: string): Observable<FitDetail> {
    return this.http.get(`${base(groupId)}/fits/${encodeURIComponent(id)}`).pipe(parseAnswer(getFitRoute, 'fit'));
  }

  create(groupId: string, request: FitRequest): Observable<FitDetail> {
    return this.http.post(`${base(groupId)}/fits`, request).pipe(parseAnswer(createFitRoute, 'fit'));
  }

  /**
   * Live state of a queued or running fit, like a run's: its progress from the server's event
   * stream, then (after `done`) the whole fit with its result from one GET. When the stream
   * fails or the browser has none, GET /fits/:id every second instead. Completes after the
   * finished fit.
   */
  follow(groupId: string, id: string): Observable<FitProgress | FitDetail> {
    const poll = (): Observable<FitDetail> =>
      timer(0, pollPeriodMs).pipe(
        switchMap(() => this.fit(groupId, id)),
        takeWhile((f) => !finished(f.status), true),
      );
    const factory = this.eventSourceFactory;
    if (!factory) return poll();
    // A finished status is not passed on: the stream's `done` follows it and the GET after it brings the result.
    const url = `${base(groupId)}/fits/${encodeURIComponent(id)}/events`;
    return progressEvents(factory, url, fitProgressSchema, (data) => !finished(data.status)).pipe(
      switchMap((event) => (event === 'poll' ? poll() : of(event))),
      takeWhile((u) => !finished(u.status), true),
    );
  }
}
