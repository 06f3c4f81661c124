import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';

export const apiTokenSchema = z.object({
  id: z.string(),
  name: z.string(),
  createdAt: z.string(),
  lastUsedAt: z.optional(z.nullable(z.string())),
});
export type ApiToken = z.infer<typeof apiTokenSchema>;

/** The answer to creating a token: the only time the secret itself is sent. */
export const createdTokenSchema = z.extend(apiTokenSchema, { token: z.string() });
export type CreatedToken = z.infer<typeof createdTokenSchema>;

/** HTTP for the user's personal API tokens. */
@Injectable({ providedIn: 'root' })
export class TokensApi {
  private readonly http = inject(HttpClient);

  list(): Observable<ApiToken[]> {
    return this.http.get('/api/tokens').pipe(map((body) => z.array(apiTokenSchema).parse(body)));
  }

  create(name: string): Observable<CreatedToken> {
    return this.http.post('/api/tokens', { name }).pipe(map((body) => createdTokenSchema.parse(body)));
  }

  revoke(id: string): Observable<unknown> {
    return this.http.delete(`/api/tokens/${encodeURIComponent(id)}`);
  }
}
