import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import type { Observable } from 'rxjs';
import type { ModeMapPayload } from './mode-map-data';

export interface HusimiSettings {
  sigmaNm?: number;
  directions?: number;
  gridNm?: number;
  peakThreshold?: number;
}

/** What POST mode-maps takes: a resonance, or a model version's scattering state. */
export type ModeMapRequest =
  | { resonanceId: string; husimi: HusimiSettings | null }
  | { modelId: string; version?: number; energy: number; lead: number; channel: number; husimi: HusimiSettings | null };

export interface ModeMapJob {
  id: string;
  status: 'queued' | 'running' | 'completed' | 'failed';
  progress: { stage: string; fraction: number } | null;
  error: string | null;
  result: ModeMapPayload | null;
}

/** HTTP for current and Husimi maps (docs/api.md, "Mode maps"). */
@Injectable({ providedIn: 'root' })
export class ModeMapApi {
  private readonly http = inject(HttpClient);

  poleCurrent(groupId: string, resonanceId: string): Observable<ModeMapPayload> {
    return this.http.get<ModeMapPayload>(`/api/groups/${encodeURIComponent(groupId)}/resonances/${encodeURIComponent(resonanceId)}/current`);
  }

  request(groupId: string, body: ModeMapRequest): Observable<ModeMapJob> {
    return this.http.post<ModeMapJob>(`/api/groups/${encodeURIComponent(groupId)}/mode-maps`, body);
  }

  job(groupId: string, id: string): Observable<ModeMapJob> {
    return this.http.get<ModeMapJob>(`/api/groups/${encodeURIComponent(groupId)}/mode-maps/${encodeURIComponent(id)}`);
  }
}
