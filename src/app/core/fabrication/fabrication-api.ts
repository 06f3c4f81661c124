import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { type Observable, map } from 'rxjs';
import type { z } from 'zod';
import type {
  CatalogueImportResult,
  failedNotificationListSchema,
  FabricationItem,
  FabricationRecord,
  NotificationKind,
  NotificationSettings,
  ResonanceComment,
  transitionBodySchema,
} from '../../../../shared/api/fabrication';
import type { FabricationState } from '../../../../shared/fabrication/fabrication-states';

/** What a move sends (defaults may be left out). */
export type TransitionRequest = z.input<typeof transitionBodySchema>;

/** HTTP for fabrication: states, review queue, comments, packages, notification settings, import. */
@Injectable({ providedIn: 'root' })
export class FabricationApi {
  private readonly http = inject(HttpClient);

  private base(groupId: string): string {
    return `/api/groups/${encodeURIComponent(groupId)}`;
  }

  list(groupId: string, states: FabricationState[]): Observable<FabricationItem[]> {
    const params = new HttpParams().set('state', states.join(','));
    return this.http.get<{ items: FabricationItem[] }>(`${this.base(groupId)}/fabrication`, { params }).pipe(map((b) => b.items));
  }

  record(groupId: string, resonanceId: string): Observable<FabricationRecord> {
    return this.http.get<FabricationRecord>(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/fabrication`);
  }

  move(groupId: string, resonanceId: string, body: TransitionRequest): Observable<FabricationRecord> {
    return this.http.post<FabricationRecord>(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/fabrication`, body);
  }

  comments(groupId: string, resonanceId: string): Observable<ResonanceComment[]> {
    return this.http
      .get<{ items: ResonanceComment[] }>(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/comments`)
      .pipe(map((b) => b.items));
  }

  comment(groupId: string, resonanceId: string, body: string, mentions: string[]): Observable<ResonanceComment> {
    return this.http.post<ResonanceComment>(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/comments`, { body, mentions });
  }

  /** Admin only: e-mails that could not be sent after every retry. */
  failedNotifications(groupId: string): Observable<z.infer<typeof failedNotificationListSchema>['items']> {
    return this.http.get<z.infer<typeof failedNotificationListSchema>>(`${this.base(groupId)}/notifications/failed`).pipe(map((b) => b.items));
  }

  /** Admin only: queue a failed e-mail again (after the server's mail settings were fixed). */
  retryNotification(groupId: string, notificationId: string): Observable<{ id: string; status: 'queued' }> {
    return this.http.post<{ id: string; status: 'queued' }>(`${this.base(groupId)}/notifications/${encodeURIComponent(notificationId)}/retry`, {});
  }

  settings(): Observable<NotificationSettings> {
    return this.http.get<NotificationSettings>('/api/account/notifications');
  }

  saveSettings(enabled: Partial<Record<NotificationKind, boolean>>): Observable<NotificationSettings> {
    return this.http.put<NotificationSettings>('/api/account/notifications', { enabled });
  }

  importCatalogue(groupId: string, file: File): Observable<CatalogueImportResult> {
    const form = new FormData();
    form.append('file', file, file.name);
    return this.http.post<CatalogueImportResult>(`${this.base(groupId)}/catalogue/import`, form);
  }
}
