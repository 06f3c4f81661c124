import { ChangeDetectionStrategy, Component, DestroyRef, inject, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSnackBar } from '@angular/material/snack-bar';
import { Router, RouterLink } from '@angular/router';
import { filter, switchMap } from 'rxjs';
import { Auth } from '../core/auth/auth';
import { confirmAction } from '../core/confirm/confirm-dialog';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { toProblem } from '../core/errors/problem';
import { passwordsMatch } from '../core/forms/passwords-match';
import { AccountApi } from './account-api';

/**
 * The signed-in person's own settings: the e-mail (shown), the name, a password
 * change that asks for the current one, the way to the API tokens, and signing out
 * every session at once.
 */
@Component({
  selector: 'pw-account-settings',
  changeDetection: ChangeDetectionStrategy.OnPush,
  imports: [ReactiveFormsModule, RouterLink, MatButtonModule, MatCardModule, MatFormFieldModule, MatIconModule, MatInputModule],
  templateUrl: './account-settings.html',
  styleUrl: './account-settings.scss',
})
export class AccountSettings {
  private readonly api = inject(AccountApi);
  private readonly auth = inject(Auth);
  private readonly errors = inject(ErrorReport);
  private readonly snackBar = inject(MatSnackBar);
  private readonly dialog = inject(MatDialog);
  private readonly router = inject(Router);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly user = this.auth.user;
  protected readonly fieldError = fieldError;

  protected readonly nameForm = new FormGroup({
    name: new FormControl(this.auth.user()?.name ?? '', { nonNullable: true, validators: [Validators.required, Validators.maxLength(200)] }),
  });
  protected readonly passwordForm = new FormGroup(
    {
      currentPassword: new FormControl('', { nonNullable: true, validators: [Validators.required] }),
      newPassword: new FormControl('', { nonNullable: true, validators: [Validators.required, Validators.minLength(8)] }),
      repeat: new FormControl('', { nonNullable: true, validators: [Validators.required] }),
    },
    { validators: passwordsMatch('newPassword', 'repeat') },
  );
  protected readonly busy = signal<'name' | 'password' | 'everywhere' | null>(null);

  protected saveName(): void {
    if (this.nameForm.invalid || this.busy()) return;
    this.busy.set('name');
    this.api
      .rename(this.nameForm.controls.name.value.trim())
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: async (p) => {
          this.busy.set(null);
          this.nameForm.markAsPristine();
          await this.auth.refresh();
          this.snackBar.open(`Your name is now ${p.name}.`, 'OK', { duration: 4000 });
        },
        error: (err: unknown) => this.fail(err, this.nameForm),
      });
  }

  protected changePassword(): void {
    if (this.passwordForm.invalid || this.busy()) return;
    const { currentPassword, newPassword } = this.passwordForm.getRawValue();
    this.busy.set('password');
    this.api
      .changePassword(currentPassword, newPassword)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: async () => {
          this.busy.set(null);
          this.passwordForm.reset();
          // The change ended every session; the server gave this browser a new one (and a new CSRF value).
          await this.auth.refresh();
          this.snackBar.open('Password changed. Other browsers and devices have been signed out.', 'OK', { duration: 6000 });
        },
        error: (err: unknown) => this.fail(err, this.passwordForm),
      });
  }

  protected signOutEverywhere(): void {
    confirmAction(this.dialog, {
      title: 'Sign out everywhere?',
      message: 'Every browser signed in to this account, this one included, is signed out. Personal API tokens keep working; revoke them on the tokens page.',
      confirmLabel: 'Sign out everywhere',
    })
      .pipe(
        filter(Boolean),
        switchMap(() => {
          this.busy.set('everywhere');
          return this.api.signOutEverywhere();
        }),
        takeUntilDestroyed(this.destroyRef),
      )
      .subscribe({
        next: () => {
          this.busy.set(null);
          this.auth.forget();
          void this.router.navigate(['/sign-in']);
        },
        error: (err: unknown) => {
          this.busy.set(null);
          this.errors.show(err);
        },
      });
  }

  /** Field issues of a 400 go under their fields; anything else to the error report. */
  private fail(err: unknown, form: FormGroup): void {
    this.busy.set(null);
    const problem = toProblem(err);
    if (problem.issues?.length) {
      for (const issue of problem.issues) {
        const control = form.get(issue.path);
        if (control) {
          control.setErrors({ server: `${issue.message.charAt(0).toUpperCase()}${issue.message.slice(1)}.` });
          control.markAsTouched();
        }
      }
      if (problem.issues.some((i) => form.get(i.path))) return;
    }
    this.errors.show(err);
  }
}
