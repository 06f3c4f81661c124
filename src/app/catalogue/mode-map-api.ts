import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { z } from 'zod';
import {
  type ModeMapPayload,
  type ModeMapView,
  createModeMapRoute,
  getModeMapRoute,
  type modeMapRequestSchema,
  resonanceCurrentRoute,
} from '../../../shared/api/mode-maps';
import { parseAnswer } from '../core/http/parse-answer';

/** What POST mode-maps takes: a resonance, or a model version's scattering state. */
export type ModeMapRequest = z.input<typeof modeMapRequestSchema>;
export type HusimiSettings = NonNullable<ModeMapRequest['husimi']>;

/** HTTP for current and Husimi maps (docs/api.md, "Mode maps"; routes declared in shared/api/mode-maps.ts). */
@Injectable({ providedIn: 'root' })
export class ModeMapApi {
  private readonly http = inject(HttpClient);

  poleCurrent(groupId: string, resonanceId: string): Observable<ModeMapPayload> {
    return this.http
      .get(`/api/groups/${encodeURIComponent(groupId)}/resonances/${encodeURIComponent(resonanceId)}/current`)
      .pipe(parseAnswer(resonanceCurrentRoute, 'current map'));
  }

  request(groupId: string, body: ModeMapRequest): Observable<ModeMapView> {
    return this.http.post(`/api/groups/${encodeURIComponent(groupId)}/mode-maps`, body).pipe(parseAnswer(createModeMapRoute, 'mode map'));
  }

  job(groupId: string, id: string): Observable<ModeMapView> {
    return this.http.get(`/api/groups/${encodeURIComponent(groupId)}/mode-maps/${encodeURIComponent(id)}`).pipe(parseAnswer(getModeMapRoute, 'mode map'));
  }
}
