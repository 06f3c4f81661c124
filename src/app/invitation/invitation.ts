import { Component, computed, inject, input, signal } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { Router, RouterLink } from '@angular/router';
import { type Observable, catchError, firstValueFrom, map, of, switchMap } from 'rxjs';
import { Auth } from '../core/auth/auth';
import { roleDuty, roleLabel } from '../core/auth/role-label';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { toProblem } from '../core/errors/problem';
import type { InvitationPreview } from '../../../shared/api/auth';
import { InvitationApi } from './invitation-api';

type OfferState = { kind: 'loading' } | { kind: 'ready'; offer: InvitationPreview } | { kind: 'gone'; message: string };

/** Why a link does not work, in words for the person who clicked it. */
function goneMessage(err: unknown): string {
  const problem = toProblem(err);
  if (problem.status === 404) return 'This invitation link is not known. Check that the whole link was copied.';
  if (problem.status === 410) return 'This invitation has already been used or has expired. Ask the admin for a new one.';
  return problem.message;
}

/** Landing page of an e-mailed invitation: shows group and role, asks for name and password. */
@Component({
  selector: 'pw-invitation',
  imports: [ReactiveFormsModule, RouterLink, MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule],
  templateUrl: './invitation.html',
})
export class Invitation {
  private readonly api = inject(InvitationApi);
  private readonly auth = inject(Auth);
  private readonly router = inject(Router);
  private readonly errors = inject(ErrorReport);

  /** `?token=` of the e-mailed link, bound by `withComponentInputBinding()`. */
  readonly token = input<string | undefined>(undefined);

  protected readonly state = toSignal(
    toObservable(this.token).pipe(
      switchMap((token): Observable<OfferState> =>
        token
          ? this.api.offer(token).pipe(
              map((offer): OfferState => ({ kind: 'ready', offer })),
              catchError((err: unknown) => of<OfferState>({ kind: 'gone', message: goneMessage(err) })),
            )
          : of<OfferState>({ kind: 'gone', message: 'The link has no invitation token. Open the link from the e-mail again.' }),
      ),
    ),
    { initialValue: { kind: 'loading' } as OfferState },
  );
  protected readonly offer = computed(() => {
    const s = this.state();
    return s.kind === 'ready' ? s.offer : null;
  });
  protected readonly roleLabel = roleLabel;
  protected readonly roleDuty = roleDuty;
  protected readonly fieldError = fieldError;
  protected readonly busy = signal(false);

  protected readonly form = inject(NonNullableFormBuilder).group({
    name: ['', [Validators.required, Validators.maxLength(120)]],
    password: ['', [Validators.required, Validators.minLength(8)]],
  });

  protected async accept(): Promise<void> {
    const token = this.token();
    if (!token || this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const { name, password } = this.form.getRawValue();
    this.busy.set(true);
    try {
      const session = await firstValueFrom(this.api.accept(token, name.trim(), password));
      this.auth.adopt(session);
      const joined = session.groups.find((g) => g.name === this.offer()?.groupName);
      await this.router.navigate(joined ? ['/g', joined.slug, 'dashboard'] : ['/']);
    } catch (err) {
      this.errors.showOnForm(err, this.form);
    } finally {
      this.busy.set(false);
    }
  }
}
