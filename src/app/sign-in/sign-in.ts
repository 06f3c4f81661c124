import { Component, inject, signal } from '@angular/core';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { Auth } from '../core/auth/auth';
import { fieldError } from '../core/errors/field-error';
import { toProblem } from '../core/errors/problem';

/** E-mail and password; the server's own wording of a failure is shown above the form. */
@Component({
  selector: 'pw-sign-in',
  imports: [ReactiveFormsModule, RouterLink, MatFormFieldModule, MatInputModule, MatButtonModule, MatIconModule, MatProgressBarModule],
  templateUrl: './sign-in.html',
})
export class SignIn {
  private readonly auth = inject(Auth);
  private readonly router = inject(Router);
  private readonly route = inject(ActivatedRoute);

  protected readonly form = inject(NonNullableFormBuilder).group({
    email: ['', [Validators.required, Validators.email]],
    password: ['', Validators.required],
  });
  protected readonly busy = signal(false);
  protected readonly failure = signal<string | null>(null);
  protected readonly fieldError = fieldError;

  protected async submit(): Promise<void> {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.busy.set(true);
    this.failure.set(null);
    const { email, password } = this.form.getRawValue();
    try {
      await this.auth.signIn(email.trim(), password);
      await this.router.navigateByUrl(this.safeReturnUrl());
    } catch (err) {
      this.failure.set(toProblem(err).message);
      this.form.controls.password.reset('');
    } finally {
      this.busy.set(false);
    }
  }

  /** Only paths inside this app: a returnUrl is user-controlled and must not lead elsewhere. */
  private safeReturnUrl(): string {
    const wanted = this.route.snapshot.queryParamMap.get('returnUrl');
    return wanted && wanted.startsWith('/') && !wanted.startsWith('//') && !wanted.startsWith('/sign-in') ? wanted : '/';
  }
}
