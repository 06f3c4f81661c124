import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import {
  type AccountProfile,
  type ActivityEntry,
  accountActivityRoute,
  accountProfileRoute,
  accountRenameRoute,
  passwordChangeRoute,
  signOutEverywhereRoute,
} from '../../../shared/api/account';
import type { AnswerOf } from '../../../shared/api/route';
import { emptyAnswer, parseAnswer } from '../core/http/parse-answer';

/** HTTP for what concerns the signed-in person's own account (routes declared in shared/api/account.ts). */
@Injectable({ providedIn: 'root' })
export class AccountApi {
  private readonly http = inject(HttpClient);

  profile(): Observable<AccountProfile> {
    return this.http.get('/api/account').pipe(parseAnswer(accountProfileRoute, 'account'));
  }

  rename(name: string): Observable<AccountProfile> {
    return this.http.patch('/api/account', { name }).pipe(parseAnswer(accountRenameRoute, 'account'));
  }

  changePassword(currentPassword: string, newPassword: string): Observable<void> {
    return this.http.post('/api/account/password', { currentPassword, newPassword }).pipe(emptyAnswer(passwordChangeRoute));
  }

  signOutEverywhere(): Observable<AnswerOf<typeof signOutEverywhereRoute>> {
    return this.http.post('/api/account/sign-out-everywhere', {}).pipe(parseAnswer(signOutEverywhereRoute));
  }

  activity(limit = 50): Observable<ActivityEntry[]> {
    return this.http.get('/api/account/activity', { params: { limit } }).pipe(parseAnswer(accountActivityRoute, 'account activity'));
  }
}
