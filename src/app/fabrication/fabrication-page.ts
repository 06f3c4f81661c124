import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, DestroyRef, computed, effect, inject, signal, untracked } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import type { FabricationItem, FailedNotification } from '../../../shared/api/fabrication';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { formatEnergy, formatQuality, formatWidth, significant } from '../core/format/energy-format';
import { CatalogueImportForm } from './catalogue-import-form';
import { FabricationApi } from '../core/fabrication/fabrication-api';
import { STATE_ICONS, stateLabel } from '../core/fabrication/state-label';

/**
 * The Fabrication page: approved, sent and measured resonances with their package downloads
 * (any member may download; a fabrication partner is a viewer), and the prediction against
 * the measurement for those measured.
 */
@Component({
  selector: 'pw-fabrication-page',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [DatePipe, RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule, CatalogueImportForm],
  templateUrl: './fabrication-page.html',
  styleUrl: './fabrication-page.scss',
})
export class FabricationPage {
  private readonly api = inject(FabricationApi);
  private readonly errors = inject(ErrorReport);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly group = inject(CurrentGroup);
  protected readonly stateLabel = stateLabel;
  protected readonly stateIcons = STATE_ICONS;
  protected readonly formatEnergy = formatEnergy;
  protected readonly formatWidth = formatWidth;
  protected readonly formatQuality = formatQuality;
  protected readonly significant = significant;

  protected readonly items = signal<FabricationItem[] | undefined>(undefined);
  /** Admins only: e-mails the queue gave up on. */
  protected readonly failedMail = signal<FailedNotification[]>([]);
  /** The failed e-mail being queued again, if any. */
  protected readonly retrying = signal<string | null>(null);
  protected readonly measured = computed(() => (this.items() ?? []).filter((i) => i.measurement !== null));

  constructor() {
    effect(() => {
      const gid = this.group.id();
      if (gid) untracked(() => this.load(gid));
    });
  }

  protected sigmas(s: number | null): string {
    return s === null ? 'no σ given' : `${significant(s, 3)} σ`;
  }

  protected percent(p: number | null): string {
    return p === null ? '–' : `${significant(p, 3)} %`;
  }

  /** Queues a failed e-mail again; it leaves the list (the queue retries it afresh). */
  protected retryMail(id: string): void {
    const gid = this.group.id();
    if (!gid) return;
    this.retrying.set(id);
    this.api
      .retryNotification(gid, id)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: () => {
          this.retrying.set(null);
          this.failedMail.update((list) => list.filter((f) => f.id !== id));
        },
        error: (err: unknown) => {
          this.retrying.set(null);
          this.errors.show(err);
        },
      });
  }

  private load(groupId: string): void {
    if (this.group.isAdmin()) {
      this.api
        .failedNotifications(groupId)
        .pipe(takeUntilDestroyed(this.destroyRef))
        .subscribe({ next: (list) => this.failedMail.set(list), error: () => this.failedMail.set([]) });
    }
    this.api
      .list(groupId, ['approved', 'sent', 'measured'])
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
