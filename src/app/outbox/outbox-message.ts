import { DatePipe } from '@angular/common';
import { Component, computed, inject, input, signal } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { catchError, of, switchMap } from 'rxjs';
import { ErrorReport } from '../core/errors/error-report';
import { linkSegments } from './link-segments';
import { OutboxApi } from './outbox-api';
import { outboxUnavailable } from './outbox-unavailable';

/** One received message, its plain-text body with the links made clickable. */
@Component({
  selector: 'pw-outbox-message',
  imports: [DatePipe, RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule],
  templateUrl: './outbox-message.html',
  styleUrl: './outbox-message.scss',
})
export class OutboxMessage {
  private readonly api = inject(OutboxApi);
  private readonly errors = inject(ErrorReport);

  /** The `:messageId` route parameter. */
  readonly messageId = input.required<string>();

  protected readonly unavailable = signal<string | null>(null);
  protected readonly message = toSignal(
    toObservable(this.messageId).pipe(
      switchMap((id) =>
        this.api.message(id).pipe(
          catchError((err: unknown) => {
            const why = outboxUnavailable(err);
            if (why) this.unavailable.set('This message is not in the outbox. ' + why);
            else this.errors.show(err);
            return of(null);
          }),
        ),
      ),
    ),
  );
  protected readonly segments = computed(() => linkSegments(this.message()?.text ?? ''));
}
