import { ChangeDetectionStrategy, Component, DestroyRef, effect, inject, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { type Subscription, timer } from 'rxjs';
import { FINISHED_STUDY_STATUSES, type StudySummary } from '../../../shared/api/studies';
import { formatDuration } from '../core/format/energy-format';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { injectCanDesign } from '../core/group/design-permission';
import { StudiesApi, studyPollMs } from './studies-api';
import { studyPercent, studyProgressText, studyStatusLabels } from './study-progress';

/**
 * The group's parameter studies and tolerance ensembles, newest first, with a progress
 * bar on each unfinished one. The list polls GET /studies every 2 s while any listed
 * study is unfinished and stops once none is.
 */
@Component({
  selector: 'pw-study-list',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule],
  templateUrl: './study-list.html',
  styleUrl: './study-list.scss',
})
export class StudyList {
  private readonly api = inject(StudiesApi);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  protected readonly studies = signal<StudySummary[] | null>(null);
  protected readonly total = signal(0);
  protected readonly percent = studyPercent;
  protected readonly progressText = studyProgressText;
  protected readonly statusLabels = studyStatusLabels;
  protected readonly formatDuration = formatDuration;
  private pending: Subscription | null = null;

  constructor() {
    effect(() => {
      const groupId = this.group.id();
      if (groupId) untracked(() => this.load(groupId));
    });
    this.destroyRef.onDestroy(() => this.pending?.unsubscribe());
  }

  protected unfinished(study: StudySummary): boolean {
    return !FINISHED_STUDY_STATUSES.includes(study.status);
  }

  private load(groupId: string): void {
    this.pending?.unsubscribe();
    this.pending = this.api
      .list(groupId, 1, 50)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (page) => {
          this.studies.set(page.items);
          this.total.set(page.total);
          if (page.items.some((s) => this.unfinished(s))) {
            this.pending = timer(studyPollMs)
              .pipe(takeUntilDestroyed(this.destroyRef))
              .subscribe(() => this.load(groupId));
          }
        },
        error: (err: unknown) => this.errors.show(err),
      });
  }
}
