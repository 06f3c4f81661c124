import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, of, switchMap, takeWhile, timer } from 'rxjs';
import type { FittedPeak } from '../../../../shared/engine/fit';
import { browserEventSource, progressEvents, type EventSourceFactory } from '../events/progress-events';

export type Lineshape = 'bw' | 'fano' | 'thermal' | 'thermal-fano';

export interface TraceSummary {
  id: string;
  deviceName: string;
  fileName: string;
  temperatureMK: number;
  notes: string;
  modelId: string | null;
  modelName: string | null;
  columns: string[];
  selection: Record<string, unknown>;
  points: number;
  createdBy: string | null;
  createdAt: string;
}

export interface TraceDetail extends TraceSummary {
  energies: number[];
  transmission: number[];
}

export interface TracePreview {
  columns: string[];
  hasHeader: boolean;
  delimiter: string;
  rowCount: number;
  rows: { line: number; cells: string[] }[];
}

export interface FittedParameter {
  name: string;
  role: string;
  peak: number | null;
  unit: string;
  value: number;
  error: number | null;
  atBound: 'lower' | 'upper' | null;
}

/** One fitted peak with its standard errors: the engine's own type (shared/engine/fit.ts). */
export type { FittedPeak } from '../../../../shared/engine/fit';

export interface FitResult {
  lineshape: Lineshape;
  background: 'constant' | 'linear';
  temperatureMK: number | null;
  parameters: FittedParameter[];
  covariance: number[][];
  chiSquare: number;
  reducedChiSquare: number;
  degreesOfFreedom: number;
  points: number;
  iterations: number;
  converged: boolean;
  peaks: FittedPeak[];
  warnings: { code: string; message: string }[];
  curve: { x: number[]; y: number[]; fit: number[]; background: number[]; components: number[][]; residuals: number[] };
}

export interface PoleComparison {
  peak: number;
  pole: { id: string; energy: number; width: number; petermann: number | null; overlapping: boolean; runId: string | null; modelVersion: number } | null;
  energyPercent: number | null;
  energySigmas: number | null;
  widthPercent: number | null;
  widthSigmas: number | null;
  positionComparable: boolean;
  warnings: string[];
}

export interface FitDetail {
  id: string;
  runId: string | null;
  traceId: string | null;
  modelId: string | null;
  modelName: string | null;
  request: Record<string, unknown>;
  status: 'queued' | 'running' | 'completed' | 'failed';
  progressFraction: number | null;
  error: string | null;
  comparison: PoleComparison[] | null;
  deviceName: string | null;
  createdBy: string | null;
  createdAt: string;
  result?: FitResult | null;
  peaks?: FittedPeak[] | null;
  catalogueIds?: string[];
}

export interface FitRequest {
  source: { kind: 'run'; runId: string; pair: number; from: number; to: number } | { kind: 'trace'; traceId: string; from?: number; to?: number };
  lineshape: Lineshape;
  background: 'constant' | 'linear';
  peaks: number;
  temperatureMK?: number;
  modelId?: string;
  hints?: { energy: number; width?: number }[];
}

/** One message of a fit's event stream (GET /fits/:id/events). */
export interface FitProgress {
  id: string;
  status: FitDetail['status'];
  progressFraction: number | null;
  attempt: number;
  error: string | null;
}

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
    return this.http.get<TraceSummary[]>(`${base(groupId)}/traces`);
  }

  trace(groupId: string, id: string): Observable<TraceDetail> {
    return this.http.get<TraceDetail>(`${base(groupId)}/traces/${encodeURIComponent(id)}`);
  }

  preview(groupId: string, file: File): Observable<TracePreview> {
    const form = new FormData();
    form.append('file', file);
    return this.http.post<TracePreview>(`${base(groupId)}/traces/preview`, form);
  }

  upload(groupId: string, file: File, fields: Record<string, string>): Observable<TraceDetail> {
    const form = new FormData();
    for (const [k, v] of Object.entries(fields)) form.append(k, v);
    form.append('file', file);
    return this.http.post<TraceDetail>(`${base(groupId)}/traces`, form);
  }

  fits(groupId: string): Observable<FitDetail[]> {
    return this.http.get<FitDetail[]>(`${base(groupId)}/fits`);
  }

  fit(groupId: string, id: string): Observable<FitDetail> {
    return this.http.get<FitDetail>(`${base(groupId)}/fits/${encodeURIComponent(id)}`);
  }

  create(groupId: string, request: FitRequest): Observable<FitDetail> {
    return this.http.post<FitDetail>(`${base(groupId)}/fits`, request);
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
    return progressEvents<FitProgress>(factory, url, (data) => !finished(data.status)).pipe(
      switchMap((event) => (event === 'poll' ? poll() : of(event))),
      takeWhile((u) => !finished(u.status), true),
    );
  }
}
