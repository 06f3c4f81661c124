import { ChangeDetectionStrategy, Component, DestroyRef, effect, inject, input, output, signal, untracked } from '@angular/core';
import { stepValueText } from './parameter-values';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import type { StudyStepDetail } from '../../../shared/api/studies';
import { formatEnergy, formatQuality, formatWidth } from '../core/format/energy-format';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { injectCanDesign } from '../core/group/design-permission';
import { DensityImage } from './density-image';
import { type SavedStep, StudiesApi } from './studies-api';

/**
 * One opened step (or realisation) of a study: its poles with their mode densities, the
 * certificate of its search, and "Save as model version" for designers (the version gets
 * the step's resonances in the catalogue). With a followed trajectory, its resonance at
 * this step comes first, with buttons to walk along the trajectory step by step.
 */
@Component({
  selector: 'pw-study-step-panel',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule, DensityImage],
  templateUrl: './study-step-panel.html',
  styleUrl: './study-step-panel.scss',
})
export class StudyStepPanel {
  protected readonly stepValue = stepValueText;
  readonly studyId = input.required<string>();
  readonly index = input.required<number>();
  /** The swept parameter's name, for the heading (none for an ensemble). */
  readonly parameter = input<string | null>(null);
  /** The followed trajectory at this step: its pole here and its previous and next steps (null: none followed, or not through this step). */
  readonly followed = input<{ trajectory: number; pole: number; previous: number | null; next: number | null } | null>(null);
  readonly closed = output<void>();
  /** Another step along the followed trajectory was asked for. */
  readonly moved = output<number>();

  private readonly api = inject(StudiesApi);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly canDesign = injectCanDesign();
  protected readonly step = signal<StudyStepDetail | null>(null);
  protected readonly saving = signal(false);
  protected readonly saved = signal<SavedStep | null>(null);
  protected readonly formatEnergy = formatEnergy;
  protected readonly formatWidth = formatWidth;
  protected readonly formatQuality = formatQuality;

  constructor() {
    effect(() => {
      const groupId = this.group.id();
      const studyId = this.studyId();
      const index = this.index();
      untracked(() => {
        this.step.set(null);
        this.saved.set(null);
        if (!groupId) return;
        this.api
          .step(groupId, studyId, index)
          .pipe(takeUntilDestroyed(this.destroyRef))
          .subscribe({ next: (s) => this.step.set(s), error: (err: unknown) => this.errors.show(err) });
      });
    });
  }

  protected save(): void {
    const groupId = this.group.id();
    if (!groupId || this.saving()) return;
    this.saving.set(true);
    this.api
      .saveStep(groupId, this.studyId(), this.index())
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (s) => {
          this.saving.set(false);
          this.saved.set(s);
        },
        error: (err: unknown) => {
          this.saving.set(false);
          this.errors.show(err);
        },
      });
  }
}
