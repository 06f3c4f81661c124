import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';

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

  activity(limit = 50): Observable<AccountEntry[]> {
    return this.http
      .get('/api/account/activity', { params: { limit } })
      .pipe(map((body) => z.array(accountEntrySchema).parse(body)));
  }
}
