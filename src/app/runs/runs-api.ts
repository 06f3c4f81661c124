import { browserEventSource, progressEvents, type EventSourceFactory } from '../core/events/progress-events';
import { HttpClient, HttpParams } from '@angular/common/http';
import { DestroyRef, Injectable, inject } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { Observable, map, of, switchMap, takeWhile, timer } from 'rxjs';
import type { ResonanceRow } from '../core/answers/resonance-row';
import type { RunCertificate } from '../core/answers/run-certificate';
import type { RunWindow } from '../core/answers/run-window';

export type RunKind = 'pole-search' | 'transmission';
export type RunStatus = 'queued' | 'running' | 'completed' | 'failed' | 'cancelled';

export interface RunProgress {
  stage: string;
  fraction: number;
}

export interface Run {
  id: string;
  kind: RunKind;
  status: RunStatus;
  progress: RunProgress | null;
  window: RunWindow;
  modelId: string;
  modelName: string;
  modelVersion: number;
  createdBy: { id: string; name: string };
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  attempts: number;
  error: string | null;
  /** Set while the run looks stuck: what is happening and what to do. */
  notice?: string | null;
  engineVersion: string;
  resonanceCount: number | null;
  certificate: RunCertificate | null;
  /** The launcher's note, as typed. */
  note?: string | null;
  /** The launch estimate (expectedSeconds is what the progress bar's time left starts from). */
  estimate?: { expectedSeconds?: number } | null;
  /** Engine figures of the finished run (spectrumBudgetExhausted, seconds, …). */
  stats?: Record<string, unknown> | null;
}

export interface Spectrum {
  energies: number[];
  /** transmission[pair][energy], pairs[k] names the leads of row k. */
  transmission: number[][];
  /** Lead indices in the model's lead order (server/jobs/engine-task.ts); a name is shown as it is. */
  pairs: { from: number | string; to: number | string }[];
  residual: number[];
  /** R per lead in the model's lead order: reflection[lead][energy]; null for runs stored before it was kept. */
  reflection?: number[][] | null;
}

export interface RunDetail extends Run {
  thresholds: number[];
  poles: ResonanceRow[];
  spectrum: Spectrum | null;
  /** The model version's leads in engine order; the spectrum's pairs index into it. */
  leads?: { name: string; side: string; width: number }[];
  /** A microwave model's ε_r, h (mm) and 2D limit (GHz): window, thresholds and spectrum energies are then k² (mm⁻²). */
  microwave?: { permittivity: number; heightMm: number; twoDimensionalLimitGhz: number } | null;
}

export interface RunEstimate {
  sites: number;
  pieces: number;
  thresholdsInWindow: number[];
  factorisations: number;
  expectedSeconds: number;
  warnings: string[];
}

export interface RunRequest {
  modelId: string;
  version?: number;
  kind: RunKind;
  window: RunWindow;
  note?: string;
}

export interface RunListQuery {
  status?: RunStatus;
  kind?: RunKind;
  modelId?: string;
  page?: number;
  pageSize?: number;
}

/** What the events stream and the polling fallback both deliver. */
export interface RunUpdate {
  status: RunStatus;
  progress: RunProgress | null;
}

export const finishedStatuses: ReadonlySet<RunStatus> = new Set(['completed', 'failed', 'cancelled']);

/** Polling period of the run list, and of the run page when its event stream is unavailable (the contract says 2 s). */
export const pollPeriodMs = 2000;

/** HTTP for runs: estimate, launch, list, detail, cancel and live progress. */
@Injectable({ providedIn: 'root' })
export class RunsApi {
  private readonly http = inject(HttpClient);
  /** The app's (or a spec's) root injector: live updates end with it, so no poll fires into a destroyed injector. */
  private readonly destroyRef = inject(DestroyRef);
  /** Replaced in specs; null when the browser has no EventSource, which means polling. */
  eventSourceFactory: EventSourceFactory | null = browserEventSource;

  estimate(groupId: string, request: Omit<RunRequest, 'note'>): Observable<RunEstimate> {
    return this.http.post<RunEstimate>(`${base(groupId)}/runs/estimate`, request);
  }

  launch(groupId: string, request: RunRequest): Observable<Run> {
    return this.http.post<Run>(`${base(groupId)}/runs`, request);
  }

  list(groupId: string, query: RunListQuery = {}): Observable<{ items: Run[]; total: number }> {
    let params = new HttpParams();
    for (const [key, value] of Object.entries(query)) {
      if (value !== undefined && value !== '') params = params.set(key, String(value));
    }
    return this.http.get<{ items: Run[]; total: number }>(`${base(groupId)}/runs`, { params });
  }

  run(groupId: string, runId: string): Observable<RunDetail> {
    return this.http.get<RunDetail>(`${base(groupId)}/runs/${encodeURIComponent(runId)}`);
  }

  cancel(groupId: string, runId: string): Observable<void> {
    return this.http.post<void>(`${base(groupId)}/runs/${encodeURIComponent(runId)}/cancel`, {});
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
    return progressEvents<RunUpdate>(factory, url).pipe(
      switchMap((event) => (event === 'poll' ? poll() : of(event))),
      takeWhile((u) => !finishedStatuses.has(u.status), true),
      takeUntilDestroyed(this.destroyRef),
    );
  }
}

function base(groupId: string): string {
  return `/api/groups/${encodeURIComponent(groupId)}`;
}
