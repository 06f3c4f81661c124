import { Clipboard } from '@angular/cdk/clipboard';
import { DatePipe, DOCUMENT } from '@angular/common';
import { Component, computed, inject, signal, viewChild } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { FormGroupDirective, NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { catchError, firstValueFrom, of, switchMap } from 'rxjs';
import { confirmAction } from '../core/confirm/confirm-dialog';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { curlExample } from './curl-example';
import type { ApiToken, CreatedApiToken } from '../../../shared/api/account';
import { TokensApi } from './tokens-api';

/** Personal API tokens for scripts: create (the secret is shown once), list, revoke. */
@Component({
  selector: 'pw-tokens',
  imports: [DatePipe, ReactiveFormsModule, MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule],
  templateUrl: './tokens.html',
  styleUrl: './tokens.scss',
})
export class Tokens {
  private readonly api = inject(TokensApi);
  private readonly errors = inject(ErrorReport);
  private readonly snackBar = inject(MatSnackBar);
  private readonly clipboard = inject(Clipboard);
  private readonly dialog = inject(MatDialog);
  private readonly origin = inject(DOCUMENT).location?.origin ?? '';
  private readonly reload = signal(0);

  protected readonly fieldError = fieldError;
  /** resetForm() also clears the submitted flag, so the emptied field is not shown as an error. */
  private readonly formDirective = viewChild(FormGroupDirective);
  protected readonly busy = signal(false);
  /** The just-created token; kept only in memory, gone on navigation. */
  protected readonly created = signal<CreatedApiToken | null>(null);
  protected readonly curl = computed(() => {
    const c = this.created();
    return c ? curlExample(this.origin, c.token) : '';
  });

  protected readonly tokens = toSignal(
    toObservable(this.reload).pipe(
      switchMap(() =>
        this.api.list().pipe(
          catchError((err: unknown) => {
            this.errors.show(err);
            return of(null);
          }),
        ),
      ),
    ),
  );

  protected readonly form = inject(NonNullableFormBuilder).group({
    name: ['', [Validators.required, Validators.maxLength(80)]],
  });

  protected async create(): Promise<void> {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.busy.set(true);
    try {
      const token = await firstValueFrom(this.api.create(this.form.getRawValue().name.trim()));
      this.created.set(token);
      this.formDirective()?.resetForm({ name: '' });
      this.reload.update((n) => n + 1);
    } catch (err) {
      this.errors.showOnForm(err, this.form);
    } finally {
      this.busy.set(false);
    }
  }

  protected copy(text: string, what: string): void {
    const ok = this.clipboard.copy(text);
    this.snackBar.open(ok ? `${what} copied.` : `Could not copy; select the ${what.toLowerCase()} and copy it by hand.`, 'OK', {
      duration: 4000,
    });
  }

  protected async revoke(token: ApiToken): Promise<void> {
    const yes = await firstValueFrom(
      confirmAction(this.dialog, {
        title: `Revoke "${token.name}"?`,
        message: 'Scripts that use this token stop working at once. This cannot be undone.',
        confirmLabel: 'Revoke',
      }),
    );
    if (!yes) return;
    this.busy.set(true);
    try {
      await firstValueFrom(this.api.revoke(token.id));
      if (this.created()?.id === token.id) this.created.set(null);
      this.snackBar.open(`"${token.name}" was revoked.`, 'OK', { duration: 5000 });
    } catch (err) {
      this.errors.show(err);
    } finally {
      this.busy.set(false);
      this.reload.update((n) => n + 1);
    }
  }
}
