import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';
import { readSession } from '../core/auth/read-session';
import { roleSchema } from '../core/auth/role-schema';
import type { Session } from '../core/auth/session';

export const invitationOfferSchema = z.object({
  email: z.string(),
  groupName: z.string(),
  role: roleSchema,
  invitedBy: z.optional(z.nullable(z.string())),
});
export type InvitationOffer = z.infer<typeof invitationOfferSchema>;

/** HTTP for the public invitation link: read the offer, accept it (which signs in). */
@Injectable({ providedIn: 'root' })
export class InvitationApi {
  private readonly http = inject(HttpClient);

  offer(token: string): Observable<InvitationOffer> {
    return this.http.get(`/api/invitations/${encodeURIComponent(token)}`).pipe(map((body) => invitationOfferSchema.parse(body)));
  }

  accept(token: string, name: string, password: string): Observable<Session> {
    return this.http.post(`/api/invitations/${encodeURIComponent(token)}/accept`, { name, password }).pipe(map((body) => readSession(body)));
  }
}
