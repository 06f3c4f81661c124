import { ChangeDetectionStrategy, Component, DestroyRef, computed, inject, input, signal } from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatTooltipModule } from '@angular/material/tooltip';
import { RouterLink } from '@angular/router';
import { type Subscription, catchError, combineLatest, debounceTime, of, switchMap } from 'rxjs';
import { Auth } from '../core/auth/auth';
import { ErrorReport } from '../core/errors/error-report';
import { toProblem } from '../core/errors/problem';
import { CurrentGroup } from '../core/group/current-group';
import { injectCanDesign } from '../models/design-permission';
import { kindLabel, statusLabel, windowText } from './run-labels';
import { type Run, type RunKind, type RunStatus, RunsApi, finishedStatuses } from './runs-api';

/**
 * The group's runs, newest first, with a live progress bar on every queued or
 * running one (event stream per run, polling when the stream is unavailable).
 */
@Component({
  selector: 'pw-run-list',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [
    FormsModule,
    RouterLink,
    MatButtonModule,
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
  protected readonly statuses: RunStatus[] = ['queued', 'running', 'completed', 'failed', 'cancelled'];

  protected readonly status = signal<RunStatus | ''>('');
  protected readonly kind = signal<RunKind | ''>('');
  protected readonly page = signal(1);
  protected readonly pageSize = signal(25);
  protected readonly runs = signal<Run[]>([]);
  protected readonly total = signal(0);
  protected readonly loading = signal(false);
  protected readonly error = signal<string | null>(null);

  private readonly live = new Map<string, Subscription>();
  private readonly query = computed(() => ({
    status: this.status() || undefined,
    kind: this.kind() || undefined,
    modelId: this.modelId() || undefined,
    page: this.page(),
    pageSize: this.pageSize(),
  }));

  constructor() {
    combineLatest([toObservable(this.query), toObservable(this.group.id)])
      .pipe(
        debounceTime(0),
        switchMap(([query, groupId]) => {
          if (!groupId) return of(null);
          this.loading.set(true);
          return this.api.list(groupId, query).pipe(
            catchError((err: unknown) => {
              this.error.set(toProblem(err).message);
              return of(null);
            }),
          );
        }),
        takeUntilDestroyed(),
      )
      .subscribe((answer) => {
        this.loading.set(false);
        if (!answer) return;
        this.error.set(null);
        this.runs.set(answer.items);
        this.total.set(answer.total);
        this.followActive();
      });
    this.destroyRef.onDestroy(() => this.live.forEach((s) => s.unsubscribe()));
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

  protected isActive(run: Run): boolean {
    return !finishedStatuses.has(run.status);
  }

  /** The owner and admins may cancel (the server says the same). */
  protected canCancel(run: Run): boolean {
    if (!this.isActive(run) || !this.canDesign()) return false;
    return this.group.group()?.role === 'admin' || run.createdBy.id === this.auth.user()?.id;
  }

  protected cancel(run: Run): void {
    const groupId = this.group.id();
    if (!groupId) return;
    this.api
      .cancel(groupId, run.id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ error: (err: unknown) => this.errors.show(err) });
  }

  /** One live subscription per unfinished run on the page; finished ones are refetched once. */
  private followActive(): void {
    const groupId = this.group.id();
    if (!groupId) return;
    const onPage = new Set(this.runs().map((r) => r.id));
    for (const [id, sub] of this.live) {
      if (!onPage.has(id)) {
        sub.unsubscribe();
        this.live.delete(id);
      }
    }
    for (const run of this.runs()) {
      if (!this.isActive(run) || this.live.has(run.id)) continue;
      const sub = this.api.updates(groupId, run.id).subscribe({
        next: (u) => this.patch(run.id, { status: u.status, progress: u.progress }),
        complete: () => {
          this.live.delete(run.id);
          this.api.run(groupId, run.id).subscribe({ next: (full) => this.patch(run.id, full), error: () => undefined });
        },
        error: () => this.live.delete(run.id),
      });
      this.live.set(run.id, sub);
    }
  }

  private patch(id: string, change: Partial<Run>): void {
    this.runs.update((list) => list.map((r) => (r.id === id ? { ...r, ...change } : r)));
  }
}
