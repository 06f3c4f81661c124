import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';

/** A list entry: no body, so each link is read by one recorded GET of its message. */
export const outboxSummarySchema = z.object({
  id: z.string(),
  to: z.string(),
  subject: z.string(),
  receivedAt: z.string(),
});
export type OutboxSummaryData = z.infer<typeof outboxSummarySchema>;

export const outboxMessageSchema = z.extend(outboxSummarySchema, {
  text: z.string(),
  html: z.optional(z.nullable(z.string())),
});
export type OutboxMessageData = z.infer<typeof outboxMessageSchema>;

/** HTTP for the mail the local SMTP stand-in received (site operator only; 404 with a real mail host). */
@Injectable({ providedIn: 'root' })
export class OutboxApi {
  private readonly http = inject(HttpClient);

  list(): Observable<OutboxSummaryData[]> {
    return this.http.get('/api/outbox').pipe(map((body) => z.array(outboxSummarySchema).parse(body)));
  }

  message(id: string): Observable<OutboxMessageData> {
    return this.http.get(`/api/outbox/${encodeURIComponent(id)}`).pipe(map((body) => outboxMessageSchema.parse(body)));
  }
}
