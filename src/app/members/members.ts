import { DatePipe } from '@angular/common';
import { Component, computed, inject, signal, viewChild } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { FormGroupDirective, NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTooltipModule } from '@angular/material/tooltip';
import { catchError, combineLatest, filter, firstValueFrom, of, switchMap } from 'rxjs';
import { Auth } from '../core/auth/auth';
import { roleDuty, roleLabel } from '../core/auth/role-label';
import { type Role, ROLES as roles } from '../../../shared/api/enums';
import { confirmAction } from '../core/confirm/confirm-dialog';
import { ErrorReport } from '../core/errors/error-report';
import { fieldError } from '../core/errors/field-error';
import { CurrentGroup } from '../core/group/current-group';
import { GroupBackup } from './group-backup';
import type { Invitation, Member } from '../../../shared/api/groups';
import { MembersApi } from '../core/api/members-api';

/**
 * The group's members. Admins invite by e-mail, change roles and remove people; everyone
 * else sees the same list read-only (the server enforces this too).
 */
@Component({
  selector: 'pw-members',
  imports: [
    DatePipe,
    GroupBackup,
    ReactiveFormsModule,
    MatButtonModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    MatTooltipModule,
  ],
  templateUrl: './members.html',
  styleUrl: './members.scss',
})
export class Members {
  private readonly api = inject(MembersApi);
  private readonly auth = inject(Auth);
  private readonly errors = inject(ErrorReport);
  private readonly snackBar = inject(MatSnackBar);
  private readonly dialog = inject(MatDialog);
  private readonly currentGroup = inject(CurrentGroup);
  private readonly reload = signal(0);
  private readonly key$ = combineLatest([toObservable(this.currentGroup.id), toObservable(this.reload)]);

  protected readonly group = this.currentGroup.group;
  protected readonly isAdmin = this.currentGroup.isAdmin;
  protected readonly me = computed(() => this.auth.user()?.id ?? null);
  protected readonly roles = roles;
  protected readonly roleLabel = roleLabel;
  protected readonly roleDuty = roleDuty;
  protected readonly fieldError = fieldError;
  /** resetForm() also clears the submitted flag, so the emptied field is not shown as an error. */
  private readonly formDirective = viewChild(FormGroupDirective);
  protected readonly busy = signal(false);

  /** `undefined` while loading, `null` after a failure (reported by snackbar). */
  protected readonly members = toSignal(
    this.key$.pipe(switchMap(([id]) => (id ? this.api.members(id).pipe(catchError((err: unknown) => this.failed(err))) : of(undefined)))),
  );

  /** Only admins may list invitations; others never ask. */
  protected readonly invitations = toSignal(
    this.key$.pipe(
      filter(() => this.isAdmin()),
      switchMap(([id]) => (id ? this.api.invitations(id).pipe(catchError((err: unknown) => this.failed(err))) : of(undefined))),
    ),
  );

  protected readonly inviteForm = inject(NonNullableFormBuilder).group({
    email: ['', [Validators.required, Validators.email]],
    role: ['designer' as Role, Validators.required],
  });

  protected async invite(): Promise<void> {
    const groupId = this.currentGroup.id();
    if (!groupId || this.inviteForm.invalid) {
      this.inviteForm.markAllAsTouched();
      return;
    }
    const { email, role } = this.inviteForm.getRawValue();
    await this.run(async () => {
      try {
        await firstValueFrom(this.api.invite(groupId, email.trim(), role));
        this.snackBar.open(`Invitation sent to ${email.trim()} as ${roleLabel[role].toLowerCase()}.`, 'OK', {
          duration: 6000,
        });
        this.formDirective()?.resetForm({ email: '', role });
        this.reload.update((n) => n + 1);
      } catch (err) {
        const problem = this.errors.showOnForm(err, this.inviteForm);
        // mail_failed: the invitation was saved, only its e-mail was not sent; list it.
        if (problem.code === 'mail_failed') this.reload.update((n) => n + 1);
      }
    });
  }

  protected async changeRole(member: Member, role: Role): Promise<void> {
    const groupId = this.currentGroup.id();
    if (!groupId || role === member.role) return;
    await this.run(async () => {
      try {
        await firstValueFrom(this.api.changeRole(groupId, member.userId, role));
        this.snackBar.open(`${member.name} is now ${roleLabel[role].toLowerCase()}.`, 'OK', { duration: 5000 });
        if (member.userId === this.me()) await this.auth.refresh();
      } catch (err) {
        // The select already shows the new role; reloading puts back what the server kept.
        this.errors.show(err);
      }
      this.reload.update((n) => n + 1);
    });
  }

  protected async remove(member: Member): Promise<void> {
    const groupId = this.currentGroup.id();
    const groupName = this.group()?.name ?? 'this group';
    if (!groupId) return;
    const yes = await firstValueFrom(
      confirmAction(this.dialog, {
        title: `Remove ${member.name}?`,
        message: `${member.name} (${member.email}) loses access to everything in ${groupName}. Their past work stays.`,
        confirmLabel: 'Remove',
      }),
    );
    if (!yes) return;
    await this.run(async () => {
      try {
        await firstValueFrom(this.api.remove(groupId, member.userId));
        this.snackBar.open(`${member.name} was removed from ${groupName}.`, 'OK', { duration: 5000 });
        if (member.userId === this.me()) await this.auth.refresh();
      } catch (err) {
        this.errors.show(err);
      }
      this.reload.update((n) => n + 1);
    });
  }

  protected async revoke(invitation: Invitation): Promise<void> {
    const groupId = this.currentGroup.id();
    if (!groupId) return;
    await this.run(async () => {
      try {
        await firstValueFrom(this.api.revokeInvitation(groupId, invitation.id));
        this.snackBar.open(`The invitation to ${invitation.email} was withdrawn.`, 'OK', { duration: 5000 });
      } catch (err) {
        this.errors.show(err);
      }
      this.reload.update((n) => n + 1);
    });
  }

  private async run(work: () => Promise<void>): Promise<void> {
    this.busy.set(true);
    try {
      await work();
    } finally {
      this.busy.set(false);
    }
  }

  private failed(err: unknown) {
    this.errors.show(err);
    return of(null);
  }
}
