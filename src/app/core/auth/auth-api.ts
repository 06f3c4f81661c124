import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import { type Session, sessionRoute, signInRoute, signOutRoute } from '../../../../shared/api/auth';
import { emptyAnswer, parseAnswer } from '../http/parse-answer';

/** HTTP for signing in and out and for the current session. */
@Injectable({ providedIn: 'root' })
export class AuthApi {
  private readonly http = inject(HttpClient);

  session(): Observable<Session> {
    return this.http.get('/api/auth/session').pipe(parseAnswer(sessionRoute, 'session'));
  }

  signIn(email: string, password: string): Observable<Session> {
    return this.http.post('/api/auth/sign-in', { email, password }).pipe(parseAnswer(signInRoute, 'session'));
  }

  signOut(): Observable<void> {
    return this.http.post('/api/auth/sign-out', {}).pipe(emptyAnswer(signOutRoute));
  }
}
