import { DatePipe } from '@angular/common';
import { Component, inject } from '@angular/core';
import { toObservable, toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatListModule } from '@angular/material/list';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { type Observable, catchError, of, switchMap } from 'rxjs';
import { Auth } from '../core/auth/auth';
import { roleLabel } from '../core/auth/role-label';
import { ErrorReport } from '../core/errors/error-report';
import { CurrentGroup } from '../core/group/current-group';
import { MembersApi } from '../core/api/members-api';
import { actionDetail, actionLabel } from './action-label';
import { DashboardApi } from './dashboard-api';

/** The group's landing page: what happened lately, who is in it, where to go next. */
@Component({
  selector: 'pw-dashboard',
  imports: [DatePipe, RouterLink, MatButtonModule, MatIconModule, MatListModule, MatProgressBarModule],
  templateUrl: './dashboard.html',
  styleUrl: './dashboard.scss',
})
export class Dashboard {
  private readonly api = inject(DashboardApi);
  private readonly membersApi = inject(MembersApi);
  private readonly errors = inject(ErrorReport);
  private readonly currentGroup = inject(CurrentGroup);
  private readonly groupId$ = toObservable(this.currentGroup.id);

  protected readonly group = this.currentGroup.group;
  protected readonly isAdmin = this.currentGroup.isAdmin;
  protected readonly siteOperator = inject(Auth).siteOperator;
  protected readonly roleLabel = roleLabel;
  protected readonly actionLabel = actionLabel;
  protected readonly actionDetail = actionDetail;

  /** `undefined` while loading, `null` when the request failed (the snackbar said why). */
  protected readonly activity = toSignal(this.perGroup((id) => this.api.activity(id, 20)));
  protected readonly members = toSignal(this.perGroup((id) => this.membersApi.members(id)));

  private perGroup<T>(load: (groupId: string) => Observable<T>): Observable<T | null | undefined> {
    return this.groupId$.pipe(
      switchMap((id) =>
        id
          ? load(id).pipe(
              catchError((err: unknown) => {
                this.errors.show(err);
                return of(null);
              }),
            )
          : of(undefined),
      ),
    );
  }
}
