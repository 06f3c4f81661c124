import { Component, inject } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatDividerModule } from '@angular/material/divider';
import { MatIconModule } from '@angular/material/icon';
import { MatMenuModule } from '@angular/material/menu';
import { Router, RouterLink } from '@angular/router';
import { Auth } from '../auth/auth';
import { ErrorReport } from '../errors/error-report';

/** The signed-in user's menu: account activity, API tokens, the mail outbox for the site operator, sign-out. */
@Component({
  selector: 'pw-user-menu',
  imports: [MatButtonModule, MatIconModule, MatMenuModule, MatDividerModule, RouterLink],
  template: `
    @if (user(); as user) {
      <button mat-button type="button" [matMenuTriggerFor]="menu" [attr.aria-label]="'Account of ' + user.name">
        <mat-icon aria-hidden="true">account_circle</mat-icon>
        <span class="name">{{ user.name }}</span>
      </button>
      <mat-menu #menu="matMenu" xPosition="before">
        <div class="who" aria-hidden="true">
          <div class="who-name">{{ user.name }}</div>
          <div class="who-email">{{ user.email }}</div>
        </div>
        <mat-divider />
        <a mat-menu-item routerLink="/account">
          <mat-icon aria-hidden="true">manage_history</mat-icon>
          <span>Account activity</span>
        </a>
        <a mat-menu-item routerLink="/tokens">
          <mat-icon aria-hidden="true">key</mat-icon>
          <span>API tokens</span>
        </a>
        @if (siteOperator()) {
          <a mat-menu-item routerLink="/outbox">
            <mat-icon aria-hidden="true">outgoing_mail</mat-icon>
            <span>Mail outbox</span>
          </a>
        }
        <mat-divider />
        <button mat-menu-item type="button" (click)="signOut()">
          <mat-icon aria-hidden="true">logout</mat-icon>
          <span>Sign out</span>
        </button>
      </mat-menu>
    }
  `,
  styles: `
    .who {
      padding: 8px 16px 12px;
    }
    .who-name {
      font: var(--mat-sys-title-small);
    }
    .who-email {
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
    }
    @media (max-width: 799.98px) {
      .name {
        display: none;
      }
    }
  `,
})
export class UserMenu {
  private readonly auth = inject(Auth);
  private readonly router = inject(Router);
  private readonly errors = inject(ErrorReport);

  protected readonly user = this.auth.user;
  protected readonly siteOperator = this.auth.siteOperator;

  protected async signOut(): Promise<void> {
    try {
      await this.auth.signOut();
    } catch (err) {
      // The local session is gone either way; say so only if the server could not be told.
      this.errors.show(err);
    }
    await this.router.navigate(['/sign-in']);
  }
}
