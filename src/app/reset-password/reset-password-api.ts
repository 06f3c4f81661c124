import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import { confirmPasswordResetRoute, requestPasswordResetRoute } from '../../../shared/api/auth';
import type { AnswerOf } from '../../../shared/api/route';
import { emptyAnswer, parseAnswer } from '../core/http/parse-answer';

/** HTTP for the two halves of a password reset: ask for the e-mail, then set the new password. */
@Injectable({ providedIn: 'root' })
export class ResetPasswordApi {
  private readonly http = inject(HttpClient);

  /** Always 202: the server does not say whether the address has an account. */
  request(email: string): Observable<AnswerOf<typeof requestPasswordResetRoute>> {
    return this.http.post('/api/auth/password-reset', { email }).pipe(parseAnswer(requestPasswordResetRoute));
  }

  confirm(token: string, password: string): Observable<void> {
    return this.http.post('/api/auth/password-reset/confirm', { token, password }).pipe(emptyAnswer(confirmPasswordResetRoute));
  }
}
