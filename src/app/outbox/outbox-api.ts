import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import { type OutboxMessage, type OutboxSummary, listOutboxRoute, outboxMessageRoute } from '../../../shared/api/outbox';
import { parseAnswer } from '../core/http/parse-answer';

/** HTTP for the mail the local SMTP stand-in received (site operator only; 404 with a real mail host). */
@Injectable({ providedIn: 'root' })
export class OutboxApi {
  private readonly http = inject(HttpClient);

  list(): Observable<OutboxSummary[]> {
    return this.http.get('/api/outbox').pipe(parseAnswer(listOutboxRoute, 'list of messages'));
  }

  message(id: string): Observable<OutboxMessage> {
    return this.http.get(`/api/outbox/${encodeURIComponent(id)}`).pipe(parseAnswer(outboxMessageRoute, 'message'));
  }
}
