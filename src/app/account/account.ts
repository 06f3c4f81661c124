import { DatePipe } from '@angular/common';
import { Component, computed, inject } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { catchError, map, of } from 'rxjs';
import { Auth } from '../core/auth/auth';
import { ErrorReport } from '../core/errors/error-report';
import { AccountApi } from './account-api';
import { accountEvent } from './account-event';
import { NotificationSettings } from '../core/fabrication/notification-settings';
import { AccountSettings } from './account-settings';

/** The signed-in person's account: settings, and what happened to it lately (sign-ins, failures, resets, tokens). */
@Component({
  selector: 'pw-account',
  imports: [DatePipe, RouterLink, MatIconModule, MatProgressBarModule, AccountSettings, NotificationSettings],
  templateUrl: './account.html',
  styleUrl: './account.scss',
})
export class Account {
  private readonly api = inject(AccountApi);
  private readonly errors = inject(ErrorReport);
  protected readonly user = inject(Auth).user;

  /** undefined while loading, null when it failed. */
  protected readonly entries = toSignal(
    this.api.activity().pipe(
      map((list) => list.map((e) => ({ id: e.id, at: e.at, ...accountEvent(e) }))),
      catchError((err: unknown) => {
        this.errors.show(err);
        return of(null);
      }),
    ),
  );
  protected readonly alerts = computed(() => this.entries()?.filter((e) => e.alert).length ?? 0);
}
