import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';
import { roleSchema } from '../auth/role-schema';
import type { Role } from '../auth/session';

export const memberSchema = z.object({
  userId: z.string(),
  email: z.string(),
  name: z.string(),
  role: roleSchema,
  joinedAt: z.string(),
});
export type Member = z.infer<typeof memberSchema>;

/** A pending invitation; the server may add fields, only these are shown. */
export const pendingInvitationSchema = z.object({
  id: z.string(),
  email: z.string(),
  role: roleSchema,
  createdAt: z.optional(z.string()),
  expiresAt: z.optional(z.string()),
  invitedBy: z.optional(z.nullable(z.object({ id: z.string(), name: z.string() }))),
  status: z.optional(z.string()),
});
export type PendingInvitation = z.infer<typeof pendingInvitationSchema>;

/** HTTP for a group's members and its invitations (writes are admin-only on the server). */
@Injectable({ providedIn: 'root' })
export class MembersApi {
  private readonly http = inject(HttpClient);

  members(groupId: string): Observable<Member[]> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}/members`).pipe(map((body) => z.array(memberSchema).parse(body)));
  }

  changeRole(groupId: string, userId: string, role: Role): Observable<unknown> {
    return this.http.patch(`/api/groups/${encodeURIComponent(groupId)}/members/${encodeURIComponent(userId)}`, { role });
  }

  remove(groupId: string, userId: string): Observable<unknown> {
    return this.http.delete(`/api/groups/${encodeURIComponent(groupId)}/members/${encodeURIComponent(userId)}`);
  }

  invitations(groupId: string): Observable<PendingInvitation[]> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}/invitations`).pipe(map((body) => z.array(pendingInvitationSchema).parse(body)));
  }

  invite(groupId: string, email: string, role: Role): Observable<unknown> {
    return this.http.post(`/api/groups/${encodeURIComponent(groupId)}/invitations`, { email, role });
  }

  revokeInvitation(groupId: string, invitationId: string): Observable<unknown> {
    return this.http.delete(`/api/groups/${encodeURIComponent(groupId)}/invitations/${encodeURIComponent(invitationId)}`);
  }
}
