import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import { type InvitationPreview, type Session, acceptInvitationRoute, previewInvitationRoute } from '../../../shared/api/auth';
import { parseAnswer } from '../core/http/parse-answer';

/** HTTP for the public invitation link: read the offer, accept it (which signs in). */
@Injectable({ providedIn: 'root' })
export class InvitationApi {
  private readonly http = inject(HttpClient);

  offer(token: string): Observable<InvitationPreview> {
    return this.http.get(`/api/invitations/${encodeURIComponent(token)}`).pipe(parseAnswer(previewInvitationRoute, 'invitation'));
  }

  accept(token: string, name: string, password: string): Observable<Session> {
    return this.http.post(`/api/invitations/${encodeURIComponent(token)}/accept`, { name, password }).pipe(parseAnswer(acceptInvitationRoute, 'session'));
  }
}
