import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';
import type { AccountProfile } from '../../../shared/api/account';

export const accountEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  actor: z.nullable(z.object({ id: z.string(), name: z.string() })),
  action: z.string(),
  subject: z.string(),
  details: z.record(z.string(), z.unknown()),
});
export type AccountEntry = z.infer<typeof accountEntrySchema>;

/** HTTP for what concerns the signed-in person's own account. */
@Injectable({ providedIn: 'root' })
export class AccountApi {
  private readonly http = inject(HttpClient);

  profile(): Observable<AccountProfile> {
    return this.http.get<AccountProfile>('/api/account');
  }

  rename(name: string): Observable<AccountProfile> {
    return this.http.patch<AccountProfile>('/api/account', { name });
  }

  changePassword(currentPassword: string, newPassword: string): Observable<void> {
    return this.http.post<void>('/api/account/password', { currentPassword, newPassword });
  }

  signOutEverywhere(): Observable<{ sessionsEnded: number }> {
    return this.http.post<{ sessionsEnded: number }>('/api/account/sign-out-everywhere', {});
  }

  activity(limit = 50): Observable<AccountEntry[]> {
    return this.http.get('/api/account/activity', { params: { limit } }).pipe(map((body) => z.array(accountEntrySchema).parse(body)));
  }
}
