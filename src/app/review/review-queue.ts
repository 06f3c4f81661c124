import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormControl, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { RouterLink } from '@angular/router';
import type { FabricationItem } from '../../../shared/api/fabrication';
import { Auth } from '../core/auth/auth';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { formatEnergy, formatLifetime, formatQuality, formatWidth } from '../core/format/energy-format';
import { materialLabel } from '../core/format/material-label';
import { FabricationApi } from '../core/fabrication/fabrication-api';
import { STATE_ICONS, stateLabel } from '../core/fabrication/state-label';

/**
 * The reviewers' queue: candidates for fabrication with their figures, mode images and the
 * proposer's reason and tolerances; approve or reject each with a reason. The proposer of a
 * candidate sees it here but cannot decide on it (the server refuses that too).
 */
@Component({
  selector: 'pw-review-queue',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [ReactiveFormsModule, RouterLink, MatButtonModule, MatCardModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule],
  templateUrl: './review-queue.html',
  styleUrl: './review-queue.scss',
})
export class ReviewQueue {
  /** A resonance without a stored picture (e.g. imported): no broken image. */
  protected hideImage(event: Event): void {
    (event.target as HTMLImageElement).hidden = true;
  }
  private readonly api = inject(FabricationApi);
  private readonly errors = inject(ErrorReport);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  private readonly auth = inject(Auth);
  protected readonly group = inject(CurrentGroup);
  protected readonly stateLabel = stateLabel;
  protected readonly stateIcons = STATE_ICONS;
  protected readonly formatEnergy = formatEnergy;
  protected readonly formatWidth = formatWidth;
  protected readonly formatLifetime = formatLifetime;
  protected readonly formatQuality = formatQuality;
  protected readonly materialLabel = materialLabel;

  /** undefined while loading. */
  protected readonly items = signal<FabricationItem[] | undefined>(undefined);
  protected readonly busy = signal<string | null>(null);
  protected readonly reviewer = computed(() => ['admin', 'reviewer'].includes(this.group.group()?.role ?? ''));
  private readonly reasons = new Map<string, FormControl<string>>();

  constructor() {
    effect(() => {
      const gid = this.group.id();
      if (gid) untracked(() => this.load(gid));
    });
  }

  protected reason(id: string): FormControl<string> {
    let c = this.reasons.get(id);
    if (!c) {
      c = new FormControl('', { nonNullable: true });
      this.reasons.set(id, c);
    }
    return c;
  }

  protected mayDecide(item: FabricationItem): boolean {
    return this.reviewer() && item.proposedBy?.id !== this.auth.user()?.id;
  }

  protected decide(item: FabricationItem, action: 'approve' | 'reject'): void {
    const gid = this.group.id();
    if (!gid || this.busy()) return;
    this.busy.set(item.resonanceId);
    this.api
      .move(gid, item.resonanceId, { action, reason: this.reason(item.resonanceId).value.trim() })
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: () => {
          this.busy.set(null);
          this.items.update((list) => list?.filter((i) => i.resonanceId !== item.resonanceId));
          this.snackBar.open(action === 'approve' ? 'Approved: the proposer is told by e-mail.' : 'Rejected: the proposer is told by e-mail.', 'OK', {
            duration: 4000,
          });
        },
        error: (err: unknown) => {
          this.busy.set(null);
          this.errors.show(err);
        },
      });
  }

  private load(groupId: string): void {
    this.api
      .list(groupId, ['candidate', 'under_review'])
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (list) => this.items.set(list),
        error: (err: unknown) => {
          this.items.set([]);
          this.errors.show(err);
        },
      });
  }
}
