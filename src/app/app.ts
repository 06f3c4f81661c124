import { DOCUMENT } from '@angular/common';
import { Component, ElementRef, inject } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { NavigationEnd, Router, RouterOutlet } from '@angular/router';
import { filter } from 'rxjs';

/** The root: a skip link, the routed page, and the note every page carries. */
@Component({
  selector: 'pw-root',
  imports: [RouterOutlet],
  host: { tabindex: '-1' },
  template: `
    <a class="skip-link" href="#main" (click)="skipToMain($event)">Skip to main content</a>
    <div class="page">
      <router-outlet />
    </div>
    <footer class="footer-note">Simulated figures are no substitute for measurement or for the fabrication line's own design rules.</footer>
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      height: 100vh;
      outline: none;
    }
    .page {
      flex: 1;
      min-height: 0;
      overflow: auto;
    }
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
  private readonly host = inject<ElementRef<HTMLElement>>(ElementRef);

  constructor() {
    // When a navigation removed the focused element (a submitted form), the next Tab
    // would start mid-page; restart it at the top, where the skip link is.
    inject(Router)
      .events.pipe(
        filter((e) => e instanceof NavigationEnd),
        takeUntilDestroyed(),
      )
      .subscribe(() => {
        const active = this.document.activeElement;
        if (!active || active === this.document.body || !active.isConnected) {
          this.host.nativeElement.focus({ preventScroll: true });
        }
      });
  }

  /** Moves focus itself: a bare "#main" would also go through the router and change the URL. */
  protected skipToMain(event: Event): void {
    event.preventDefault();
    this.document.getElementById('main')?.focus();
  }
}
