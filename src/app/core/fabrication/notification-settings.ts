import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { MatSlideToggleModule } from '@angular/material/slide-toggle';
import type { NotificationKind, NotificationSettings as Settings } from '../../../../shared/api/fabrication';
import { ErrorReport } from '../errors/error-report';
import { FabricationApi } from './fabrication-api';

/** The account page's e-mail settings: each kind of notification on or off, saved at once. */
@Component({
  selector: 'pw-notification-settings',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [MatSlideToggleModule],
  template: `
    <section class="settings" data-test="notification-settings">
      <h2>E-mail notifications</h2>
      @if (settings(); as s) {
        <ul>
          @for (k of s.kinds; track k.kind) {
            <li>
              <mat-slide-toggle [checked]="k.enabled" (change)="set(k.kind, $event.checked)" [attr.data-kind]="k.kind">{{ k.label }}</mat-slide-toggle>
            </li>
          }
        </ul>
      } @else {
        <p class="muted">Loading…</p>
      }
    </section>
  `,
  styles: `
    .settings {
      margin: 16px 0 24px;
    }
    ul {
      list-style: none;
      padding: 0;
      display: grid;
      gap: 8px;
    }
    h2 {
      font: var(--mat-sys-title-large);
    }
    .muted {
      color: var(--mat-sys-on-surface-variant);
    }
  `,
})
export class NotificationSettings {
  private readonly api = inject(FabricationApi);
  private readonly errors = inject(ErrorReport);
  protected readonly settings = signal<Settings | null>(null);

  constructor() {
    this.api.settings().subscribe({ next: (s) => this.settings.set(s), error: (err: unknown) => this.errors.show(err) });
  }

  protected set(kind: NotificationKind, enabled: boolean): void {
    this.api.saveSettings({ [kind]: enabled }).subscribe({
      next: (s) => this.settings.set(s),
      error: (err: unknown) => {
        this.errors.show(err);
        // Show the stored setting again, not the one that failed.
        this.api.settings().subscribe({ next: (s) => this.settings.set(s) });
      },
    });
  }
}
