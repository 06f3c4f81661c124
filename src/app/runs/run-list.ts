import { ChangeDetectionStrategy, Component, DestroyRef, computed, inject, input, signal } from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatTooltipModule } from '@angular/material/tooltip';
import { RouterLink } from '@angular/router';
import { EMPTY, type Observable, catchError, combineLatest, debounceTime, expand, of, switchMap, timer } from 'rxjs';
import { Auth } from '../core/auth/auth';
import { ErrorReport } from '../core/errors/error-report';
import { toProblem } from '../core/errors/problem';
import { CurrentGroup } from '../core/group/current-group';
import { injectCanDesign } from '../core/group/design-permission';
import { kindLabel, statusLabel, windowText } from './run-labels';
import { type RunListQuery, RunsApi, finishedStatuses, pollPeriodMs } from './runs-api';
import { stageInWords } from './stage-words';
import { runErrorTone } from './run-error-tone';
import { durationText, progressTimes } from './progress-times';
import type { Run } from '../../../shared/api/runs';
import type { RunKind, RunStatus } from '../../../shared/api/enums';

type RunPage = { items: Run[]; total: number };

/**
 * The group's runs, newest first, with a progress bar on every queued or running
 * one. The list refreshes itself by polling GET /runs every 2 s while any listed
 * run is unfinished, and stops once none is: one request for the whole page,
 * where an event stream per run would use up the browser's ~6 connections per
 * host and stall every other request of the app. Only the run page streams.
 */
@Component({
  selector: 'pw-run-list',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    FormsModule,
    RouterLink,
    MatButtonModule,
    MatCheckboxModule,
    MatFormFieldModule,
    MatIconModule,
    MatPaginatorModule,
    MatProgressBarModule,
    MatSelectModule,
    MatTooltipModule,
  ],
  templateUrl: './run-list.html',
  styleUrl: './run-list.scss',
})
export class RunList {
  /** Optional ?modelId= from the URL: the runs of one model. */
  readonly modelId = input<string | undefined>(undefined);

  private readonly api = inject(RunsApi);
  private readonly auth = inject(Auth);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  protected readonly kindLabel = kindLabel;
  protected readonly statusLabel = statusLabel;
  protected readonly windowText = windowText;
  protected readonly errorTone = runErrorTone;
  /** Up to two runs ticked for the comparison page, in the order ticked. */
  protected readonly picked = signal<string[]>([]);

  protected togglePick(id: string, on: boolean): void {
    const now = this.picked().filter((x) => x !== id);
    // A third tick replaces the older of the two.
    this.picked.set(on ? [...now, id].slice(-2) : now);
  }

  /** How long a finished run took, from its start to its end. */
  protected durationOf(run: Run): string | null {
    if (!run.startedAt || !run.finishedAt) return null;
    return durationText((Date.parse(run.finishedAt) - Date.parse(run.startedAt)) / 1000);
  }

  /** Elapsed time and time left of a running run (the list refreshes every 2 s while one runs). */
  protected timesOf(run: Run): string {
    if (run.status !== 'running') return '';
    const t = progressTimes(run.startedAt, Date.now(), run.progress?.fraction ?? 0, run.estimate?.expectedSeconds);
    if (!t) return '';
    return ` · ${durationText(t.elapsed)} elapsed${t.remaining !== null ? ` · about ${durationText(t.remaining)} left` : ''}`;
  }
  protected readonly statuses: RunStatus[] = ['queued', 'running', 'completed', 'failed', 'cancelled'];

  protected readonly status = signal<RunStatus | ''>('');
  protected readonly kind = signal<RunKind | ''>('');
  protected readonly page = signal(1);
  protected readonly pageSize = signal(25);
  protected readonly runs = signal<Run[]>([]);
  protected readonly total = signal(0);
  protected readonly loading = signal(false);
  protected readonly error = signal<string | null>(null);

  /** Bumped to fetch the page again at once (after a cancel). */
  private readonly refresh = signal(0);
  private readonly query = computed<RunListQuery>(() => ({
    status: this.status() || undefined,
    kind: this.kind() || undefined,
    modelId: this.modelId() || undefined,
    page: this.page(),
    pageSize: this.pageSize(),
  }));

  constructor() {
    combineLatest([toObservable(this.query), toObservable(this.group.id), toObservable(this.refresh)])
      .pipe(
        debounceTime(0),
        // A new query, group or refresh drops the old polling loop (switchMap).
        switchMap(([query, groupId]) => {
          if (!groupId) return of(null);
          this.loading.set(true);
          return this.polled(groupId, query);
        }),
        // Ends the polling loop with the page: no request after the component is gone.
        takeUntilDestroyed(),
      )
      .subscribe((answer) => {
        this.loading.set(false);
        if (!answer) return;
        this.error.set(null);
        this.runs.set(answer.items);
        this.total.set(answer.total);
      });
  }

  protected setStatus(value: RunStatus | ''): void {
    this.status.set(value);
    this.page.set(1);
  }

  protected setKind(value: RunKind | ''): void {
    this.kind.set(value);
    this.page.set(1);
  }

  protected onPage(e: PageEvent): void {
    this.pageSize.set(e.pageSize);
    this.page.set(e.pageIndex + 1);
  }

  protected percent(run: Run): number {
    return Math.round(Math.min(1, Math.max(0, run.progress?.fraction ?? 0)) * 100);
  }

  protected stage(run: Run): string {
    return stageInWords(run.progress?.stage, run.status);
  }

  protected isActive(run: Run): boolean {
    return !finishedStatuses.has(run.status);
  }

  /** The owner and admins may cancel (the server says the same). */
  protected canCancel(run: Run): boolean {
    if (!this.isActive(run) || !this.canDesign()) return false;
    return this.group.group()?.role === 'admin' || run.createdBy?.id === this.auth.user()?.id;
  }

  protected cancel(run: Run): void {
    const groupId = this.group.id();
    if (!groupId) return;
    this.api
      .cancel(groupId, run.id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: () => this.refresh.update((n) => n + 1), error: (err: unknown) => this.errors.show(err) });
  }

  /**
   * The page now, then again every pollPeriodMs while a listed run is unfinished.
   * A failed poll shows its error and keeps polling if the runs last seen were
   * still working (a network blip should not freeze the bars); null stands for it.
   */
  private polled(groupId: string, query: RunListQuery): Observable<RunPage | null> {
    const fetch = (): Observable<RunPage | null> =>
      this.api.list(groupId, query).pipe(
        catchError((err: unknown) => {
          this.error.set(toProblem(err).message);
          return of(null);
        }),
      );
    return fetch().pipe(
      expand((answer) => {
        const items = answer ? answer.items : this.runs();
        return items.some((r) => this.isActive(r)) ? timer(pollPeriodMs).pipe(switchMap(fetch)) : EMPTY;
      }),
    );
  }
}
