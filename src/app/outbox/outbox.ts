import { DatePipe } from '@angular/common';
import { Component, inject, signal } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { catchError, of, switchMap } from 'rxjs';
import { ErrorReport } from '../core/errors/error-report';
import { OutboxApi } from './outbox-api';
import { outboxUnavailable } from './outbox-unavailable';

/** The messages the local mail stand-in received, newest first, for trying invitations and resets. */
@Component({
  selector: 'pw-outbox',
  imports: [DatePipe, RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule],
  templateUrl: './outbox.html',
  styleUrl: './outbox.scss',
})
export class Outbox {
  private readonly api = inject(OutboxApi);
  private readonly errors = inject(ErrorReport);
  protected readonly reload = signal(0);
  protected readonly unavailable = signal<string | null>(null);

  protected readonly messages = toSignal(
    toObservable(this.reload).pipe(
      switchMap(() =>
        this.api.list().pipe(
          catchError((err: unknown) => {
            const why = outboxUnavailable(err);
            if (why) this.unavailable.set(why);
            else this.errors.show(err);
            return of(null);
          }),
        ),
      ),
    ),
  );
}
