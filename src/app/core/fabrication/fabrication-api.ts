import { HttpClient, HttpParams } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { type Observable, map } from 'rxjs';
import type { z } from 'zod';
import {
  type CatalogueImportResult,
  type FabricationItem,
  type FailedNotification,
  type FabricationRecord,
  type NotificationKind,
  type NotificationSettings,
  type ResonanceComment,
  addCommentRoute,
  getFabricationRoute,
  getNotificationSettingsRoute,
  importCatalogueRoute,
  listCommentsRoute,
  listFabricationRoute,
  listFailedNotificationsRoute,
  retryFailedNotificationRoute,
  moveFabricationRoute,
  setNotificationSettingsRoute,
  type transitionBodySchema,
} from '../../../../shared/api/fabrication';
import type { FabricationState } from '../../../../shared/fabrication/fabrication-states';
import { parseAnswer } from '../http/parse-answer';

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
    return this.http.get(`${this.base(groupId)}/fabrication`, { params }).pipe(
      parseAnswer(listFabricationRoute, 'fabrication list'),
      map((b) => b.items),
    );
  }

  record(groupId: string, resonanceId: string): Observable<FabricationRecord> {
    return this.http
      .get(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/fabrication`)
      .pipe(parseAnswer(getFabricationRoute, 'fabrication record'));
  }

  move(groupId: string, resonanceId: string, body: TransitionRequest): Observable<FabricationRecord> {
    return this.http
      .post(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/fabrication`, body)
      .pipe(parseAnswer(moveFabricationRoute, 'fabrication record'));
  }

  comments(groupId: string, resonanceId: string): Observable<ResonanceComment[]> {
    return this.http.get(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/comments`).pipe(
      parseAnswer(listCommentsRoute, 'comments'),
      map((b) => b.items),
    );
  }

  comment(groupId: string, resonanceId: string, body: string, mentions: string[]): Observable<ResonanceComment> {
    return this.http
      .post(`${this.base(groupId)}/resonances/${encodeURIComponent(resonanceId)}/comments`, { body, mentions })
      .pipe(parseAnswer(addCommentRoute, 'comment'));
  }

  /** Admin only: e-mails that could not be sent after every retry. */
  failedNotifications(groupId: string): Observable<FailedNotification[]> {
    return this.http.get(`${this.base(groupId)}/notifications/failed`).pipe(
      parseAnswer(listFailedNotificationsRoute, 'failed notifications'),
      map((b) => b.items),
    );
  }

  /** Admin only: queue a failed e-mail again (after the server's mail settings were fixed). */
  retryNotification(groupId: string, notificationId: string): Observable<{ id: string; status: 'queued' }> {
    return this.http
      .post(`${this.base(groupId)}/notifications/${encodeURIComponent(notificationId)}/retry`, {})
      .pipe(parseAnswer(retryFailedNotificationRoute, 'notification sent again'));
  }

  settings(): Observable<NotificationSettings> {
    return this.http.get('/api/account/notifications').pipe(parseAnswer(getNotificationSettingsRoute, 'notification settings'));
  }

  saveSettings(enabled: Partial<Record<NotificationKind, boolean>>): Observable<NotificationSettings> {
    return this.http.put('/api/account/notifications', { enabled }).pipe(parseAnswer(setNotificationSettingsRoute, 'notification settings'));
  }

  importCatalogue(groupId: string, file: File): Observable<CatalogueImportResult> {
    const form = new FormData();
    form.append('file', file, file.name);
    return this.http.post(`${this.base(groupId)}/catalogue/import`, form).pipe(parseAnswer(importCatalogueRoute, 'import result'));
  }
}
