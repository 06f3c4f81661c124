import { Component, inject, input, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { firstValueFrom } from 'rxjs';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { toProblem } from '../core/errors/problem';
import { passwordsMatch } from '../core/forms/passwords-match';
import { ResetPasswordApi } from './reset-password-api';

/**
 * `/reset-password` asks for the e-mail address; `/reset-password?token=...` (the
 * e-mailed link) sets the new password.
 */
@Component({
  selector: 'pw-reset-password',
  imports: [ReactiveFormsModule, RouterLink, MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule],
  templateUrl: './reset-password.html',
})
export class ResetPassword {
  private readonly api = inject(ResetPasswordApi);
  private readonly errors = inject(ErrorReport);
  private readonly fb = inject(NonNullableFormBuilder);

  /** `?token=` of the e-mailed link, bound by `withComponentInputBinding()`. */
  readonly token = input<string | undefined>(undefined);

  protected readonly fieldError = fieldError;
  protected readonly busy = signal(false);
  protected readonly requested = signal<string | null>(null);
  protected readonly changed = signal(false);
  protected readonly linkInvalid = signal<string | null>(null);

  protected readonly requestForm = this.fb.group({
    email: ['', [Validators.required, Validators.email]],
  });
  protected readonly confirmForm = this.fb.group(
    {
      password: ['', [Validators.required, Validators.minLength(8)]],
      repeat: ['', Validators.required],
    },
    { validators: passwordsMatch('password', 'repeat') },
  );

  protected async request(): Promise<void> {
    if (this.requestForm.invalid) {
      this.requestForm.markAllAsTouched();
      return;
    }
    const email = this.requestForm.getRawValue().email.trim();
    this.busy.set(true);
    try {
      await firstValueFrom(this.api.request(email));
      this.requested.set(email);
    } catch (err) {
      this.errors.showOnForm(err, this.requestForm);
    } finally {
      this.busy.set(false);
    }
  }

  protected async confirm(): Promise<void> {
    const token = this.token();
    if (!token || this.confirmForm.invalid) {
      this.confirmForm.markAllAsTouched();
      return;
    }
    this.busy.set(true);
    try {
      await firstValueFrom(this.api.confirm(token, this.confirmForm.getRawValue().password));
      this.changed.set(true);
    } catch (err) {
      const problem = toProblem(err);
      if (problem.code === 'token_invalid') {
        this.linkInvalid.set('This link has already been used or has expired. Ask for a new one below.');
      } else this.errors.showOnForm(err, this.confirmForm);
    } finally {
      this.busy.set(false);
    }
  }
}
