import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import { type ApiToken, type CreatedApiToken, createTokenRoute, listTokensRoute, revokeTokenRoute } from '../../../shared/api/account';
import { emptyAnswer, parseAnswer } from '../core/http/parse-answer';

/** HTTP for the user's personal API tokens. */
@Injectable({ providedIn: 'root' })
export class TokensApi {
  private readonly http = inject(HttpClient);

  list(): Observable<ApiToken[]> {
    return this.http.get('/api/tokens').pipe(parseAnswer(listTokensRoute, 'list of tokens'));
  }

  /** The answer to creating a token: the only time the secret itself is sent. */
  create(name: string): Observable<CreatedApiToken> {
    return this.http.post('/api/tokens', { name }).pipe(parseAnswer(createTokenRoute, 'new token'));
  }

  revoke(id: string): Observable<void> {
    return this.http.delete(`/api/tokens/${encodeURIComponent(id)}`).pipe(emptyAnswer(revokeTokenRoute));
  }
}
