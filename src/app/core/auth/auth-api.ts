import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
import { readSession } from './read-session';
import type { Session } from './session';

/** HTTP for signing in and out and for the current session. */
@Injectable({ providedIn: 'root' })
export class AuthApi {
  private readonly http = inject(HttpClient);

  session(): Observable<Session> {
    return this.http.get('/api/auth/session').pipe(map((body) => readSession(body)));
  }

  signIn(email: string, password: string): Observable<Session> {
    return this.http.post('/api/auth/sign-in', { email, password }).pipe(map((body) => readSession(body)));
  }

  signOut(): Observable<void> {
    return this.http.post<void>('/api/auth/sign-out', {});
  }
}
