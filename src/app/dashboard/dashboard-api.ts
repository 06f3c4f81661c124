import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { ActivityEntry } from '../../../shared/api/account';
import { type GroupDetail, getGroupRoute, groupActivityRoute } from '../../../shared/api/groups';
import { parseAnswer } from '../core/http/parse-answer';

/** HTTP for the dashboard: the group's facts and its audit log, newest first. */
@Injectable({ providedIn: 'root' })
export class DashboardApi {
  private readonly http = inject(HttpClient);

  group(groupId: string): Observable<GroupDetail> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}`).pipe(parseAnswer(getGroupRoute, 'group'));
  }

  activity(groupId: string, limit = 20): Observable<ActivityEntry[]> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}/activity`, { params: { limit } }).pipe(parseAnswer(groupActivityRoute, 'activity'));
  }
}
