import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
// zod/mini: the classic build pulls ~450 kB (all locales) into the first chunk.
import * as z from 'zod/mini';
import { roleSchema } from '../core/auth/role-schema';

export const activityEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  actor: z.nullable(z.object({ id: z.string(), name: z.string() })),
  action: z.string(),
  subject: z.string(),
  details: z.optional(z.unknown()),
});
export type ActivityEntry = z.infer<typeof activityEntrySchema>;

export const groupDetailSchema = z.object({
  id: z.string(),
  name: z.string(),
  slug: z.string(),
  role: roleSchema,
  memberCount: z.number(),
});
export type GroupDetail = z.infer<typeof groupDetailSchema>;

/** HTTP for the dashboard: the group's facts and its audit log, newest first. */
@Injectable({ providedIn: 'root' })
export class DashboardApi {
  private readonly http = inject(HttpClient);

  group(groupId: string): Observable<GroupDetail> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}`).pipe(map((body) => groupDetailSchema.parse(body)));
  }

  activity(groupId: string, limit = 20): Observable<ActivityEntry[]> {
    return this.http
      .get(`/api/groups/${encodeURIComponent(groupId)}/activity`, { params: { limit } })
      .pipe(map((body) => z.array(activityEntrySchema).parse(body)));
  }
}
