import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { Role } from '../../../../shared/api/enums';
import {
  type Invitation,
  type Member,
  changeMemberRoleRoute,
  inviteRoute,
  listInvitationsRoute,
  listMembersRoute,
  removeMemberRoute,
  revokeInvitationRoute,
} from '../../../../shared/api/groups';
import { emptyAnswer, parseAnswer } from '../http/parse-answer';

/** HTTP for a group's members and its invitations (writes are admin-only on the server). */
@Injectable({ providedIn: 'root' })
export class MembersApi {
  private readonly http = inject(HttpClient);

  members(groupId: string): Observable<Member[]> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}/members`).pipe(parseAnswer(listMembersRoute, 'list of members'));
  }

  changeRole(groupId: string, userId: string, role: Role): Observable<Member> {
    return this.http
      .patch(`/api/groups/${encodeURIComponent(groupId)}/members/${encodeURIComponent(userId)}`, { role })
      .pipe(parseAnswer(changeMemberRoleRoute, 'member'));
  }

  remove(groupId: string, userId: string): Observable<void> {
    return this.http.delete(`/api/groups/${encodeURIComponent(groupId)}/members/${encodeURIComponent(userId)}`).pipe(emptyAnswer(removeMemberRoute));
  }

  invitations(groupId: string): Observable<Invitation[]> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}/invitations`).pipe(parseAnswer(listInvitationsRoute, 'list of invitations'));
  }

  invite(groupId: string, email: string, role: Role): Observable<Invitation> {
    return this.http.post(`/api/groups/${encodeURIComponent(groupId)}/invitations`, { email, role }).pipe(parseAnswer(inviteRoute, 'invitation'));
  }

  revokeInvitation(groupId: string, invitationId: string): Observable<void> {
    return this.http
      .delete(`/api/groups/${encodeURIComponent(groupId)}/invitations/${encodeURIComponent(invitationId)}`)
      .pipe(emptyAnswer(revokeInvitationRoute));
  }
}
