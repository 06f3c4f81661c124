import { DOCUMENT } from '@angular/common';
import { Component, inject } from '@angular/core';
import { RouterOutlet } from '@angular/router';

/** The root: a skip link, the routed page, and the note every page carries. */
@Component({
  selector: 'pw-root',
  imports: [RouterOutlet],
  template: `
    <a class="skip-link" href="#main" (click)="skipToMain($event)">Skip to main content</a>
    <div class="page">
      <router-outlet />
    </div>
    <footer class="footer-note">
      Simulated figures are no substitute for measurement or for the fabrication line's own design
      rules.
    </footer>
  `,
  styles: `
    :host { display: flex; flex-direction: column; height: 100vh; }
    .page { flex: 1; min-height: 0; overflow: auto; }
    .page > :not(router-outlet) { display: block; min-height: 100%; }
    .footer-note {
      padding: 6px 16px;
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
      background: var(--mat-sys-surface-container);
      border-top: 1px solid var(--mat-sys-outline-variant);
      text-align: center;
    }
  `,
})
export class App {
  private readonly document = inject(DOCUMENT);

  /** Moves focus itself: a bare "#main" would also go through the router and change the URL. */
  protected skipToMain(event: Event): void {
    event.preventDefault();
    this.document.getElementById('main')?.focus();
  }
}
