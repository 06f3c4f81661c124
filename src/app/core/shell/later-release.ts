import { Component, input } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';

/** The honest placeholder for an area that is planned but not built yet. */
@Component({
  selector: 'pw-later-release',
  imports: [MatIconModule],
  template: `
    <h1>{{ area() }}</h1>
    <p class="note">
      <mat-icon aria-hidden="true">schedule</mat-icon>
      <span>{{ area() }} arrives in a later release.</span>
    </p>
  `,
  styles: `
    h1 {
      font: var(--mat-sys-headline-medium);
      margin: 0 0 16px;
    }
    .note {
      display: flex;
      align-items: center;
      gap: 8px;
      color: var(--mat-sys-on-surface-variant);
      font: var(--mat-sys-body-large);
    }
  `,
})
export class LaterRelease {
  /** From the route's data, bound by `withComponentInputBinding()`. */
  readonly area = input('This area');
}
