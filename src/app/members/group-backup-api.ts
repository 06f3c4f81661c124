import { HttpClient, HttpHeaders } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';
import { type RestoreSummary, restoreGroupRoute } from '../../../shared/api/backup';
import { parseAnswer } from '../core/http/parse-answer';

/** HTTP of the group backup (admins only; the server enforces it). */
@Injectable({ providedIn: 'root' })
export class GroupBackupApi {
  private readonly http = inject(HttpClient);

  /** A plain link, so the browser streams the archive to disk instead of holding it in memory. */
  downloadUrl(groupId: string, members: boolean): string {
    return `/api/groups/${encodeURIComponent(groupId)}/backup?members=${members}`;
  }

  /** Record counts the server restored (models, runs, resonances…). */
  restore(groupId: string, file: Blob): Observable<RestoreSummary['restored']> {
    return this.http
      .post(`/api/groups/${encodeURIComponent(groupId)}/restore`, file, {
        headers: new HttpHeaders({ 'Content-Type': 'application/gzip' }),
      })
      .pipe(
        parseAnswer(restoreGroupRoute, 'restore summary'),
        map((r) => r.restored),
      );
  }
}
