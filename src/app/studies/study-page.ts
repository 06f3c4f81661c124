import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, input, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { type Subscription, timer } from 'rxjs';
import { FINISHED_STUDY_STATUSES, type StudyDetail } from '../../../shared/api/studies';
import { formatDuration } from '../core/format/energy-format';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { injectCanDesign } from '../core/group/design-permission';
import { EnsembleResult } from './ensemble-result';
import { StudiesApi, studyPollMs } from './studies-api';
import { studyPercent, studyProgressText, studyStatusLabels } from './study-progress';
import { SweepResult } from './sweep-result';

/**
 * One study: its definition, live progress per step (GET every 2 s while it runs: the
 * API has no event stream for studies), cancel, exports, and once ended its results.
 */
@Component({
  selector: 'pw-study-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule, SweepResult, EnsembleResult],
  templateUrl: './study-page.html',
  styleUrl: './study-page.scss',
})
export class StudyPage {
  readonly studyId = input.required<string>();

  private readonly api = inject(StudiesApi);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  protected readonly study = signal<StudyDetail | null>(null);
  protected readonly cancelling = signal(false);
  protected readonly percent = studyPercent;
  protected readonly progressText = studyProgressText;
  protected readonly statusLabels = studyStatusLabels;
  protected readonly formatDuration = formatDuration;
  private pending: Subscription | null = null;

  protected readonly finished = computed(() => {
    const s = this.study();
    return s ? FINISHED_STUDY_STATUSES.includes(s.status) : false;
  });
  protected readonly sweep = computed(() => {
    const o = this.study()?.outcome;
    return o?.kind === 'sweep' ? o : null;
  });
  protected readonly ensemble = computed(() => {
    const o = this.study()?.outcome;
    return o?.kind === 'ensemble' ? o : null;
  });
  protected readonly csvUrl = computed(() => this.exportUrl('csv'));
  protected readonly jsonUrl = computed(() => this.exportUrl('json'));
  /** The CSV of the transmission map, when the study has one to export. */
  protected readonly mapCsvUrl = computed(() => {
    const groupId = this.group.id();
    const map = this.sweep()?.transmission;
    return groupId && map && map.from !== null ? this.api.exportUrl(groupId, this.studyId(), 'csv', 'transmission') : null;
  });

  constructor() {
    effect(() => {
      const groupId = this.group.id();
      const studyId = this.studyId();
      untracked(() => {
        this.study.set(null);
        if (groupId) this.load(groupId, studyId);
      });
    });
    this.destroyRef.onDestroy(() => this.pending?.unsubscribe());
  }

  protected cancel(): void {
    const groupId = this.group.id();
    if (!groupId || this.cancelling()) return;
    this.cancelling.set(true);
    this.api
      .cancel(groupId, this.studyId())
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (s) => {
          this.cancelling.set(false);
          this.study.set(s);
        },
        error: (err: unknown) => {
          this.cancelling.set(false);
          this.errors.show(err);
        },
      });
  }

  private exportUrl(format: 'csv' | 'json'): string | null {
    const groupId = this.group.id();
    return groupId ? this.api.exportUrl(groupId, this.studyId(), format) : null;
  }

  private load(groupId: string, studyId: string): void {
    this.pending?.unsubscribe();
    this.pending = this.api
      .study(groupId, studyId)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (s) => {
          this.study.set(s);
          if (!FINISHED_STUDY_STATUSES.includes(s.status)) {
            this.pending = timer(studyPollMs)
              .pipe(takeUntilDestroyed(this.destroyRef))
              .subscribe(() => this.load(groupId, studyId));
          }
        },
        error: (err: unknown) => this.errors.show(err),
      });
  }
}
